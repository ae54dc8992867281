package main

import (
	"bytes"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/features/report"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// TestDemoEndToEnd runs "tidalbeat demo" into a temporary directory, checks
// that every output exists and reads back, then scores what the pipeline
// found against the simulator ground truth (internal/sim, DaySimulate with
// the same seed). The scenario's physiology is described in internal/sim
// day.go (textbook exercise and sleep physiology, from memory); the checks
// here are against the simulator's own truth, so they test detection, not
// physiology. Tolerances are stated beside each check.
func TestDemoEndToEnd(t *testing.T) {
	dir := t.TempDir()
	var so, se bytes.Buffer
	if code := run([]string{"demo", "-o", dir}, &so, &se); code != 0 {
		t.Fatalf("demo exit %d: %s", code, se.String())
	}
	out := so.String()
	for _, want := range []string{"beats:", "steps:", "breaths:", "not a medical device", filepath.Join(dir, "report.html"), filepath.Join(dir, demoName+".edf")} {
		if !strings.Contains(out, want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	html, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range report.FigureIDs {
		if !bytes.Contains(html, []byte(`<figure id="`+id+`">`)) {
			t.Errorf("report figure %s missing", id)
		}
	}

	// The feature table: 240 rows (two hours at the default 30 s step, row
	// times on whole multiples of 30 s since the Unix epoch, and the demo
	// starts at 12:00:00 UTC), the same in CSV and Parquet.
	rows := demoReadCSV(t, filepath.Join(dir, "features.csv"))
	const wantRows = 240
	if len(rows) != wantRows {
		t.Errorf("features.csv: %d rows, want %d", len(rows), wantRows)
	}
	if n := demoParquetRows(t, filepath.Join(dir, "features.parquet")); n != wantRows {
		t.Errorf("features.parquet: %d rows, want %d", n, wantRows)
	}
	for _, p := range []string{"features.csv.meta.json", "features.parquet.meta.json"} {
		if _, err := os.Stat(filepath.Join(dir, p)); err != nil {
			t.Errorf("sidecar: %v", err)
		}
	}

	day, err := sim.DaySimulate(1)
	if err != nil {
		t.Fatal(err)
	}
	tr := day.Truth

	// The EDF+ file reads back with the recording package: six channels
	// with their roles, rates and lengths, NaN exactly over the lead-off
	// gap (to the sample), and every segment and apnea as an annotation.
	rec, err := recording.Open(filepath.Join(dir, demoName+".edf"))
	if err != nil {
		t.Fatal(err)
	}
	want := demoRecording(day)
	if len(rec.Channels) != len(want.Channels) {
		t.Fatalf("EDF: %d channels, want %d", len(rec.Channels), len(want.Channels))
	}
	roles := []recording.Role{recording.RoleECG, recording.RoleRibCage, recording.RoleAbdomen, recording.RoleAccX, recording.RoleAccY, recording.RoleAccZ}
	for i, c := range rec.Channels {
		w := want.Channels[i]
		if i < len(roles) && c.Role != roles[i] {
			t.Errorf("EDF channel %d (%s): role %v, want %v", i, c.Name, c.Role, roles[i])
		}
		if c.Role != w.Role || c.RateHz != w.RateHz || len(c.Samples) != len(w.Samples) {
			t.Errorf("EDF channel %d: %s %v %g Hz %d samples, want %s %v %g Hz %d", i, c.Name, c.Role, c.RateHz, len(c.Samples), w.Name, w.Role, w.RateHz, len(w.Samples))
		}
		for k := range min(len(c.Samples), len(w.Samples)) {
			if math.IsNaN(c.Samples[k]) != math.IsNaN(w.Samples[k]) {
				t.Fatalf("EDF channel %s sample %d: NaN %v, written NaN %v", c.Name, k, math.IsNaN(c.Samples[k]), math.IsNaN(w.Samples[k]))
			}
		}
	}
	var texts []string
	for _, an := range rec.Annotations {
		if an.Duration > 0 {
			texts = append(texts, an.Text)
		}
	}
	if nref := len(day.ReferenceBreaths()); len(texts) != len(tr.Segments)+len(tr.Apneas)+nref || nref < 10 {
		t.Errorf("EDF annotations with a duration: %q, want the %d segments, %d apneas and %d (>= 10) bag breaths", texts, len(tr.Segments), len(tr.Apneas), nref)
	}
	cfg := features.Config{BreathCalibration: features.BreathCalibration{VrefAnnotations: true}}
	a, err := report.Analyze(rec, report.Options{Features: cfg})
	if err != nil {
		t.Fatal(err)
	}

	// Beats: every visible simulated R-peak matched within 150 ms (the
	// ANSI/AAMI EC57 matching window); sensitivity and positive
	// predictivity at least 99.5 % (the floor issue 4 sets for MIT-BIH
	// records; the demo ECG is cleaner than those).
	var ref []float64
	for _, b := range tr.Beats {
		hidden := false
		for _, g := range tr.LeadOff {
			hidden = hidden || (b.TimeS >= g.StartS && b.TimeS < g.EndS)
		}
		if !hidden {
			ref = append(ref, b.TimeS)
		}
	}
	sc, err := ecg.MatchBeats(ref, a.RPeaksS, 0.150)
	if err != nil {
		t.Fatal(err)
	}
	if sc.Sensitivity() < 0.995 || sc.PositivePredictivity() < 0.995 {
		t.Errorf("beats vs simulator truth: Se %.4f, +P %.4f (TP %d FN %d FP %d), want both >= 0.995",
			sc.Sensitivity(), sc.PositivePredictivity(), sc.TP, sc.FN, sc.FP)
	}

	// Heart rate per segment: the detected mean within 1 % of the simulated
	// one (rest ~58, warm-up ~137, intervals ~173, cool-down ~103, nap ~52
	// beats/min; the intervals peak near 185).
	for _, s := range tr.Segments {
		got, want := a.MeanHR(s.StartS, s.EndS), tr.MeanHR(s.StartS, s.EndS)
		if math.IsNaN(got) || math.Abs(got-want) > 0.01*want {
			t.Errorf("%s: mean HR %.2f beats/min, simulated %.2f (tolerance 1 %%)", s.Label, got, want)
		}
	}

	// Steps per segment: within 2 % of the simulated count while moving
	// (issue 7's step-count floor on the open step-counter dataset), and
	// at most 5 spurious steps at rest and in the nap.
	for _, s := range tr.Segments {
		want := float64(tr.StepsIn(s.StartS, s.EndS))
		got, ok := a.StepsIn(s.StartS, s.EndS)
		if !ok {
			t.Fatal("no activity family in the feature table")
		}
		if want == 0 {
			if got > 5 {
				t.Errorf("%s: %v steps found while still", s.Label, got)
			}
			continue
		}
		if math.Abs(got-want) > 0.02*want {
			t.Errorf("%s: %v steps found, %v simulated (tolerance 2 %%)", s.Label, got, want)
		}
	}

	// Table values against the truth: the label columns carry the schedule
	// (a row in the middle of the nap lies wholly in "nap", none of it in
	// "rest"), and each segment's last HRV window (5 min, Task Force 1996,
	// ending at the segment end) reports the simulated mean heart rate
	// over the same 5 min within 2 %.
	byT := map[float64]map[string]string{}
	for _, r := range rows {
		ts, err := strconv.ParseFloat(r["t_s"], 64)
		if err != nil {
			t.Fatalf("t_s %q: %v", r["t_s"], err)
		}
		byT[ts] = r
	}
	mid := byT[5400]
	if mid == nil || mid["label_nap_overlap_frac"] != "1" || mid["label_rest_overlap_frac"] != "0" {
		t.Errorf("row at 5400 s: nap overlap %q, rest overlap %q; want 1 and 0", mid["label_nap_overlap_frac"], mid["label_rest_overlap_frac"])
	}
	for _, s := range tr.Segments {
		if s.Label == "intervals" {
			// Known limitation, not hidden: at 180+ beats/min with an
			// RMSSD of a few ms the NN cleaning (ecg.CleanRR defaults)
			// flags about 10 % of the intervals, so the HRV family
			// leaves the intervals' windows empty (corrected fraction
			// above its 0.1 maximum). Their heart rate is checked from
			// the cleaned series above instead.
			continue
		}
		r := byT[s.EndS]
		if r == nil {
			t.Errorf("no row at the end of %s (%v s)", s.Label, s.EndS)
			continue
		}
		got, err := strconv.ParseFloat(r["mean_hr_bpm"], 64)
		want := tr.MeanHR(s.EndS-300, s.EndS)
		if err != nil || math.Abs(got-want) > 0.02*want {
			t.Errorf("%s: table mean_hr_bpm %q at %v s, simulated %.2f over the same 5 min (tolerance 2 %%)", s.Label, r["mean_hr_bpm"], s.EndS, want)
		}
	}

	// Minute ventilation in litres: the bands are calibrated by least squares
	// against the bag breaths of known volume at rest (methods: reference-
	// volume calibration, Chadha et al. 1982), so the table's ve_l_min
	// follows the simulated ventilation: within 10 % per segment (the nap is
	// lying, where the upright calibration is off by a few per cent, as RIP
	// calibration is posture-specific), and in the last minute of each hard
	// repeat within 10 % of the simulated value, near 100 L/min (48/min of
	// 2.1 L, the scenario's hard-running target).
	for _, s := range tr.Segments {
		got, want := tableMean(a.Table, "ve_l_min", 60, s.StartS, s.EndS), tr.Ventilation(s.StartS, s.EndS)
		if math.IsNaN(got) || math.Abs(got-want) > 0.1*want {
			t.Errorf("%s: ve_l_min %.1f, simulated %.1f L/min (tolerance 10 %%)", s.Label, got, want)
		}
	}
	ive := a.Table.Float("ve_l_min")
	for _, w := range tr.Segments[2].Work {
		end := math.Floor((tr.Segments[2].StartS+w.EndS)/30) * 30 // last row inside the repeat
		want := tr.Ventilation(end-60, end)
		got := math.NaN()
		for i, r := range a.Table.Rows {
			if r.Offset == end {
				got = ive[i]
			}
		}
		if math.IsNaN(got) || math.Abs(got-want) > 0.1*want || want < 85 {
			t.Errorf("hard repeat ending %.0f s: ve_l_min %.1f, simulated %.1f L/min (tolerance 10 %%, want near 100)", end, got, want)
		}
	}

	// Breathing rate per segment from the detected breaths: within 3 % of
	// the simulated rate (simulator truth; the nap at 10/min and the hard
	// repeats near 48/min bracket what the detector must follow), and the
	// breath count within 1 % of the simulated breaths with airflow.
	for _, s := range tr.Segments {
		got, want := a.BreathRate(s.StartS, s.EndS), tr.BreathRate(s.StartS, s.EndS)
		if math.IsNaN(got) || math.Abs(got-want) > 0.03*want {
			t.Errorf("%s: breathing rate %.2f/min, simulated %.2f (tolerance 3 %%)", s.Label, got, want)
		}
	}
	nb := 0
	for _, b := range tr.Breaths {
		if !b.Obstructed {
			nb++
		}
	}
	if got := len(a.Breaths); math.Abs(float64(got-nb)) > 0.01*float64(nb) {
		t.Errorf("%d breaths detected, %d simulated (tolerance 1 %%)", got, nb)
	}
	// Apnea timing: every simulated obstructive apnea (15-28 s in the nap)
	// is overlapped by a candidate event whose start and end are each
	// within 6 s (one breath at the nap's 10 breaths/min) of the truth, and
	// at most one candidate lies outside every simulated apnea (the AASM
	// amplitude and duration rules of Berry et al. 2012 are applied by
	// package resp; the scenario has no other events).
	for _, ap := range tr.Apneas {
		e, ok := overlapping(a.Events, ap)
		if !ok {
			t.Errorf("simulated apnea %.0f-%.0f s: no candidate event", ap.StartS, ap.EndS)
			continue
		}
		if math.Abs(e.Start-ap.StartS) > 6 || math.Abs(e.End-ap.EndS) > 6 {
			t.Errorf("simulated apnea %.0f-%.0f s: candidate %.1f-%.1f s (tolerance 6 s)", ap.StartS, ap.EndS, e.Start, e.End)
		}
	}
	nFalse := 0
	for _, e := range a.Events {
		hit := false
		for _, ap := range tr.Apneas {
			hit = hit || (e.Start < ap.EndS && e.End > ap.StartS)
		}
		if !hit {
			nFalse++
		}
	}
	if nFalse > 1 {
		t.Errorf("%d candidate events outside the simulated apneas, want at most 1", nFalse)
	}
}

// demoReadCSV reads a table with a header into one map per row.
func demoReadCSV(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if len(recs) == 0 {
		t.Fatalf("%s: empty", path)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}

func demoParquetRows(t *testing.T, path string) int64 {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		t.Fatal(err)
	}
	pf, err := parquet.OpenFile(f, st.Size())
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return pf.NumRows()
}

func TestDemoUsage(t *testing.T) {
	var so, se bytes.Buffer
	if code := run([]string{"demo", "extra-arg", "-o", t.TempDir()}, &so, &se); code != 2 {
		t.Errorf("demo with a positional argument: exit %d, want 2", code)
	}
}

// BenchmarkDemo times the whole demo (simulate, EDF+ out and back, feature
// table, report); the README promises well under 30 s on 2 cores.
func BenchmarkDemo(b *testing.B) {
	dir := b.TempDir()
	for b.Loop() {
		var so, se bytes.Buffer
		if code := run([]string{"demo", "-o", dir}, &so, &se); code != 0 {
			b.Fatalf("demo exit %d: %s", code, se.String())
		}
	}
	b.ReportMetric(sim.DayDurationS*float64(b.N)/b.Elapsed().Seconds(), "recorded_s/s")
}
