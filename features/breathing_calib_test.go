package features

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// calibRecording is a simulated two-band recording
// (internal/sim.BreathSimulate) whose first 100 s are a calibration
// manoeuvre (slow breaths of varied depth and rib-cage share, as breaths
// into a spirometer are), then quiet breathing and harder breathing, all in
// one posture, so the simulator's band weights (TrueWeights, 1/gain) hold
// throughout; an obstructive apnea at 340 s and a central hypopnea after
// rest at 800 s. nRef of the calibration breaths get a reference annotation
// "vref=<true volume> L" spanning the breath (the spirometer reading is the
// simulator's ground truth volume). With spo2 a 1-Hz SpO2 channel is added.
func calibRecording(t testing.TB, nRef int, spo2 bool) (*recording.Recording, *sim.BreathRecording) {
	t.Helper()
	b, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 21, SpO2: spo2, Segments: []sim.BreathSegment{
		{Label: "calibration", DurationS: 100, RatePerMin: 10, TidalL: 0.8, TidalCV: 0.25, RibShare: 0.4, RibShareSD: 0.1},
		{Label: "quiet", DurationS: 240, RatePerMin: 14, TidalL: 0.5, TidalCV: 0.1, RibShareSD: 0.05},
		{Label: "apnea", Kind: sim.BreathObstructiveApnea, DurationS: 20},
		{Label: "hard", DurationS: 240, RatePerMin: 30, TidalL: 1.5, TidalCV: 0.08},
		{Label: "rest", DurationS: 180, RatePerMin: 13, TidalL: 0.55, TidalCV: 0.08},
		{Label: "hypopnea", Kind: sim.BreathCentralHypopnea, DurationS: 20},
		{Label: "rest", DurationS: 120},
	}})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "sim_calib", Start: testStart, StartKnown: true, Channels: []recording.Channel{
		{Name: "rib", RateHz: b.RateHz, Samples: b.Rib, Role: recording.RoleRibCage},
		{Name: "abd", RateHz: b.RateHz, Samples: b.Abd, Role: recording.RoleAbdomen},
	}}
	if spo2 {
		rec.Channels = append(rec.Channels, recording.Channel{Name: "SpO2", Unit: "%", RateHz: 1, Samples: b.SpO2, Role: recording.RoleSpO2})
	}
	for _, tb := range b.Breaths {
		if len(rec.Annotations) == nRef || tb.Onset >= 100 {
			break
		}
		if tb.Motion || tb.Onset < 2 {
			continue
		}
		rec.Annotations = append(rec.Annotations, recording.Annotation{Time: tb.Onset, Duration: tb.EndExp - tb.Onset,
			Text: fmt.Sprintf("vref=%.3f L", tb.TidalL), Sample: -1})
	}
	if len(rec.Annotations) != nRef {
		t.Fatalf("only %d calibration breaths to annotate, want %d", len(rec.Annotations), nRef)
	}
	return rec, b
}

// truthIn returns the simulator's median tidal volume (L) and minute
// ventilation (L/min, 60*sum(Vt)/sum(Ttot+pause), the definition resp uses)
// of the true breaths with onset in [lo, hi) that overlap no motion burst.
func truthIn(b *sim.BreathRecording, lo, hi float64) (vt, ve float64, n int) {
	var vs []float64
	var sv, st float64
	for _, tb := range b.Breaths {
		if tb.Onset >= lo && tb.Onset < hi && !tb.Motion {
			vs = append(vs, tb.TidalL)
			sv += tb.TidalL
			st += tb.EndExp - tb.Onset + tb.PauseS
		}
	}
	if len(vs) == 0 {
		return math.NaN(), math.NaN(), 0
	}
	sort.Float64s(vs)
	m := vs[len(vs)/2]
	if len(vs)%2 == 0 {
		m = (vs[len(vs)/2-1] + vs[len(vs)/2]) / 2
	}
	return m, 60 * sv / st, len(vs)
}

