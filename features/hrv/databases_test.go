package hrv_test

import (
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/hrv"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/window"
)

// TestReferenceDatabases runs the record-100 procedure (N-to-N intervals
// from the reference beat annotations, 5-min windows) over every record of
// the optional databases: TIDALBEAT_RRDB (RR-interval databases such as the
// PhysioNet normal sinus rhythm and heart failure RR-interval databases,
// annotation-only records) and TIDALBEAT_MITDB (more MIT-BIH Arrhythmia
// records). Each is skipped with a message when its variable is not set.
// It checks the house rules on real data (no input errors, every NaN with a
// reason, SD1^2 = SDSD^2/2 exactly, Brennan et al. 2001) and logs per record
// the median RMSSD, LF/HF and DFA alpha1 for the reader to compare with the
// literature; it asserts no physiology bounds because these databases hold
// arrhythmias and heart failure on purpose.
func TestReferenceDatabases(t *testing.T) {
	for _, db := range []struct{ env, what string }{
		{refdata.RRDBEnv, "RR-interval database records (WFDB headers with beat annotations)"},
		{refdata.MITDBEnv, "MIT-BIH Arrhythmia Database records"},
	} {
		t.Run(db.env, func(t *testing.T) {
			dir := refdata.EnvDir(t, db.env, db.what)
			heads, _ := filepath.Glob(filepath.Join(dir, "*.hea"))
			if len(heads) == 0 {
				t.Fatalf("%s=%s holds no .hea files", db.env, dir)
			}
			sort.Strings(heads)
			for _, h := range heads {
				scoreRecord(t, h)
			}
		})
	}
}

func scoreRecord(t *testing.T, hea string) {
	t.Helper()
	name := strings.TrimSuffix(filepath.Base(hea), ".hea")
	rec, err := recording.Open(hea)
	if err != nil {
		if _, statErr := os.Stat(strings.TrimSuffix(hea, ".hea") + ".atr"); statErr != nil {
			t.Logf("%s: skipped (%v)", name, err)
			return
		}
		t.Errorf("%s: %v", name, err)
		return
	}
	var beats []float64
	var normal []bool
	for _, a := range rec.Annotations {
		if a.IsBeat() {
			beats = append(beats, a.Time)
			normal = append(normal, a.Code == "N")
		}
	}
	if len(beats) < 2 {
		t.Logf("%s: %d beat annotations, skipped", name, len(beats))
		return
	}
	nn, end, err := hrv.NNFromBeats(beats, normal)
	if err != nil {
		t.Errorf("%s: %v", name, err)
		return
	}
	g, _ := window.NewGrid(window.Spec{Length: 5 * time.Minute, Step: 5 * time.Minute, Anchor: window.AnchorStart},
		time.Date(2000, 1, 1, 0, 0, 0, 0, time.UTC))
	extent := math.Max(rec.Duration(), beats[len(beats)-1]+1e-3)
	seq, err := hrv.Windowed(g, end, nn, extent, nil, hrv.Options{})
	if err != nil {
		t.Errorf("%s: %v", name, err)
		return
	}
	var rmssd, lfhf, a1 []float64
	for w, m := range seq {
		if m.Err != nil {
			t.Errorf("%s window %v: %v", name, w.Start, m.Err)
			continue
		}
		for i, v := range m.Values() {
			if c := hrv.Columns()[i]; math.IsNaN(v) && m.Reasons[c] == "" {
				t.Errorf("%s window %v: %s NaN without reason", name, w.Start, c)
			}
		}
		if !math.IsNaN(m.SD1ms) && math.Abs(m.SD1ms*m.SD1ms-m.SDSDms*m.SDSDms/2) > 1e-6*m.SD1ms*m.SD1ms {
			t.Errorf("%s window %v: SD1^2 != SDSD^2/2", name, w.Start)
		}
		add := func(dst *[]float64, v float64) {
			if !math.IsNaN(v) {
				*dst = append(*dst, v)
			}
		}
		add(&rmssd, m.RMSSDms)
		add(&lfhf, m.LFHF)
		add(&a1, m.DFAAlpha1)
	}
	t.Logf("%s: %d NN, median RMSSD %.1f ms, LF/HF %.2f, DFA alpha1 %.2f", name, len(nn), median(rmssd), median(lfhf), median(a1))
}

func median(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	return s[len(s)/2]
}
