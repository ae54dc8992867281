package hrv_test

import (
	"bufio"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/hrv"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/window"
)

var update = flag.Bool("update", false, "rewrite testdata/record100_hrv.tsv from the current code")

const record100Table = "testdata/record100_hrv.tsv"

// record100Header explains, inside the file, exactly how the table was made.
const record100Header = `# HRV of MIT-BIH Arrhythmia Database record 100 (PhysioNet), regression table.
# Source: the reference beat annotations ../shared/physionet/mitdb/100.atr (read with
# features/recording, 360 Hz; record length from 100.hea). NN = intervals between two
# consecutive beats both labelled N (hrv.NNFromBeats; intervals touching the A and V beats
# are left out, not interpolated). Windows: package window, 5 min long, step 5 min,
# anchored at the record start (origin 2000-01-01T00:00:00Z, arbitrary: the header gives
# no date), data extent [0, record length). Metrics: hrv.Windowed with zero Options
# (Task Force defaults, Welch 4 Hz spline + smoothness priors lambda 500, SampEn m 2,
# r 0.2 SD). Regenerate with: go test ./features/hrv -run TestRecord100 -update
# The values are this code's output, not an outside reference; TestRecord100 also bounds
# them by physiology and by the record's published beat counts.
`

// TestRecord100 computes HRV of record 100 from its reference annotations
// (normal-to-normal only) in 5-minute windows and compares with the
// regression table in testdata. Beyond regression, it checks what is known
// independently: 2273 annotated beats, 2239 of them normal, 33 A and 1 V
// (MIT-BIH Arrhythmia Database directory, record 100), and physiological
// bounds for a resting adult in sinus rhythm (common practice).
func TestRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec, err := recording.Open(hea)
	if err != nil {
		t.Fatal(err)
	}
	var beats []float64
	var normal []bool
	counts := map[string]int{}
	for _, a := range rec.Annotations {
		if !a.IsBeat() {
			continue
		}
		beats = append(beats, a.Time)
		normal = append(normal, a.Code == "N")
		counts[a.Code]++
	}
	if len(beats) != 2273 || counts["N"] != 2239 || counts["A"] != 33 || counts["V"] != 1 {
		t.Fatalf("beats %d, codes %v; want 2273 with N 2239, A 33, V 1 (MIT-BIH directory)", len(beats), counts)
	}
	nn, end, err := hrv.NNFromBeats(beats, normal)
	if err != nil {
		t.Fatal(err)
	}
	g, err := window.NewGrid(window.Spec{Length: 5 * time.Minute, Step: 5 * time.Minute, Anchor: window.AnchorStart},
		time.Date(2000, 1, 1, 0, 0, 0, 0, time.UTC))
	if err != nil {
		t.Fatal(err)
	}
	seq, err := hrv.Windowed(g, end, nn, rec.Duration(), nil, hrv.Options{})
	if err != nil {
		t.Fatal(err)
	}
	cols := hrv.Columns()
	var lines []string
	valid := 0
	for w, m := range seq {
		if m.Err != nil {
			t.Fatalf("window %v: %v", w.Start, m.Err)
		}
		if w.Valid {
			valid++
			bound(t, w, m)
		}
		f := []string{strconv.FormatFloat(w.Start, 'f', 3, 64), strconv.FormatFloat(w.End, 'f', 3, 64)}
		for _, v := range m.Values() {
			f = append(f, strconv.FormatFloat(v, 'g', 10, 64))
		}
		lines = append(lines, strings.Join(f, "\t"))
	}
	if valid != 6 {
		t.Errorf("%d valid 5-min windows, want 6 (record length 30:05)", valid)
	}
	header := "window_start_s\twindow_end_s\t" + strings.Join(cols, "\t")
	if *update {
		if err := os.MkdirAll(filepath.Dir(record100Table), 0o755); err != nil {
			t.Fatal(err)
		}
		body := record100Header + header + "\n" + strings.Join(lines, "\n") + "\n"
		if err := os.WriteFile(record100Table, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("wrote %s (%d windows)", record100Table, len(lines))
		return
	}
	want := readTable(t, record100Table)
	if len(want) != len(lines)+1 || want[0] != header {
		t.Fatalf("%s: %d lines (header %q), computed %d windows; regenerate with -update if the columns changed", record100Table, len(want), want[0], len(lines))
	}
	for i, line := range lines {
		got, exp := strings.Split(line, "\t"), strings.Split(want[i+1], "\t")
		for c := range got {
			gv, _ := strconv.ParseFloat(got[c], 64)
			ev, err := strconv.ParseFloat(exp[c], 64)
			if err != nil {
				t.Fatalf("%s line %d column %d: %v", record100Table, i+2, c, err)
			}
			if math.IsNaN(gv) != math.IsNaN(ev) || math.Abs(gv-ev) > 1e-6*math.Max(1, math.Abs(ev)) {
				name := "window"
				if c >= 2 {
					name = cols[c-2]
				}
				t.Errorf("window %d %s: %v, table %v", i, name, gv, ev)
			}
		}
	}
}

// bound checks physiological plausibility for a resting adult in sinus
// rhythm (common practice; wide on purpose: it catches unit and scaling
// mistakes, not subtle ones).
func bound(t *testing.T, w window.Window, m hrv.Metrics) {
	t.Helper()
	for _, c := range []struct {
		name   string
		v      float64
		lo, hi float64
	}{
		{"n", float64(m.N), 250, 500},
		{"mean_hr_bpm", m.MeanHRbpm, 50, 110},
		{"sdnn_ms", m.SDNNms, 5, 250},
		{"rmssd_ms", m.RMSSDms, 3, 250},
		{"pnn50_pct", m.PNN50pct, 0, 100},
		{"lf_ms2", m.LFms2, 1, 1e5},
		{"hf_ms2", m.HFms2, 1, 1e5},
		{"lf_hf_ratio", m.LFHF, 0.02, 20},
		{"sd1_ms", m.SD1ms, 2, 200},
		{"sampen", m.SampEn, 0.1, 3.5},
		{"dfa_alpha1", m.DFAAlpha1, 0.2, 2},
		{"hrv_tri_index", m.TriIndex, 1, 100},
	} {
		if !(c.v >= c.lo && c.v <= c.hi) {
			t.Errorf("window [%v, %v): %s = %v outside physiological bounds [%v, %v] (%s)", w.Start, w.End, c.name, c.v, c.lo, c.hi, m.Reasons[c.name])
		}
	}
	// Task Force identities hold on real data too (Brennan et al. 2001).
	if d := m.SD1ms*m.SD1ms - m.SDSDms*m.SDSDms/2; math.Abs(d) > 1e-6*m.SD1ms*m.SD1ms {
		t.Errorf("window %v: SD1^2 - SDSD^2/2 = %v", w.Start, d)
	}
}

func readTable(t *testing.T, path string) []string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatalf("%v (generate it with: go test ./features/hrv -run TestRecord100 -update)", err)
	}
	defer f.Close()
	var out []string
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		if l := sc.Text(); l != "" && !strings.HasPrefix(l, "#") {
			out = append(out, l)
		}
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(out) == 0 {
		t.Fatalf("%s is empty", path)
	}
	return out
}