// TestBreathingVrefCalibration: twelve reference breaths of known volume in
// the annotations give a two-weight least-squares calibration (after Chadha
// et al. 1982, resp.FitWeights) whose weights, tidal volumes and minute
// ventilation match the simulator ground truth: weights within 5 %, vt_l
// within 10 % and ve_l_min within 10 % of the simulator's per-window values
// (tolerances our choice: the band rises carry drift, noise and a
// cardiogenic oscillation the simulator adds).
func TestBreathingVrefCalibration(t *testing.T) {
	rec, b := calibRecording(t, 12, false)
	cfg := Config{Families: []string{FamilyBreathing}, BreathCalibration: BreathCalibration{VrefAnnotations: true}, NoAnnotationLabels: true}
	cal, err := ResolveBreathCalibration(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	c := cal.Calibration
	wr, wa := b.TrueWeights(50)
	if !c.Litres || c.Method != "two-weight" || c.References != 12 || cal.VrefMatched != 12 || cal.VrefAnnotated != 12 {
		t.Fatalf("calibration %+v, want a two-weight litre fit on 12 breaths", cal)
	}
	if math.Abs(c.RibWeight-wr) > 0.05*wr || math.Abs(c.AbdWeight-wa) > 0.05*wa {
		t.Errorf("weights %.4f, %.4f L/AU; simulator ground truth %.4f, %.4f", c.RibWeight, c.AbdWeight, wr, wa)
	}
	if !(c.ResidualL < 0.05) {
		t.Errorf("fit residual %.3f L, want under 0.05 L", c.ResidualL)
	}
	if s := cal.String(); !strings.Contains(s, "two-weight") || !strings.Contains(s, "12 matched") {
		t.Errorf("account %q", s)
	}
	tab, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	vt, ve, reason := tab.Float("vt_l"), tab.Float("ve_l_min"), tab.Strings("breathing_reason")
	checked := 0
	for i, r := range tab.Rows {
		lo, hi := r.Offset-60, r.Offset
		if !(lo >= 110 && hi <= 330 || lo >= 400 && hi <= 600) {
			continue
		}
		wvt, wve, n := truthIn(b, lo, hi)
		if n < 5 {
			continue
		}
		if math.IsNaN(vt[i]) || math.Abs(vt[i]-wvt) > 0.1*wvt {
			t.Errorf("row %d (%.0f s): vt_l %.3f, simulator ground truth %.3f L (%s)", i, hi, vt[i], wvt, reason[i])
		}
		if math.IsNaN(ve[i]) || math.Abs(ve[i]-wve) > 0.1*wve {
			t.Errorf("row %d (%.0f s): ve_l_min %.2f, simulator ground truth %.2f L/min (%s)", i, hi, ve[i], wve, reason[i])
		}
		checked++
	}
	if checked < 10 {
		t.Fatalf("only %d rows checked", checked)
	}
}

// TestBreathingUncalibrated: without calibration the litre columns stay
// empty with a reason and the AU columns are filled (resp's rule: no litres
// without an absolute calibration, Sackner et al. 1989 relative weights are
// not litres either).
func TestBreathingUncalibrated(t *testing.T) {
	rec, _ := calibRecording(t, 3, false)
	for _, tc := range []struct {
		name string
		bc   BreathCalibration
		want string // in the reason of the litre columns
	}{
		{"none", BreathCalibration{}, "uncalibrated"},
		// Three reference breaths and no QDC interval: fewer than the ten a
		// two-weight fit needs (resp.MinTwoWeightRefs).
		{"too few references", BreathCalibration{VrefAnnotations: true}, "3 of 3 reference breaths matched, need 10"},
		// Known weights without Litres (an earlier relative calibration)
		// are applied, but the volumes remain arbitrary units.
		{"AU weights", BreathCalibration{Weights: &resp.Calibration{RibWeight: 0.6, AbdWeight: 1}}, "not in litres"},
	} {
		tab, err := Extract(rec, Config{Families: []string{FamilyBreathing}, BreathCalibration: tc.bc})
		if err != nil {
			t.Fatal(err)
		}
		aus := 0
		vl, va, why := tab.Float("ve_l_min"), tab.Float("ve_au_min"), tab.Strings("breathing_reason")
		for i := range tab.Rows {
			if !math.IsNaN(vl[i]) || !math.IsNaN(tab.Float("vt_l")[i]) {
				t.Fatalf("%s: row %d has litres %v without absolute calibration", tc.name, i, vl[i])
			}
			if !math.IsNaN(va[i]) {
				aus++
				if !strings.Contains(why[i], "ve_l_min") || !strings.Contains(why[i], tc.want) {
					t.Errorf("%s: row %d reason %q, want %q for the litre columns", tc.name, i, why[i], tc.want)
				}
			}
		}
		if aus < 10 {
			t.Errorf("%s: only %d rows with AU minute ventilation", tc.name, aus)
		}
	}
}

// TestBreathingQDC: QDC over a span of constant-volume breathing gives the
// rib-cage weight relative to the abdomen, exact for constant tidal volume
// (Sackner et al. 1989; methods reference 5.1), within 5 % of the
// simulator ground truth ratio (1/RibGain)/(1/AbdGain); the table then has
// AU columns only, and the QDC caveat in the reason.
func TestBreathingQDC(t *testing.T) {
	b, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 4, Segments: []sim.BreathSegment{
		{Label: "qdc", DurationS: 300, RatePerMin: 14, TidalL: 0.6, TidalCV: 0.001, RibShare: 0.4, RibShareSD: 0.08},
		{Label: "rest", DurationS: 200, TidalCV: 0.15},
	}})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "sim_qdc", Start: testStart, StartKnown: true, Channels: []recording.Channel{
		{Name: "rib", RateHz: b.RateHz, Samples: b.Rib, Role: recording.RoleRibCage},
		{Name: "abd", RateHz: b.RateHz, Samples: b.Abd, Role: recording.RoleAbdomen},
	}}
	cfg := Config{Families: []string{FamilyBreathing}, BreathCalibration: BreathCalibration{QDC: &window.Interval{Start: 10, End: 290}, QDCOptions: resp.QDCOptions{Selection: resp.SelectAll}}}
	cal, err := ResolveBreathCalibration(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	wr, wa := b.TrueWeights(100)
	if cal.Calibration.Method != "qdc" || cal.Calibration.Litres || cal.QDCBreaths < 50 {
		t.Fatalf("calibration %+v", cal)
	}
	if k, want := cal.Calibration.RibWeight/cal.Calibration.AbdWeight, wr/wa; math.Abs(k-want) > 0.05*want {
		t.Errorf("QDC K %.4f, simulator ground truth %.4f", k, want)
	}
	tab, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	au := 0
	for i := range tab.Rows {
		if v := tab.Float("ve_l_min")[i]; !math.IsNaN(v) {
			t.Fatalf("row %d: QDC gave litres %v", i, v)
		}
		if !math.IsNaN(tab.Float("ve_au_min")[i]) {
			au++
			if r := tab.Strings("breathing_reason")[i]; !strings.Contains(r, "QDC") || !strings.Contains(r, "posture-specific") {
				t.Errorf("row %d: reason %q lacks the QDC caveat", i, r)
			}
		}
	}
	if au < 10 {
		t.Errorf("only %d rows with AU values", au)
	}
}

