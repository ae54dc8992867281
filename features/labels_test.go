package features

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
)

// TestLabelColumns checks the three label columns on hand-computed values
// (definitions in the package doc; the numbers are derived by hand from the
// intervals below).
func TestLabelColumns(t *testing.T) {
	rec, _ := simAccel(t, walkRunSchedule()[:2], 1) // 360 s
	at := func(s float64) time.Time { return testStart.Add(time.Duration(s * float64(time.Second))) }
	cfg := Config{Families: []string{FamilyActivity}, Labels: []Label{
		{Start: at(100), End: at(130), Name: "Nap"},
		{Start: at(200), End: at(200), Name: "self report"}, // point event
		{Start: at(125), End: at(140), Name: "nap"},         // overlaps the first: same key
	}}
	tab, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	ov, since, until := tab.Float("label_nap_overlap_frac"), tab.Float("label_nap_since_s"), tab.Float("label_nap_until_s")
	pu := tab.Float("label_self_report_until_s")
	if ov == nil || pu == nil {
		t.Fatalf("label columns missing: %v", tab.Columns)
	}
	for i, r := range tab.Rows {
		lo, hi := r.Offset-30, r.Offset
		// Merged nap [100, 140): overlap with [hi-30, hi).
		want := math.Max(0, math.Min(hi, 140)-math.Max(lo, 100)) / 30
		if math.Abs(ov[i]-want) > 1e-9 {
			t.Errorf("row %d (%.2f s): overlap %v, want %v", i, hi, ov[i], want)
		}
		// Since: last end at or before hi among ends 130 and 140.
		ws := math.NaN()
		if hi >= 140 {
			ws = hi - 140
		} else if hi >= 130 {
			ws = hi - 130
		}
		if !sameFloat(since[i], ws, 1e-9) {
			t.Errorf("row %d: since %v, want %v", i, since[i], ws)
		}
		// Until: next start after hi among starts 100 and 125.
		wu := math.NaN()
		if hi < 100 {
			wu = 100 - hi
		} else if hi < 125 {
			wu = 125 - hi
		}
		if !sameFloat(until[i], wu, 1e-9) {
			t.Errorf("row %d: until %v, want %v", i, until[i], wu)
		}
		wp := math.NaN()
		if hi < 200 {
			wp = 200 - hi
		}
		if !sameFloat(pu[i], wp, 1e-9) {
			t.Errorf("row %d: self report until %v, want %v", i, pu[i], wp)
		}
	}
}

func sameFloat(a, b, tol float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= tol
}

// TestAnnotationLabels turns WFDB rhythm annotations (code "+", AUX "(AFIB")
// and an EDF+-style text annotation into labels.
func TestAnnotationLabels(t *testing.T) {
	rec := &recording.Recording{Name: "r", Start: testStart, StartKnown: true, Annotations: []recording.Annotation{
		{Time: 0.5, Code: "+", Text: "(N", Annotator: "atr"},
		{Time: 1, Code: "N", Annotator: "atr"},
		{Time: 60, Code: "+", Text: "(AFIB", Annotator: "atr"},
		{Time: 90, Duration: 15, Text: "Obstructive apnea", Annotator: "edf+"},
		{Time: 120, Code: "+", Text: "(N", Annotator: "atr"},
	}}
	got := AnnotationLabels(rec, 300)
	want := []struct {
		name       string
		start, end float64
	}{{"rhythm_n", 0.5, 60}, {"rhythm_afib", 60, 120}, {"Obstructive apnea", 90, 105}, {"rhythm_n", 120, 300}}
	if len(got) != len(want) {
		t.Fatalf("labels %v", got)
	}
	for i, w := range want {
		g := got[i]
		if g.Name != w.name || g.Start.Sub(testStart).Seconds() != w.start || g.End.Sub(testStart).Seconds() != w.end {
			t.Errorf("label %d = %v %v..%v, want %v %v..%v", i, g.Name, g.Start.Sub(testStart).Seconds(), g.End.Sub(testStart).Seconds(), w.name, w.start, w.end)
		}
	}
	if labelKey("Obstructive apnea") != "obstructive_apnea" || labelKey("(AFIB") != "afib" || labelKey("~") != "" {
		t.Errorf("label keys %q %q %q", labelKey("Obstructive apnea"), labelKey("(AFIB"), labelKey("~"))
	}
}

func TestReadLabelsCSV(t *testing.T) {
	in := "start,end,label\n2026-06-01T08:00:00Z,2026-06-01T08:05:00Z,nap\n2026-06-01T10:00:00+02:00, 2026-06-01T10:00:30+02:00 ,cough\n"
	ls, err := ReadLabelsCSV(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if len(ls) != 2 || ls[1].Start != time.Date(2026, 6, 1, 8, 0, 0, 0, time.UTC) || ls[1].Name != "cough" || ls[0].End.Sub(ls[0].Start) != 5*time.Minute {
		t.Errorf("labels %v", ls)
	}
	for _, bad := range []string{
		"2026-06-01T08:00:00Z,2026-06-01T07:00:00Z,nap\n", // ends before start
		"yesterday,today,nap\n",
		"2026-06-01T08:00:00Z,2026-06-01T09:00:00Z,~~\n", // no letters
		"2026-06-01T08:00:00Z,2026-06-01T09:00:00Z\n",    // two fields
	} {
		if _, err := ReadLabelsCSV(strings.NewReader(bad)); !errors.Is(err, ErrInput) {
			t.Errorf("%q: error %v, want ErrInput", bad, err)
		}
	}
}

// FuzzReadLabelsCSV checks that no input makes the label reader panic and
// that what it accepts is well formed.
func FuzzReadLabelsCSV(f *testing.F) {
	f.Add("start,end,label\n2026-06-01T08:00:00Z,2026-06-01T08:05:00Z,nap\n")
	f.Add("2026-06-01T08:00:00.5Z,2026-06-01T08:00:00.5Z,\"a,b\"\n")
	f.Add("\"unterminated\n")
	f.Fuzz(func(t *testing.T, s string) {
		ls, err := ReadLabelsCSV(strings.NewReader(s))
		if err != nil {
			return
		}
		for _, l := range ls {
			if l.End.Before(l.Start) || labelKey(l.Name) == "" {
				t.Fatalf("accepted bad label %+v", l)
			}
		}
	})
}

// Reference-breath marks calibrate the bands; they must not become label
// columns (the convention is Tidalbeat's own, documented on BreathCalibration).
func TestVrefMarksAreNotLabels(t *testing.T) {
	rec := &recording.Recording{Annotations: []recording.Annotation{
		{Time: 10, Duration: 4, Text: "vref=0.80 L"},
		{Time: 20, Duration: 4, Code: "VREF = 800 mL"},
		{Time: 30, Duration: 60, Text: "stretching"},
	}}
	got := AnnotationLabels(rec, 100)
	if len(got) != 1 || got[0].Name != "stretching" {
		t.Fatalf("labels %+v, want only the stretching interval", got)
	}
}
