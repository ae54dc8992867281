package recording

// Fuzz targets for every parser that reads untrusted bytes. Their seed
// corpora (hand-made fixtures in testdata/, record 100 from ../shared when
// present, and the hand-made cases below) run in the normal test suite. To
// fuzz one for longer:
//
//	go test -run '^$' -fuzz=FuzzWFDBHeader -fuzztime=60s ./features/recording
//	go test -run '^$' -fuzz=FuzzWFDBSignal -fuzztime=60s ./features/recording
//	go test -run '^$' -fuzz=FuzzWFDBRecord -fuzztime=60s ./features/recording
//	go test -run '^$' -fuzz=FuzzMITAnnotations -fuzztime=60s ./features/recording
//	go test -run '^$' -fuzz=FuzzEDF -fuzztime=60s ./features/recording
//	go test -run '^$' -fuzz=FuzzTAL -fuzztime=60s ./features/recording
//	go test -run '^$' -fuzz=FuzzCSV -fuzztime=60s ./features/recording

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// sharedSeed returns a file of ../shared, or nil when it is absent.
func sharedSeed(rel string, limit int) []byte {
	d := refdata.SharedDir()
	if d == "" {
		return nil
	}
	b, err := os.ReadFile(filepath.Join(d, rel))
	if err != nil {
		return nil
	}
	if limit > 0 && len(b) > limit {
		b = b[:limit]
	}
	return b
}