// TestBreathingQDCPlusFewRefs: three reference breaths and a QDC ratio give
// litres through one volume factor (resp.FitVolume, least squares through
// the origin; common practice, methods reference 5.1): minute ventilation
// within 15 % of the simulator ground truth (our tolerance: the QDC ratio
// is not exact when volume varies, De Groote et al. 2001).
func TestBreathingQDCPlusFewRefs(t *testing.T) {
	rec, b := calibRecording(t, 3, false)
	cfg := Config{Families: []string{FamilyBreathing}, NoAnnotationLabels: true,
		BreathCalibration: BreathCalibration{VrefAnnotations: true, QDC: &window.Interval{Start: 100, End: 340}}}
	tab, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	cal, err := ResolveBreathCalibration(rec, cfg)
	if err != nil || cal.Calibration.Method != "qdc+volume" || !cal.Calibration.Litres {
		t.Fatalf("calibration %+v, %v", cal, err)
	}
	ve := tab.Float("ve_l_min")
	checked := 0
	for i, r := range tab.Rows {
		lo, hi := r.Offset-60, r.Offset
		if !(lo >= 110 && hi <= 330) {
			continue
		}
		_, wve, n := truthIn(b, lo, hi)
		if n < 5 {
			continue
		}
		if math.IsNaN(ve[i]) || math.Abs(ve[i]-wve) > 0.15*wve {
			t.Errorf("row %d: ve_l_min %.2f, simulator ground truth %.2f", i, ve[i], wve)
		}
		checked++
	}
	if checked < 5 {
		t.Fatalf("only %d rows checked", checked)
	}
}

