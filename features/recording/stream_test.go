package recording

import (
	"bytes"
	"errors"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/window"
)

// streamAll reads path in chunks of random sizes and concatenates them.
func streamAll(t testing.TB, path string, rng *rand.Rand, maxChunk int) *Recording {
	t.Helper()
	r, err := OpenStream(path)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	rec := r.Info
	rec.Channels = append([]Channel(nil), r.Info.Channels...)
	next := int64(0)
	for {
		c, err := r.Next(1 + rng.IntN(maxChunk))
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		if c.Frame != next {
			t.Fatalf("chunk starts at frame %d, want %d", c.Frame, next)
		}
		next += int64(c.N)
		for i := range rec.Channels {
			if c.First[i] != int64(len(rec.Channels[i].Samples)) {
				t.Fatalf("channel %d chunk First %d, have %d samples", i, c.First[i], len(rec.Channels[i].Samples))
			}
			rec.Channels[i].Samples = append(rec.Channels[i].Samples, c.Samples[i]...)
			rec.Channels[i].Gaps = append(rec.Channels[i].Gaps, c.Gaps[i]...)
		}
	}
	for i := range rec.Channels {
		rec.Channels[i].Gaps, _ = window.NormalizeGaps(rec.Channels[i].Gaps)
	}
	rec.Warnings = r.Info.Warnings
	return &rec
}

func sameSamples(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] && !(math.IsNaN(a[i]) && math.IsNaN(b[i])) {
			return false
		}
	}
	return true
}

func sameGaps(a, b []window.Interval) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i].Start-b[i].Start) > 1e-9 || math.Abs(a[i].End-b[i].End) > 1e-9 {
			return false
		}
	}
	return true
}

// TestStreamMatchesBatch: chunked reading over random chunkings gives the
// same samples, gaps and warnings as Open (one decoder, two drivers).
func TestStreamMatchesBatch(t *testing.T) {
	dir := t.TempDir()
	var buf bytes.Buffer
	if err := WriteEDF(&buf, demoRecording(), EDFWriteOptions{RecordSeconds: 0.2}); err != nil {
		t.Fatal(err)
	}
	demo := filepath.Join(dir, "demo.edf")
	os.WriteFile(demo, buf.Bytes(), 0o644)
	sig := []edfSig{{"Thorax", "mV", "-1", "1", "-32767", "32767", 2}, {"EDF Annotations", "", "-1", "1", "-32768", "32767", 16}}
	ann := func(s string) []byte { b := make([]byte, 32); copy(b, s); return b }
	var d []byte
	for k, on := range []string{"+0", "+1", "+4", "+5", "+9"} {
		d = append(d, le16(100*k, -100*k)...)
		d = append(d, ann(on+"\x14\x14\x00")...)
	}
	disc := filepath.Join(dir, "disc.edf")
	os.WriteFile(disc, handEDF("0       ", "EDF+D", "01.06.26", "07.00.00", "5", "1", sig, d), 0o644)
	paths := []string{"testdata/formats", "testdata/multi", "testdata/annonly", "testdata/watch.csv", demo, disc}
	if d := refdata.SharedDir(); d != "" {
		paths = append(paths, filepath.Join(d, "physionet/mitdb/100"))
	}
	rng := rand.New(rand.NewPCG(3, 7))
	for _, p := range paths {
		batch, err := Open(p)
		if err != nil {
			t.Fatal(err)
		}
		for trial := 0; trial < 4; trial++ {
			maxChunk := []int{1, 7, 300, 100000}[trial]
			s := streamAll(t, p, rng, maxChunk)
			if len(s.Channels) != len(batch.Channels) || len(s.Warnings) != len(batch.Warnings) || len(s.Annotations) != len(batch.Annotations) {
				t.Fatalf("%s: stream and batch differ in shape", p)
			}
			for i := range s.Channels {
				if !sameSamples(s.Channels[i].Samples, batch.Channels[i].Samples) || !sameGaps(s.Channels[i].Gaps, batch.Channels[i].Gaps) {
					t.Fatalf("%s chunks up to %d: channel %d differs", p, maxChunk, i)
				}
			}
			if strings.HasSuffix(p, "100") {
				break // one chunking of the large record is enough
			}
		}
	}
	// The discontinuous file: 2 Hz records at 0, 1, 4, 5 and 9 s.
	b, _ := Open(disc)
	if g := b.Channels[0].Gaps; !sameGaps(g, []window.Interval{{Start: 2, End: 4}, {Start: 6, End: 9}}) {
		t.Errorf("EDF+D gaps %v", g)
	}
}

