package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/parquet-go/parquet-go"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// writeSimEDF writes an EDF+ file with a simulated chest accelerometer
// (internal/sim.AccelSimulate) and a label annotation, and returns the
// simulator's step times.
func writeSimEDF(t *testing.T, path string, start time.Time, seed uint64) []float64 {
	t.Helper()
	a, err := sim.AccelSimulate([]sim.AccelSegment{
		{Activity: sim.AccelSitting, DurationS: 60},
		{Activity: sim.AccelWalking, DurationS: 120, CadenceSPM: 110},
	}, sim.AccelConfig{Seed: seed})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "x", Start: start, StartKnown: true,
		Annotations: []recording.Annotation{{Time: 60, Duration: 120, Text: "walk", Sample: -1}}}
	for i, x := range [][]float64{a.X, a.Y, a.Z} {
		rec.Channels = append(rec.Channels, recording.Channel{Name: []string{"acc_x", "acc_y", "acc_z"}[i], Unit: "g", RateHz: a.RateHz, Samples: x})
	}
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if err := recording.WriteEDF(f, rec, recording.EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	return a.Steps
}

func readFeatCSV(t *testing.T, path string) ([]string, [][]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return recs[0], recs[1:]
}

func featCol(head []string, name string) int {
	for i, h := range head {
		if h == name {
			return i
		}
	}
	return -1
}

// TestFeaturesBeatsRecord100 runs `tidalbeat features 100 -beats atr` on
// MIT-BIH record 100 with 5-min windows every 5 min, so the windows tile the
// record and every beat annotation is counted once.
func TestFeaturesBeatsRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	beatsRecord100(t, strings.TrimSuffix(hea, ".hea"), 3)
}

// TestFeaturesBeatsAnnotationOnly runs -beats on an annotation-only record:
// record 100's reference annotations beside a header with zero signals.
func TestFeaturesBeatsAnnotationOnly(t *testing.T) {
	atr, err := os.ReadFile(refdata.Shared(t, "physionet/mitdb/100.atr"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "100.atr"), atr, 0o644)
	os.WriteFile(filepath.Join(dir, "100.hea"), []byte("100 0 360 650000\n"), 0o644)
	beatsRecord100(t, filepath.Join(dir, "100"), 2)
}

func beatsRecord100(t *testing.T, rec string, files int) {
	t.Helper()
	out := filepath.Join(t.TempDir(), "r100.csv")
	var so, se bytes.Buffer
	if code := run([]string{"features", rec, "-beats", "atr", "-step", "5m", "-o", out}, &so, &se); code != 0 {
		t.Fatalf("exit %d: %s", code, se.String())
	}
	head, rows := readFeatCSV(t, out)
	nb, nn, mean := featCol(head, "hrv_n_beats"), featCol(head, "hrv_n_nn"), featCol(head, "mean_nn_ms")
	if nb < 0 || nn < 0 || mean < 0 || featCol(head, "rmssd_ms") < 0 {
		t.Fatalf("columns %v", head)
	}
	beats, sumNN, sumMs := 0, 0.0, 0.0
	for _, r := range rows {
		b, _ := strconv.Atoi(r[nb])
		beats += b
		if r[mean] != "" {
			n, _ := strconv.ParseFloat(r[nn], 64)
			m, _ := strconv.ParseFloat(r[mean], 64)
			sumNN += n
			sumMs += n * m
		}
	}
	// MIT-BIH Arrhythmia Database directory, record 100: 2273 beats
	// (2239 N, 33 A, 1 V).
	if beats != 2273 {
		t.Errorf("%d beats over the tiling windows, want 2273", beats)
	}
	// Mean NN: 650000 samples at 360 Hz (1805.6 s) over 2272 intervals
	// gives 794.7 ms (derived from the directory figures; the N-N pairs
	// exclude the intervals around the 34 ectopic beats, whose premature
	// and compensatory intervals roughly cancel).
	if got := sumMs / sumNN; math.Abs(got-794.7) > 0.01*794.7 {
		t.Errorf("mean NN %.1f ms, want 794.7 within 1 %%", got)
	}
	// At most 2239 N beats give at most 2238 N-N intervals, minus those
	// broken by the 34 ectopic beats and the window edges.
	if sumNN > 2238 || sumNN < 2238-2*34-7 {
		t.Errorf("%v NN intervals", sumNN)
	}
	var meta map[string]any
	data, err := os.ReadFile(out + ".meta.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(data, &meta); err != nil {
		t.Fatal(err)
	}
	if len(meta["inputs"].([]any)) != files {
		t.Errorf("sidecar inputs %v", meta["inputs"])
	}
}