// TestBreathingCalibratedStreamEqualsBatch: with reference-breath
// calibration, known weights, QDC plus references, a QDC span resolved only
// at Close, and an SpO2 channel, Stream rows equal
// Extract rows exactly for random chunkings (the house rule: one core).
func TestBreathingCalibratedStreamEqualsBatch(t *testing.T) {
	rec, b := calibRecording(t, 12, true)
	wr, wa := b.TrueWeights(0)
	for ci, bc := range []BreathCalibration{
		{VrefAnnotations: true},
		{Weights: &resp.Calibration{RibWeight: wr, AbdWeight: wa, Litres: true}},
		// QDC and the references together.
		{VrefAnnotations: true, QDC: &window.Interval{Start: 100, End: 340}},
		// A QDC span past the end: resolved at Close, relative only.
		{QDC: &window.Interval{Start: 100, End: 2000}},
	} {
		cfg := Config{Families: []string{FamilyBreathing}, BreathCalibration: bc}
		want, err := Extract(rec, cfg)
		if err != nil {
			t.Fatal(err)
		}
		if n := countFinite(want.Float("ve_l_min")); n < 10 && ci < 3 || n > 0 && ci == 3 {
			t.Fatalf("case %d: %d rows with litres", ci, n)
		}
		if n := countFinite(want.Float("ve_au_min")); n < 10 {
			t.Fatalf("case %d: only %d rows with AU", ci, n)
		}
		if n := countFinite(want.Float("n_hypopneas_desat3")); n < 10 {
			t.Fatalf("case %d: SpO2 not used (%d rows with the desaturation count)", ci, n)
		}
		for trial := range 2 {
			rng := rand.New(rand.NewPCG(uint64(trial), 9))
			got := streamRows(t, rec, cfg, rng, []float64{0.5, 40}[trial])
			rowsEqual(t, want.Rows, got)
		}
	}
}

// TestBreathingSpO2Desaturation: with the simulator's SpO2 channel (which
// dips 3.5-7 % after each event, simulator ground truth) the candidate
// events see the desaturation: n_hypopneas_desat3 is defined on every valid
// window and is empty, with a reason, without SpO2.
func TestBreathingSpO2Desaturation(t *testing.T) {
	rec, _ := calibRecording(t, 12, true)
	cfg := Config{Families: []string{FamilyBreathing}, BreathCalibration: BreathCalibration{VrefAnnotations: true}}
	with, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	rec.Channels = rec.Channels[:2]
	without, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	hw, hy, dw := with.Float("n_hypopneas"), without.Float("n_hypopneas_desat3"), with.Float("n_hypopneas_desat3")
	ap := with.Float("n_apneas")
	events, desat := 0.0, 0.0
	for i := range with.Rows {
		if !math.IsNaN(hy[i]) {
			t.Fatalf("row %d: desaturation count %v without SpO2", i, hy[i])
		}
		if !math.IsNaN(hw[i]) {
			events += hw[i] + ap[i]
			desat += dw[i]
			if math.IsNaN(dw[i]) || dw[i] > hw[i] {
				t.Errorf("row %d: %v desaturating of %v hypopneas", i, dw[i], hw[i])
			}
		}
	}
	if events == 0 {
		t.Fatalf("the simulated apnea was not found at all")
	}
	// The simulated central hypopnea (airflow at 45 %, a drop above the
	// AASM 30 %, Berry et al. 2012) is followed by a desaturation of at
	// least 3.5 % in the simulator's SpO2: rule 1A's criterion holds.
	if hyp := sum(hw); hyp == 0 || desat != hyp {
		t.Errorf("%v hypopnea window counts, %v with the simulated desaturation (want all)", hyp, desat)
	}
}

