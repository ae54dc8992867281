package ecg_test

import (
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// refBeat is one reference beat annotation: its sample at the record's
// rate and its WFDB mnemonic.
type refBeat struct {
	sample int
	code   string
}

// loadRecord reads a WFDB record with features/recording and returns the
// named lead (or the first channel when name is empty), its rate and the
// reference beat annotations (Annotation.IsBeat).
func loadRecord(t testing.TB, path, name string) ([]float64, float64, []refBeat) {
	t.Helper()
	rec, err := recording.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Channels) == 0 {
		t.Fatalf("%s: no signals", path)
	}
	ch := &rec.Channels[0]
	if name != "" {
		c, ok := rec.ChannelByName(name)
		if !ok {
			t.Fatalf("%s: no channel %q", path, name)
		}
		ch = c
	}
	var beats []refBeat
	for _, a := range rec.Annotations {
		if a.IsBeat() {
			beats = append(beats, refBeat{sample: int(a.Sample), code: a.Code})
		}
	}
	return ch.Samples, ch.RateHz, beats
}

const rate100 = 360 // MIT-BIH record 100 header: 360 Hz

var rec100 struct {
	once     sync.Once
	mlii, v5 []float64
	beats    []refBeat
}

// record100 loads MIT-BIH record 100 (both leads, mV) and its reference beats.
func record100(t testing.TB) ([]float64, []float64, []refBeat) {
	t.Helper()
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec100.once.Do(func() {
		rec100.mlii, _, rec100.beats = loadRecord(t, hea, "MLII")
		rec100.v5, _, _ = loadRecord(t, hea, "V5")
	})
	return rec100.mlii, rec100.v5, rec100.beats
}

func refTimes(beats []refBeat, fs float64) []float64 {
	out := make([]float64, len(beats))
	for i, b := range beats {
		out[i] = float64(b.sample) / fs
	}
	return out
}

func beatTimes(b []ecg.Beat) []float64 {
	out := make([]float64, len(b))
	for i, x := range b {
		out[i] = x.Time
	}
	return out
}

func TestRecord100(t *testing.T) {
	x, _, ref := record100(t)
	if len(ref) != 2273 { // MIT-BIH Arrhythmia Database directory, record 100: 2273 beats
		t.Fatalf("reference beats %d, want 2273", len(ref))
	}
	res, err := ecg.Detect(x, rate100, ecg.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Gaps) != 0 {
		// Record 100 is continuous and unclipped (MIT-BIH directory): its
		// quantised isoelectric stretches must not pass for flat lines.
		t.Errorf("gaps %v on record 100, want none", res.Gaps)
	}
	s, err := ecg.MatchBeats(refTimes(ref, rate100), beatTimes(res.Beats), 0)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("record 100 MLII: TP %d FN %d FP %d Se %.4f%% +P %.4f%%", s.TP, s.FN, s.FP, 100*s.Sensitivity(), 100*s.PositivePredictivity())
	for _, i := range s.MissedRef {
		t.Logf("missed ref at %.3f s", float64(ref[i].sample)/rate100)
	}
	for _, i := range s.ExtraTest {
		t.Logf("extra at %.3f s", res.Beats[i].Time)
	}
	// Issue 4 floor: Se and +P >= 99.9 % (Pan and Tompkins 1985 report 99.3 %
	// overall on the database, from memory).
	if s.Sensitivity() < 0.999 || s.PositivePredictivity() < 0.999 {
		t.Errorf("Se %.4f +P %.4f, want both >= 0.999", s.Sensitivity(), s.PositivePredictivity())
	}
}

func TestRecord100EctopicFlags(t *testing.T) {
	x, _, ref := record100(t)
	res, err := ecg.Detect(x, rate100, ecg.Options{})
	if err != nil {
		t.Fatal(err)
	}
	nn, err := ecg.CleanRR(ecg.BeatTimes(res.Beats), res.Gaps, ecg.NNOptions{})
	if err != nil {
		t.Fatal(err)
	}
	s, _ := ecg.MatchBeats(refTimes(ref, rate100), beatTimes(res.Beats), 0)
	// The ectopic beat is the one between the two intervals an ectopic
	// hit replaces (pairs of FixEctopic, disjoint by construction).
	ectopicAt := map[float64]bool{}
	for i := 0; i+1 < len(nn.Fix); i++ {
		if nn.Fix[i] == ecg.FixEctopic && nn.Fix[i+1] == ecg.FixEctopic {
			ectopicAt[nn.TimeS[i]] = true
			i++
		}
	}
	var nA, nV, ectA, ectV, nN, ectN int
	for _, p := range s.Pairs {
		e := ectopicAt[res.Beats[p[1]].Time]
		switch ref[p[0]].code {
		case "A": // atrial premature beat
			nA++
			if e {
				ectA++
			}
		case "V": // premature ventricular contraction
			nV++
			if e {
				ectV++
			}
		case "N":
			nN++
			if e {
				ectN++
			}
		}
	}
	t.Logf("record 100 NN cleaning: counts %+v", nn.Counts)
	t.Logf("A beats: %d matched, %d flagged ectopic; V beats: %d matched, %d flagged ectopic; N beats: %d matched, %d flagged ectopic", nA, ectA, nV, ectV, nN, ectN)
	// Reference counts: 33 A and 1 V (MIT-BIH directory, record 100).
	if nA != 33 || nV != 1 {
		t.Fatalf("matched A %d V %d, want 33 and 1", nA, nV)
	}
	// Floors reached with the from-memory constants (Lipponen and Tarvainen
	// 2019, abstract: 96.96 % sensitivity and 99.94 % specificity for real
	// ectopic beats; on record 100 we reach 32 of 34 and 7 false flags; the floors leave a
	// small margin for detector changes).
	if ectA+ectV < 30 {
		t.Errorf("%d of 34 A/V beats flagged ectopic, floor 30", ectA+ectV)
	}
	if ectN > 10 {
		t.Errorf("%d normal beats flagged ectopic, ceiling 10", ectN)
	}
}