// TestFeaturesCohortPartitioned runs two simulated records and one broken
// file through the worker pool into a partitioned dataset and reads it back.
func TestFeaturesCohortPartitioned(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in")
	os.Mkdir(in, 0o755)
	start := time.Date(2026, 6, 2, 9, 0, 0, 0, time.UTC)
	stepsA := writeSimEDF(t, filepath.Join(in, "runner_a.edf"), start, 1)
	writeSimEDF(t, filepath.Join(in, "runner_b.edf"), start.Add(time.Hour), 2)
	os.WriteFile(filepath.Join(in, "broken.edf"), []byte("not an EDF file"), 0o644)
	ds := filepath.Join(dir, "ds")
	var so, se bytes.Buffer
	code := run([]string{"features", in, "-partition", "-o", ds, "-j", "2"}, &so, &se)
	if code != 1 {
		t.Fatalf("exit %d with a broken record, want 1; stderr %s", code, se.String())
	}
	if !strings.Contains(se.String(), "broken.edf") || !strings.Contains(se.String(), "1 of 3 records failed") {
		t.Errorf("stderr %q", se.String())
	}
	// stderr is not a terminal: no progress bar, only the two error lines.
	if n := strings.Count(strings.TrimSpace(se.String()), "\n"); n != 1 {
		t.Errorf("stderr has %d lines, want 2 (no progress bar off a terminal): %q", n+1, se.String())
	}
	type row struct {
		TimeUTC time.Time `parquet:"time_utc,timestamp(microsecond)"`
		Steps   *int64    `parquet:"n_steps,optional"`
		Walk    *float64  `parquet:"label_walk_overlap_frac,optional"`
		Reason  *string   `parquet:"hrv_reason,optional"`
	}
	rows, err := parquet.ReadFile[row](filepath.Join(ds, "record=runner_a", "part-0.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 6 {
		t.Fatalf("%d rows for 180 s on the 30-s grid, want 6", len(rows))
	}
	total := int64(0)
	for i, r := range rows {
		if want := start.Add(time.Duration(i+1) * 30 * time.Second); !r.TimeUTC.Equal(want) {
			t.Errorf("row %d time %v, want %v", i, r.TimeUTC, want)
		}
		if r.Steps != nil {
			total += *r.Steps
		}
		// The walk label covers 60-180 s: rows ending at 90 s and later are
		// inside it, rows up to 60 s outside (EDF+ annotation written above).
		wantWalk := 0.0
		if i >= 2 {
			wantWalk = 1
		}
		if r.Walk == nil || math.Abs(*r.Walk-wantWalk) > 1e-3 {
			t.Errorf("row %d walk overlap %v, want %v", i, r.Walk, wantWalk)
		}
		if r.Reason == nil || *r.Reason != "no ECG channel" {
			t.Errorf("row %d hrv_reason %v", i, r.Reason)
		}
	}
	// Steps against the simulator's step impacts (internal/sim ground truth).
	if d := math.Abs(float64(total) - float64(len(stepsA))); d > 0.05*float64(len(stepsA)) {
		t.Errorf("%d steps, simulator %d", total, len(stepsA))
	}
	if _, err := os.Stat(filepath.Join(ds, "record=runner_b", "part-0.parquet")); err != nil {
		t.Error(err)
	}
	if _, err := os.Stat(ds + ".meta.json"); err != nil {
		t.Error(err)
	}
}

func TestFeaturesOneTableAndErrors(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.edf"), filepath.Join(dir, "b.edf")
	writeSimEDF(t, a, time.Date(2026, 6, 2, 9, 0, 0, 0, time.UTC), 3)
	writeSimEDF(t, b, time.Date(2026, 6, 2, 9, 0, 0, 0, time.UTC), 4)
	out := filepath.Join(dir, "t.jsonl")
	var so, se bytes.Buffer
	if code := run([]string{"features", a, b, "-o", out, "-families", "activity", "-j", "1"}, &so, &se); code != 0 {
		t.Fatalf("exit %d: %s", code, se.String())
	}
	data, _ := os.ReadFile(out)
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	if len(lines) != 12 {
		t.Fatalf("%d lines, want 12 (6 rows per record)", len(lines))
	}
	var first, last map[string]any
	json.Unmarshal([]byte(lines[0]), &first)
	json.Unmarshal([]byte(lines[11]), &last)
	if first["record"] != "a" || last["record"] != "b" {
		t.Errorf("record column %v, %v", first["record"], last["record"])
	}
	if _, ok := first["hrv_reason"]; ok {
		t.Errorf("-families activity still wrote HRV columns")
	}
	for _, args := range [][]string{
		{"features"},
		{"features", a, "-o", "x.txt"},
		{"features", a, "-partition"},
		{"features", a, "-j", "0"},
		{"features", a, "-anchor", "noon"},
		{"features", a, "-role", "acc_x"},
	} {
		so.Reset()
		se.Reset()
		if code := run(args, &so, &se); code != 2 {
			t.Errorf("%v: exit %d, want 2 (usage); stderr %s", args, code, se.String())
		}
	}
	if code := run([]string{"features", filepath.Join(dir, "missing.edf")}, &so, &se); code != 1 {
		t.Errorf("missing record: exit %d", code)
	}
	// CSV on stdout without -o.
	so.Reset()
	if code := run([]string{"features", a, "-families", "activity"}, &so, &se); code != 0 || !strings.HasPrefix(so.String(), "record,time_utc,t_s,seq,") {
		t.Errorf("stdout table: exit %d, %q", code, so.String()[:min(60, so.Len())])
	}
}

// TestFeaturesLabelsAndRoles checks -labels (a CSV of UTC intervals) and
// -role overrides end to end.
func TestFeaturesLabelsAndRoles(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a.edf")
	start := time.Date(2026, 6, 2, 9, 0, 0, 0, time.UTC)
	writeSimEDF(t, a, start, 5)
	lab := filepath.Join(dir, "labels.csv")
	os.WriteFile(lab, []byte("start,end,label\n2026-06-02T09:01:00Z,2026-06-02T09:01:30Z,hill climb\n"), 0o644)
	out := filepath.Join(dir, "t.csv")
	var so, se bytes.Buffer
	if code := run([]string{"features", a, "-labels", lab, "-o", out, "-role", "acc_x=unknown"}, &so, &se); code != 0 {
		t.Fatalf("exit %d: %s", code, se.String())
	}
	head, rows := readFeatCSV(t, out)
	ov, ar := featCol(head, "label_hill_climb_overlap_frac"), featCol(head, "activity_reason")
	if ov < 0 || ar < 0 {
		t.Fatalf("columns %v", head)
	}
	// Rows end at 09:00:30, 09:01:00, 09:01:30, ...: only the third
	// covers the labelled half minute.
	for i, r := range rows {
		want := "0"
		if i == 2 {
			want = "1"
		}
		if r[ov] != want {
			t.Errorf("row %d overlap %q, want %s", i, r[ov], want)
		}
		if r[ar] != "no acc_x channel" {
			t.Errorf("row %d activity reason %q after -role acc_x=unknown", i, r[ar])
		}
	}
	if code := run([]string{"features", a, "-labels", filepath.Join(dir, "none.csv")}, &so, &se); code != 1 {
		t.Errorf("missing labels file: exit %d", code)
	}
}

// writeBreathEDF writes an EDF+ file with simulated rib-cage and abdominal
// bands (internal/sim.BreathSimulate: 90 s of calibration breaths, then
// quiet breathing) and, for the first nRef calibration breaths, an
// annotation "vref=<true volume> L" spanning the breath. It returns the
// simulator's true minute ventilation of the quiet part (L/min).
func writeBreathEDF(t *testing.T, path string, nRef int) float64 {
	t.Helper()
	b, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 3, Segments: []sim.BreathSegment{
		{Label: "calibration", DurationS: 90, RatePerMin: 10, TidalL: 0.8, TidalCV: 0.25, RibShareSD: 0.1},
		{Label: "quiet", DurationS: 300, RatePerMin: 14, TidalL: 0.5, TidalCV: 0.1, RibShareSD: 0.05},
	}})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "b", Start: time.Date(2026, 6, 2, 9, 0, 0, 0, time.UTC), StartKnown: true,
		Channels: []recording.Channel{{Name: "rib", Unit: "mV", RateHz: 50, Samples: b.Rib}, {Name: "abd", Unit: "mV", RateHz: 50, Samples: b.Abd}}}
	var sv, st float64
	for _, tb := range b.Breaths {
		if tb.Onset < 90 && len(rec.Annotations) < nRef && tb.Onset > 2 && !tb.Motion {
			rec.Annotations = append(rec.Annotations, recording.Annotation{Time: tb.Onset, Duration: tb.EndExp - tb.Onset, Text: "vref=" + strconv.FormatFloat(tb.TidalL, 'f', 3, 64) + " L", Sample: -1})
		}
		if tb.Onset >= 120 && tb.Onset < 360 {
			sv += tb.TidalL
			st += tb.EndExp - tb.Onset + tb.PauseS
		}
	}
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if err := recording.WriteEDF(f, rec, recording.EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	return 60 * sv / st
}