// TestBreathCalibrationConfig checks the configuration errors.
func TestBreathCalibrationConfig(t *testing.T) {
	rec, _ := calibRecording(t, 3, false)
	for _, bc := range []BreathCalibration{
		{Weights: &resp.Calibration{RibWeight: 1, AbdWeight: 1}, VrefAnnotations: true},
		{Weights: &resp.Calibration{}},
		{Weights: &resp.Calibration{RibWeight: math.NaN(), AbdWeight: 1}},
		{QDC: &window.Interval{Start: 50, End: 20}},
		{QDC: &window.Interval{Start: -1, End: 20}},
	} {
		if _, err := Extract(rec, Config{BreathCalibration: bc}); err == nil {
			t.Errorf("%+v: no error", bc)
		}
	}
	// A stream needs its calibration spans within MaxStreamCalibrationS.
	hdr := *rec
	if _, err := NewStream(&hdr, Config{BreathCalibration: BreathCalibration{QDC: &window.Interval{Start: 0, End: MaxStreamCalibrationS + 10}}}); err == nil {
		t.Error("stream accepted a calibration span past MaxStreamCalibrationS")
	}
}

func sum(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		if !math.IsNaN(v) {
			s += v
		}
	}
	return s
}

// TestVrefSpans checks the reference-annotation convention: "vref=<volume>
// L" or "mL", case and spaces free, with a positive duration.
func TestVrefSpans(t *testing.T) {
	anns := []recording.Annotation{
		{Time: 10, Duration: 4, Text: "vref=0.80 L"},
		{Time: 20, Duration: 4, Text: " VREF = 750 mL "},
		{Time: 30, Duration: 4, Code: "vref=1"},
		{Time: 40, Duration: 0, Text: "vref=0.5 L"},   // no span: unusable
		{Time: 50, Duration: 4, Text: "vref=-1 L"},    // not a volume: ignored
		{Time: 60, Duration: 4, Text: "vref=0 L"},     // zero: unusable
		{Time: 70, Duration: 4, Text: "vref=0.5 gal"}, // unknown unit: ignored
		{Time: 80, Duration: 4, Text: "rest"},
	}
	got, note := vrefSpans(anns, BreathCalibration{VrefAnnotations: true})
	want := []vrefSpan{{10, 14, 0.8}, {20, 24, 0.75}, {30, 34, 1}}
	if len(got) != len(want) {
		t.Fatalf("spans %v, want %v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("span %d: %v, want %v", i, got[i], want[i])
		}
	}
	if !strings.Contains(note, "2 reference annotations unusable") {
		t.Errorf("note %q", note)
	}
	if got, _ := vrefSpans(anns, BreathCalibration{}); got != nil {
		t.Errorf("spans without VrefAnnotations: %v", got)
	}
}

// ExampleResolveBreathCalibration calibrates simulated bands
// (internal/sim.BreathSimulate) from twelve reference breaths marked in the
// annotations, as a spirometer session would mark them.
func ExampleResolveBreathCalibration() {
	b, _ := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 21, Segments: []sim.BreathSegment{
		{Label: "calibration", DurationS: 120, RatePerMin: 10, TidalL: 0.8, TidalCV: 0.25, RibShareSD: 0.1},
		{Label: "quiet", DurationS: 120, RatePerMin: 14, TidalL: 0.5},
	}})
	rec := &recording.Recording{Name: "example", Channels: []recording.Channel{
		{Name: "rib", RateHz: 50, Samples: b.Rib, Role: recording.RoleRibCage},
		{Name: "abd", RateHz: 50, Samples: b.Abd, Role: recording.RoleAbdomen},
	}}
	for _, tb := range b.Breaths[1:13] {
		rec.Annotations = append(rec.Annotations, recording.Annotation{Time: tb.Onset, Duration: tb.EndExp - tb.Onset, Text: fmt.Sprintf("vref=%.2f L", tb.TidalL)})
	}
	cfg := Config{BreathCalibration: BreathCalibration{VrefAnnotations: true}}
	cal, err := ResolveBreathCalibration(rec, cfg)
	if err != nil {
		fmt.Println(err)
		return
	}
	c := cal.Calibration
	fmt.Println(c.Method, c.VolumeUnit(), c.References)
	// Output: two-weight L 12
}