// TestLyingHeadersAllocateLittle: headers claiming far more data than the
// file holds are refused before anything large is allocated.
func TestLyingHeadersAllocateLittle(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "lie.hea"), []byte("lie 4 1000 2000000000\nlie.dat 16\nlie.dat 16\nlie.dat 16\nlie.dat 16\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "lie.dat"), make([]byte, 64), 0o644)
	edf := handEDF("0       ", "", "01.06.26", "07.00.00", "99999999", "1", []edfSig{{"ECG", "mV", "-1", "1", "-32768", "32767", 30000}}, make([]byte, 64))
	os.WriteFile(filepath.Join(dir, "lie.edf"), edf, 0o644)
	os.WriteFile(filepath.Join(dir, "lie.csv"), []byte("t,x\n0,1\n0.001,2\n0.002,3\n9999999,4\n"), 0o644)
	// A 60 MB data record announced by a header-only file ("-1" records:
	// count from the file, which holds none).
	big := handEDF("0       ", "", "01.06.26", "07.00.00", "-1", "1", []edfSig{{"ECG", "mV", "-1", "1", "-32768", "32767", 30000000}}, nil)
	os.WriteFile(filepath.Join(dir, "big.edf"), big, 0o644)
	for _, p := range []string{"lie", "lie.edf", "lie.csv", "big.edf"} {
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		rec, err := Open(filepath.Join(dir, p))
		runtime.ReadMemStats(&after)
		if p == "big.edf" {
			if err != nil || len(rec.Channels[0].Samples) != 0 {
				t.Errorf("%s: %v", p, err)
			}
		} else if err == nil {
			t.Errorf("%s: lying header accepted", p)
		}
		if got := after.TotalAlloc - before.TotalAlloc; got > 1<<20 {
			t.Errorf("%s: %d bytes allocated before refusing (%v)", p, got, err)
		}
	}
}

// BenchmarkOpenRecord100 reports decoding speed and the memory used per byte
// of file for MIT-BIH record 100 (1.95 MB of format 212).
func BenchmarkOpenRecord100(b *testing.B) {
	p := strings.TrimSuffix(refdata.Shared(b, "physionet/mitdb/100.hea"), ".hea")
	st, _ := os.Stat(p + ".dat")
	b.ReportAllocs()
	var ms0, ms1 runtime.MemStats
	runtime.ReadMemStats(&ms0)
	for b.Loop() {
		if _, err := Open(p); err != nil {
			b.Fatal(err)
		}
	}
	runtime.ReadMemStats(&ms1)
	b.ReportMetric(float64(2*650000*b.N)/b.Elapsed().Seconds(), "samples/s")
	b.ReportMetric(float64(ms1.TotalAlloc-ms0.TotalAlloc)/float64(b.N)/float64(st.Size()), "alloc-bytes/file-byte")
}

// BenchmarkStreamRecord100 reads record 100 in 10 s chunks.
func BenchmarkStreamRecord100(b *testing.B) {
	p := strings.TrimSuffix(refdata.Shared(b, "physionet/mitdb/100.hea"), ".hea")
	b.ReportAllocs()
	for b.Loop() {
		r, err := OpenStream(p)
		if err != nil {
			b.Fatal(err)
		}
		for {
			if _, err := r.Next(3600); err != nil {
				break
			}
		}
		r.Close()
	}
	b.ReportMetric(float64(2*650000*b.N)/b.Elapsed().Seconds(), "samples/s")
}

// BenchmarkOpenEDF reads one hour of a two-channel EDF+ file (250 Hz ECG,
// 25 Hz band) written by WriteEDF.
func BenchmarkOpenEDF(b *testing.B) {
	rec := &Recording{Name: "hour", Channels: []Channel{{Name: "ECG", Unit: "mV", RateHz: 250, Samples: make([]float64, 250*3600)}, {Name: "RC", Unit: "V", RateHz: 25, Samples: make([]float64, 25*3600)}}}
	for i := range rec.Channels[0].Samples {
		rec.Channels[0].Samples[i] = math.Sin(float64(i) / 40)
	}
	var buf bytes.Buffer
	if err := WriteEDF(&buf, rec, EDFWriteOptions{}); err != nil {
		b.Fatal(err)
	}
	p := filepath.Join(b.TempDir(), "hour.edf")
	os.WriteFile(p, buf.Bytes(), 0o644)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Open(p); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(275*3600*b.N)/b.Elapsed().Seconds(), "samples/s")
}