// TestMITDBDirectory scores every WFDB record with an .atr file in the
// directory named by TIDALBEAT_MITDB (e.g. the full MIT-BIH Arrhythmia
// Database): whole records, the MLII lead when present, else the first
// signal. Gross Se and +P must reach 99.5 % (issue 4; Pan and Tompkins 1985
// report 99.3 % overall, from memory).
func TestMITDBDirectory(t *testing.T) {
	dir := refdata.EnvDir(t, refdata.MITDBEnv, "MIT-BIH (or other WFDB) records with .atr reference annotations")
	heas, _ := filepath.Glob(filepath.Join(dir, "*.hea"))
	sort.Strings(heas)
	var scores []ecg.Score
	for _, h := range heas {
		base := strings.TrimSuffix(h, ".hea")
		if _, err := os.Stat(base + ".atr"); err != nil {
			continue
		}
		rec, err := recording.Open(h)
		if err != nil {
			t.Errorf("%s: %v", h, err)
			continue
		}
		if len(rec.Channels) == 0 {
			continue
		}
		ch := &rec.Channels[0]
		if c, ok := rec.ChannelByName("MLII"); ok {
			ch = c
		}
		var ref []float64
		for _, a := range rec.Annotations {
			if a.IsBeat() {
				ref = append(ref, a.Time)
			}
		}
		res, err := ecg.Detect(ch.Samples, ch.RateHz, ecg.Options{})
		if err != nil {
			t.Errorf("%s: %v", h, err)
			continue
		}
		s, err := ecg.MatchBeats(ref, beatTimes(res.Beats), 0)
		if err != nil {
			t.Fatal(err)
		}
		s.Record = rec.Name
		scores = append(scores, s)
		t.Logf("%-6s %-5s TP %6d FN %5d FP %5d Se %.4f +P %.4f", rec.Name, ch.Name, s.TP, s.FN, s.FP, s.Sensitivity(), s.PositivePredictivity())
	}
	if len(scores) == 0 {
		t.Fatalf("%s=%s holds no .hea record with an .atr file", refdata.MITDBEnv, dir)
	}
	sum := ecg.Summarize(scores)
	t.Logf("gross over %d records: TP %d FN %d FP %d Se %.4f +P %.4f; average Se %.4f +P %.4f",
		sum.Records, sum.TP, sum.FN, sum.FP, sum.GrossSe, sum.GrossPP, sum.AverageSe, sum.AveragePP)
	if sum.GrossSe < 0.995 || sum.GrossPP < 0.995 {
		t.Errorf("gross Se %.4f +P %.4f, want both >= 0.995", sum.GrossSe, sum.GrossPP)
	}
}

func TestRecord100StreamEqualsBatch(t *testing.T) {
	// The property of TestStreamEqualsBatch on real data: record 100 in
	// chunks of 1, 7, 360 and 100000 samples gives the batch beats exactly.
	x, _, _ := record100(t)
	x = x[:120*rate100] // two minutes keep the one-sample chunking quick
	batch, err := ecg.Detect(x, rate100, ecg.Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range []int{1, 7, 360, 100000} {
		d, _ := ecg.NewDetector(rate100, ecg.Options{})
		var got []ecg.Beat
		for p := 0; p < len(x); p += n {
			b, _ := d.Push(x[p:min(p+n, len(x))])
			got = append(got, b...)
		}
		b, _ := d.Flush()
		got = append(got, b...)
		if len(got) != len(batch.Beats) {
			t.Fatalf("chunk %d: %d beats, batch %d", n, len(got), len(batch.Beats))
		}
		for i := range got {
			if got[i] != batch.Beats[i] {
				t.Fatalf("chunk %d: beat %d %+v, batch %+v", n, i, got[i], batch.Beats[i])
			}
		}
	}
	if len(batch.Beats) < 140 { // about 75 beats/min over 2 min in record 100
		t.Fatalf("only %d beats in 2 min", len(batch.Beats))
	}
}