func addFiles(f *testing.F, glob string) {
	m, _ := filepath.Glob(glob)
	for _, p := range m {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
}

func FuzzWFDBHeader(f *testing.F) {
	addFiles(f, "testdata/*.hea")
	if b := sharedSeed("physionet/mitdb/100.hea", 0); b != nil {
		f.Add(b)
	}
	f.Add([]byte("r 2 360/36(2) 10 10:11:12.5 01/02/2003\r\nr.dat 16x2:3+10 200(5)/uV 12 0 1 2 0 a b c\nr.dat 16 0 12\n"))
	f.Add([]byte("r/3 0\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		h, err := ParseWFDBHeader(bytes.NewReader(b), "fuzz.hea")
		if err != nil {
			if !errors.Is(err, ErrHeader) && !errors.Is(err, ErrFormat) {
				t.Fatalf("error without sentinel: %v", err)
			}
			return
		}
		if h.NumSignals != len(h.Signals) || !(h.FrameHz > 0) {
			t.Fatalf("inconsistent header %+v", h)
		}
		for _, s := range h.Signals {
			if !(s.Gain > 0) || s.SamplesFrame < 1 {
				t.Fatalf("signal %+v", s)
			}
		}
	})
}

// FuzzWFDBSignal checks each format decoder: it never panics, yields the
// number of samples the byte count holds, and for the formats that use every
// bit, re-encoding gives the same bytes.
func FuzzWFDBSignal(f *testing.F) {
	for _, fm := range WFDBFormats() {
		b, _ := os.ReadFile(filepath.Join("testdata", "formats_"+itoa(fm)+".dat"))
		f.Add(fm, b)
		f.Add(fm, []byte{0xff, 0x00, 0x80})
	}
	if b := sharedSeed("physionet/mitdb/100.dat", 3000); b != nil {
		f.Add(212, b)
	}
	f.Fuzz(func(t *testing.T, fm int, b []byte) {
		v, err := DecodeWFDB(nil, fm, b)
		if _, ok := wfdbFormats[fm]; !ok {
			if !errors.Is(err, ErrFormat) {
				t.Fatalf("format %d: %v", fm, err)
			}
			return
		}
		if int64(len(v)) != samplesInBytes(fm, int64(len(b))) {
			t.Fatalf("format %d: %d bytes gave %d samples, want %d", fm, len(b), len(v), samplesInBytes(fm, int64(len(b))))
		}
		info := wfdbFormats[fm]
		if fm == 310 || fm == 311 || len(b)%info.groupBytes != 0 {
			return // unused bits, or a partial group: not a bijection
		}
		if enc := encodeWFDB(nil, fm, v); !bytes.Equal(enc, b) {
			t.Fatalf("format %d: % x decoded %v re-encoded % x", fm, b, v, enc)
		}
	})
}

// FuzzWFDBRecord opens a record made of a fuzzed header and signal file:
// lying headers must give errors, never panics or large allocations.
func FuzzWFDBRecord(f *testing.F) {
	multi, _ := os.ReadFile("testdata/multi.dat")
	f.Add([]byte("r 2 10 20\nr.dat 16x2 10/mV 16 0 0 0 0 fast\nr.dat 16:1 1(-5)/cm\n"), multi)
	f.Add([]byte("r 1 360 1000000000\nr.dat 212\n"), []byte{1, 2, 3})
	f.Add([]byte("r 1 250\nr.dat 8 100 8 0 100 5\n"), []byte{1, 255, 3})
	f.Fuzz(func(t *testing.T, hea, dat []byte) {
		dir := t.TempDir()
		os.WriteFile(filepath.Join(dir, "r.hea"), hea, 0o644)
		os.WriteFile(filepath.Join(dir, "r.dat"), dat, 0o644)
		rec, err := Open(filepath.Join(dir, "r"))
		if err != nil {
			return
		}
		for _, c := range rec.Channels {
			if int64(len(c.Samples)) > 8*int64(len(dat))+1<<16 {
				t.Fatalf("%d samples from %d bytes", len(c.Samples), len(dat))
			}
		}
	})
}

func FuzzMITAnnotations(f *testing.F) {
	addFiles(f, "testdata/*.atr")
	if b := sharedSeed("physionet/mitdb/100.atr", 0); b != nil {
		f.Add(b)
	}
	f.Add([]byte{0x0a, 0x04, 0x00, 0xec, 0x01, 0x00, 0x00, 0x00, 0x00, 0x14, 0x02, 0xf4, 0x03, 0xf8, 0x03, 0xfc, 'a', 'b', 'c', 0})
	f.Fuzz(func(t *testing.T, b []byte) {
		anns, err := ParseWFDBAnnotations(b, 250)
		if err != nil {
			return
		}
		// What was read and is writable must survive a write-read trip.
		for _, a := range anns {
			if c, _ := WFDBCode(a.Code); c == 0 || strings.ContainsRune(a.Text, 0) || len(a.Text) > 1022 {
				return
			}
		}
		var buf bytes.Buffer
		if err := WriteWFDBAnnotations(&buf, anns, 250); err != nil {
			t.Fatalf("re-writing %d annotations: %v", len(anns), err)
		}
		back, err := ParseWFDBAnnotations(buf.Bytes(), 250)
		if err != nil || len(back) != len(anns) {
			t.Fatalf("re-read: %v, %d vs %d", err, len(back), len(anns))
		}
		for i := range back {
			if back[i] != anns[i] {
				t.Fatalf("annotation %d: %+v became %+v", i, anns[i], back[i])
			}
		}
	})
}

func FuzzEDF(f *testing.F) {
	addFiles(f, "testdata/*.edf")
	sig := []edfSig{{"ECG", "mV", "-1", "1", "-32768", "32767", 2}, {"EDF Annotations", "", "-1", "1", "-32768", "32767", 8}}
	f.Add(handEDF("0       ", "EDF+D", "01.06.26", "07.00.00", "1", "1", sig, append(le16(1, 2), []byte("+0\x14\x14\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00")...)))
	f.Add(handEDF("\xffBIOSEMI", "24BIT", "01.06.26", "07.00.00", "-1", "0.5", []edfSig{{"x", "g", "0", "1", "0", "100", 1}}, []byte{1, 2, 3, 4, 5, 6}))
	f.Fuzz(func(t *testing.T, b []byte) {
		if _, err := ParseEDFHeader(bytes.NewReader(b), "fuzz.edf"); err != nil {
			if !errors.Is(err, ErrHeader) && !errors.Is(err, ErrFormat) && !errors.Is(err, ErrTruncated) && !errors.Is(err, ErrTooLarge) {
				t.Fatalf("error without sentinel: %v", err)
			}
			return
		}
		p := filepath.Join(t.TempDir(), "f.edf")
		os.WriteFile(p, b, 0o644)
		rec, err := Open(p)
		if err != nil {
			return
		}
		for _, c := range rec.Channels {
			if int64(len(c.Samples)) > edfGapFillFactor*int64(len(b))+edfGapFillSlack+int64(len(b)) {
				t.Fatalf("%d samples from %d bytes", len(c.Samples), len(b))
			}
		}
	})
}

func FuzzTAL(f *testing.F) {
	f.Add([]byte("+180\x14Lights off\x14Close door\x14\x00+1800.2\x1525.5\x14Apnea\x14\x00\x00"))
	f.Add([]byte("+0\x14\x14\x00"))
	f.Add([]byte("-0.5\x152\x14x\x14\x00"))
	f.Fuzz(func(t *testing.T, b []byte) {
		tals, err := ParseTALs(b)
		if err != nil && !errors.Is(err, ErrData) {
			t.Fatalf("error without sentinel: %v", err)
		}
		for _, x := range tals {
			if math.IsNaN(x.Onset) || math.IsInf(x.Onset, 0) || x.Duration < 0 {
				t.Fatalf("TAL %+v", x)
			}
		}
	})
}

func FuzzCSV(f *testing.F) {
	f.Add([]byte("time[s],ECG[mV],acc_x[m/s2]\n0,0.1,9.8\n0.02,0.2,9.7\n0.05,,9.6\n"))
	f.Add([]byte("timestamp,x,label\n2026-06-01T09:00:00Z,1,run\n2026-06-01T09:00:00.1Z,2,walk\n"))
	f.Add([]byte("t,x\n0,1\n0,2\n1,3\n"))
	f.Add([]byte("timestamp,x\n1657533977813,1\n1657533977824,2\n1657533977833,3\n")) // epoch ms, unit inferred
	f.Add([]byte("2461035888559,2.29,6.77\n2461045915746,1.61,6.12\n"))               // no header row
	if b := sharedSeed("open-data/har-phone-watch/DATA/s01/s01_01_sp.csv", 4000); b != nil {
		f.Add(b) // phone timestamps in bursts (jitter allowance)
	}
	if b := sharedSeed("open-data/har-phone-watch/DATA/s01/s01_01_sw.csv", 4000); b != nil {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		rec, err := ReadCSV(bytes.NewReader(b), "fuzz.csv", CSVOptions{}, time.Time{})
		if err != nil {
			if !errors.Is(err, ErrHeader) && !errors.Is(err, ErrData) && !errors.Is(err, ErrTooLarge) {
				t.Fatalf("error without sentinel: %v", err)
			}
			return
		}
		for _, c := range rec.Channels {
			if !(c.RateHz > 0) || int64(len(c.Samples)) > edfGapFillFactor*int64(len(b))+edfGapFillSlack {
				t.Fatalf("channel %q: %v Hz, %d samples from %d bytes", c.Name, c.RateHz, len(c.Samples), len(b))
			}
		}
	})
}

func itoa(v int) string {
	var b [20]byte
	i := len(b)
	for {
		i--
		b[i] = byte('0' + v%10)
		v /= 10
		if v == 0 {
			return string(b[i:])
		}
	}
}
