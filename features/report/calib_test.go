package report

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// calibRecording simulates two bands (internal/sim.BreathSimulate): a
// calibration segment at 0.8 L and a quiet one at 0.5 L, with twelve
// reference breaths of the calibration segment marked "vref=<V> L" as a
// spirometer session would mark them.
func calibRecording(t *testing.T) (*recording.Recording, *sim.BreathRecording) {
	t.Helper()
	b, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 21, Segments: []sim.BreathSegment{
		{Label: "calibration", DurationS: 120, RatePerMin: 10, TidalL: 0.8, TidalCV: 0.25, RibShareSD: 0.1},
		{Label: "quiet", DurationS: 120, RatePerMin: 14, TidalL: 0.5},
	}})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "calib", Channels: []recording.Channel{
		{Name: "rib", RateHz: 50, Samples: b.Rib, Role: recording.RoleRibCage},
		{Name: "abd", RateHz: 50, Samples: b.Abd, Role: recording.RoleAbdomen},
	}}
	for _, tb := range b.Breaths[1:13] {
		rec.Annotations = append(rec.Annotations, recording.Annotation{Time: tb.Onset, Duration: tb.EndExp - tb.Onset, Text: fmt.Sprintf("vref=%.2f L", tb.TidalL)})
	}
	return rec, b
}

// breathingFigure returns the breathing figure's markup from a report.
func breathingFigure(t *testing.T, in *Input) string {
	t.Helper()
	var buf bytes.Buffer
	if err := Write(&buf, in); err != nil {
		t.Fatal(err)
	}
	checkDocument(t, buf.Bytes())
	s := buf.String()
	i := strings.Index(s, `<figure id="fig-breathing">`)
	if i < 0 {
		t.Fatal("no breathing figure")
	}
	j := strings.Index(s[i:], "</figure>")
	if j < 0 {
		t.Fatal("breathing figure not closed")
	}
	return s[i : i+j]
}

// TestReportBreathingInLitres: with the table calibrated from reference
// breaths, the report's breathing trace uses the table's weights, its axis
// reads litres, its caption names the table's calibration, and the detected
// tidal volumes of the quiet segment match the simulator ground truth
// (0.5 L) within 10 % (our tolerance).
func TestReportBreathingInLitres(t *testing.T) {
	rec, _ := calibRecording(t)
	cfg := features.Config{BreathCalibration: features.BreathCalibration{VrefAnnotations: true}}
	a, err := Analyze(rec, Options{Features: cfg})
	if err != nil {
		t.Fatal(err)
	}
	want, err := features.ResolveBreathCalibration(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	if got := a.BreathCalibration.Calibration; got != want.Calibration || !got.Litres {
		t.Fatalf("report calibration %+v, table's %+v (want litres)", got, want.Calibration)
	}
	if a.Input.Breath.Unit != "L" {
		t.Errorf("breathing trace unit %q, want L", a.Input.Breath.Unit)
	}
	if a.Input.Trends.VEUnit != "L/min" {
		t.Errorf("minute ventilation unit %q, want L/min", a.Input.Trends.VEUnit)
	}
	fig := breathingFigure(t, a.Input)
	if !strings.Contains(fig, "volume (L)") {
		t.Error("breathing axis is not labelled in litres")
	}
	if !strings.Contains(fig, "feature table&#39;s calibration") && !strings.Contains(fig, "feature table's calibration") {
		t.Errorf("caption does not name the table's calibration")
	}
	if strings.Contains(fig, "QDC weight") {
		t.Error("caption claims the QDC fallback")
	}
	var sum float64
	n := 0
	for _, b := range a.Breaths {
		if b.Onset >= 135 && b.Onset < 230 && !math.IsNaN(b.VtL) {
			sum += b.VtL
			n++
		}
	}
	if n < 15 {
		t.Fatalf("%d quiet breaths with a litre volume, want >= 15 (14/min for 95 s)", n)
	}
	m := sum / float64(n)
	t.Logf("quiet segment: %d breaths, mean tidal volume %.3f L (simulator ground truth 0.5 L)", n, m)
	if math.Abs(m-0.5) > 0.05 {
		t.Errorf("mean quiet tidal volume %.3f L, simulator ground truth 0.5 L (tolerance 10 %%)", m)
	}
}

// TestReportBreathingFallbackQDC: without a calibration in the table the
// report falls back to QDC per posture, in arbitrary units, and says so.
func TestReportBreathingFallbackQDC(t *testing.T) {
	rec, _ := calibRecording(t)
	a, err := Analyze(rec, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if m := a.BreathCalibration.Calibration.Method; m != "none" {
		t.Errorf("table calibration %q, want none", m)
	}
	if a.Input.Breath.Unit != "AU" {
		t.Errorf("breathing trace unit %q, want AU", a.Input.Breath.Unit)
	}
	fig := breathingFigure(t, a.Input)
	if !strings.Contains(fig, "volume (AU)") {
		t.Error("breathing axis is not labelled in arbitrary units")
	}
	if !strings.Contains(fig, "QDC weight") || !strings.Contains(fig, "fallback") {
		t.Error("caption does not say the QDC fallback was used")
	}
	for _, b := range a.Breaths {
		if !math.IsNaN(b.VtL) {
			t.Fatalf("breath at %.1f s has a litre volume %.3f without absolute calibration", b.Onset, b.VtL)
		}
	}
}

// TestReportEventsUseSpO2: with an SpO2 channel the candidate events get
// the desaturation criterion, as in the table's breathing family, and the
// summary says so.
func TestReportEventsUseSpO2(t *testing.T) {
	rec, b := calibRecording(t)
	sp := make([]float64, len(b.Rib)/50)
	for i := range sp {
		sp[i] = 97
	}
	rec.Channels = append(rec.Channels, recording.Channel{Name: "spo2", Unit: "%", RateHz: 1, Samples: sp, Role: recording.RoleSpO2})
	a, err := Analyze(rec, Options{})
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, f := range a.Input.Facts {
		found = found || (f.Name == "candidate events" && strings.Contains(f.Value, "SpO2 for the desaturation criterion"))
	}
	if !found {
		t.Errorf("candidate-events fact does not say SpO2 was used: %v", a.Input.Facts)
	}
}