// TestFeaturesVrefAnnotations runs `tidalbeat features REC.edf
// -vref-annotations`: twelve annotated reference breaths give litre
// columns whose minute ventilation over 120-360 s is within 10 % of the
// simulator ground truth (least-squares two-weight fit, Chadha et al. 1982;
// tolerance our choice), the sidecar notes record the calibration, and
// without the flag (or with -qdc only) ve_l_min stays empty.
func TestFeaturesVrefAnnotations(t *testing.T) {
	dir := t.TempDir()
	edf := filepath.Join(dir, "b.edf")
	wantVE := writeBreathEDF(t, edf, 12)
	run1 := func(out string, extra ...string) ([]string, [][]string) {
		t.Helper()
		var o, e bytes.Buffer
		args := append([]string{"features", edf, "-families", "breathing", "-o", out}, extra...)
		if code := run(args, &o, &e); code != 0 {
			t.Fatalf("%v: exit %d\n%s", args, code, e.String())
		}
		return readFeatCSV(t, out)
	}
	head, rows := run1(filepath.Join(dir, "cal.csv"), "-vref-annotations")
	ci, ti := featCol(head, "ve_l_min"), featCol(head, "t_s")
	if ci < 0 || ti < 0 {
		t.Fatalf("columns %v", head)
	}
	var sum float64
	var n int
	for _, r := range rows {
		ts, _ := strconv.ParseFloat(r[ti], 64)
		if ts-60 >= 120 && ts <= 360 {
			v, err := strconv.ParseFloat(r[ci], 64)
			if err != nil {
				t.Fatalf("t %v: ve_l_min %q", ts, r[ci])
			}
			sum += v
			n++
		}
	}
	if n < 5 || math.Abs(sum/float64(n)-wantVE) > 0.1*wantVE {
		t.Errorf("mean ve_l_min %.2f over %d rows, simulator ground truth %.2f L/min", sum/float64(n), n, wantVE)
	}
	b, err := os.ReadFile(filepath.Join(dir, "cal.csv.meta.json"))
	if err != nil {
		t.Fatal(err)
	}
	var meta struct {
		Notes  []string
		Config struct {
			BreathCalibration struct {
				VrefAnnotations bool `json:"vref_annotations"`
			} `json:"breath_calibration"`
		}
	}
	if err := json.Unmarshal(b, &meta); err != nil {
		t.Fatal(err)
	}
	t.Logf("mean ve_l_min %.3f over %d rows, simulator %.3f L/min; notes %q", sum/float64(n), n, wantVE, meta.Notes)
	if !meta.Config.BreathCalibration.VrefAnnotations || len(meta.Notes) == 0 || !strings.Contains(strings.Join(meta.Notes, "\n"), "two-weight") {
		t.Errorf("sidecar does not record the calibration: %s", b)
	}
	for _, extra := range [][]string{nil, {"-qdc", "100,380"}} {
		head, rows = run1(filepath.Join(dir, "au.csv"), extra...)
		ci, ai := featCol(head, "ve_l_min"), featCol(head, "ve_au_min")
		au := 0
		for _, r := range rows {
			if r[ci] != "" {
				t.Fatalf("%v: ve_l_min %q without absolute calibration", extra, r[ci])
			}
			if r[ai] != "" {
				au++
			}
		}
		if au < 5 {
			t.Errorf("%v: only %d rows with ve_au_min", extra, au)
		}
	}
}

func TestFeaturesCalibrationFlagErrors(t *testing.T) {
	for _, args := range [][]string{
		{"-rib-weight", "0.6"},
		{"-rib-weight", "0.6", "-abd-weight", "-1"},
		{"-rib-weight", "0.6", "-abd-weight", "1", "-vref-annotations"},
		{"-qdc", "10"},
		{"-qdc", "50,20"},
		{"-qdc", "a,b"},
	} {
		var o, e bytes.Buffer
		if code := run(append([]string{"features", "x.edf"}, args...), &o, &e); code != 2 {
			t.Errorf("%v: exit %d (%s), want 2 for a usage error", args, code, e.String())
		}
	}
}
