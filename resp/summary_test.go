package resp_test

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

var origin = time.Date(2026, 5, 16, 8, 0, 0, 0, time.UTC)

func grid(t *testing.T, length, step time.Duration) window.Grid {
	t.Helper()
	g, err := window.NewGrid(window.Spec{Length: length, Step: step, Anchor: window.AnchorStart}, origin)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

func TestSummaryColumns(t *testing.T) {
	cols := resp.SummaryColumns()
	seen := map[string]bool{}
	for _, c := range cols {
		if seen[c] {
			t.Errorf("duplicate column %q", c)
		}
		seen[c] = true
		if !strings.Contains(c, "_") {
			t.Errorf("column %q has no unit suffix", c)
		}
	}
	// The pipeline issue names ve_l_min for calibrated minute ventilation.
	for _, c := range []string{"ve_l_min", "vt_l", "vt_au", "resp_rate_per_min", "ti_ttot_ratio", "paradox_time_frac", "n_apneas", "n_hypopneas", "resp_coverage_frac", "resp_quality_frac", "n_sighs"} {
		if !seen[c] {
			t.Errorf("column %q missing", c)
		}
	}
	var s resp.Summary
	if len(s.Values()) != len(cols) || len(s.Reasons()) != len(cols) {
		t.Errorf("%d columns, %d values, %d reasons", len(cols), len(s.Values()), len(s.Reasons()))
	}
}

func TestSummaryAnalytic(t *testing.T) {
	// methods reference 5.2 (derived): Vt = 0.5 L at 12 breaths/min gives
	// VE = 6 L/min; Ti/Ttot = 0.4 for Ti = 2 s, Te = 3 s; mean inspiratory
	// flow Vt/Ti = 0.25 L/s.
	rib, abd := halfCosine(50, 2, 3, 0.5, 60)
	for _, cal := range []resp.Calibration{{RibWeight: 1, AbdWeight: 1, Litres: true}, {}} {
		r, err := resp.Detect(rib, abd, resp.Options{RateHz: 50, Calibration: cal})
		if err != nil {
			t.Fatal(err)
		}
		ws, err := resp.Windows(grid(t, time.Minute, 30*time.Second), r, nil, float64(len(rib))/50, resp.SummaryOptions{})
		if err != nil {
			t.Fatal(err)
		}
		checked := 0
		for _, w := range ws[2 : len(ws)-2] {
			get := func(c string) float64 { v, _ := w.Value(c); return v }
			if math.Abs(get("resp_rate_per_min")-12) > 0.05 || math.Abs(get("vt_au")-0.5) > 0.01 ||
				math.Abs(get("ve_au_min")-6) > 0.1 || math.Abs(get("ti_ttot_ratio")-0.4) > 0.01 ||
				math.Abs(get("insp_flow_au_s")-0.25) > 0.01 || get("resp_quality_frac") != 1 || get("resp_coverage_frac") != 1 ||
				get("n_apneas") != 0 || get("paradox_time_frac") != 0 {
				t.Fatalf("window %v: %v (methods 5.2, derived)", w.Window.Start, w.Values())
			}
			if cal.Litres {
				if math.Abs(get("ve_l_min")-6) > 0.1 || math.Abs(get("vt_l")-0.5) > 0.01 || w.Reason("ve_l_min") != "" {
					t.Fatalf("calibrated window: ve_l_min %v vt_l %v", get("ve_l_min"), get("vt_l"))
				}
			} else if !math.IsNaN(get("ve_l_min")) || !strings.Contains(w.Reason("vt_l"), "uncalibrated") {
				t.Fatalf("uncalibrated window must not report litres: ve_l_min %v, reason %q", get("ve_l_min"), w.Reason("vt_l"))
			}
			checked++
		}
		if checked < 5 {
			t.Fatalf("%d windows checked", checked)
		}
	}
}

func TestSummaryInvalidWindows(t *testing.T) {
	// A gap makes windows invalid: NaN values with the engine's reason; too
	// few breaths gives NaN with a count reason; never zero for undefined.
	rib, abd := halfCosine(50, 2, 3, 0.5, 40)
	for i := 60 * 50; i < 125*50; i++ {
		rib[i] = math.NaN()
	}
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: 50})
	if err != nil {
		t.Fatal(err)
	}
	ws, err := resp.Windows(grid(t, time.Minute, 30*time.Second), r, nil, float64(len(rib))/50, resp.SummaryOptions{})
	if err != nil {
		t.Fatal(err)
	}
	bad := 0
	for _, w := range ws {
		if w.Window.Start >= 60 && w.Window.End <= 125 {
			bad++
			v, _ := w.Value("vt_au")
			if !math.IsNaN(v) || !strings.Contains(w.Reason("vt_au"), "invalid") || w.Window.Valid {
				t.Errorf("window in gap: vt_au %v reason %q", v, w.Reason("vt_au"))
			}
			if c, _ := w.Value("resp_coverage_frac"); c != 0 {
				t.Errorf("coverage in gap %v", c)
			}
		}
	}
	if bad == 0 {
		t.Fatal("no window inside the gap")
	}
	s := resp.Summarize(window.Window{Valid: true, Coverage: 1, End: 60}, r.Breaths[:2], nil, resp.SummaryOptions{})
	if v, _ := s.Value("resp_rate_per_min"); !math.IsNaN(v) || !strings.Contains(s.Reason("resp_rate_per_min"), "need 3") {
		t.Errorf("two breaths: rate %v reason %q", v, s.Reason("resp_rate_per_min"))
	}
}

func TestWindowStreamMatchesBatch(t *testing.T) {
	// Streaming end to end: band chunks into resp.Stream, breaths into the
	// window engine's event stream, Summarize on each ready window; the
	// summaries equal resp.Windows over the batch result (house rule).
	rec, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 25, Seed: 5, Segments: sleepSchedule()[:6]})
	if err != nil {
		t.Fatal(err)
	}
	opt := resp.Options{RateHz: 25}
	r, err := resp.Detect(rec.Rib, rec.Abd, opt)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := resp.DetectEvents(r, resp.EventOptions{})
	if err != nil || len(ev) == 0 {
		t.Fatalf("events %v, %v", ev, err)
	}
	g := grid(t, time.Minute, 30*time.Second)
	want, err := resp.Windows(g, r, ev, rec.DurationS(), resp.SummaryOptions{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 5; trial++ {
		s, _ := resp.NewStream(opt)
		ws, err := window.NewEventStream(g, func(b resp.Breath) float64 { return math.Max(0, b.Onset) })
		if err != nil {
			t.Fatal(err)
		}
		var got []resp.Summary
		var bs []resp.Breath
		drain := func() {
			for w, items := range ws.Ready() {
				got = append(got, resp.Summarize(w, items, ev, resp.SummaryOptions{}))
			}
		}
		for i := 0; i < len(rec.Rib); {
			j := min(len(rec.Rib), i+1+rng.IntN(2000))
			_ = s.Push(rec.Rib[i:j], rec.Abd[i:j])
			bs, _, _ = s.Drain(bs[:0], nil, nil)
			if err := ws.Push(bs...); err != nil {
				t.Fatal(err)
			}
			drain()
			i = j
		}
		_ = s.Close()
		bs, _, _ = s.Drain(bs[:0], nil, nil)
		if err := ws.Push(bs...); err != nil {
			t.Fatal(err)
		}
		if err := ws.Advance(rec.DurationS()); err != nil {
			t.Fatal(err)
		}
		_ = ws.Close()
		drain()
		if d := cmp.Diff(want, got, cmpopts.EquateNaNs(), cmp.AllowUnexported(resp.Summary{})); d != "" {
			t.Fatalf("trial %d: streamed windows differ (-batch +stream):\n%s", trial, d)
		}
	}
}

// TestSummaryDesaturatingHypopneas: n_hypopneas_desat3 counts the
// hypopneas meeting the >= 3 % desaturation criterion of AASM rule 1A
// (Berry et al. 2012) when events were scored with SpO2, and is NaN with a
// reason without it.
func TestSummaryDesaturatingHypopneas(t *testing.T) {
	w := window.Window{Seq: 0, Start: 0, End: 60, Valid: true, Coverage: 1}
	ev := []resp.Event{
		{Kind: resp.EventHypopnea, Start: 5, End: 20, DesatPct: 4, Rule1A: true},
		{Kind: resp.EventHypopnea, Start: 30, End: 45, DesatPct: 1},
		{Kind: resp.EventApnea, Start: 50, End: 65, DesatPct: 6},
	}
	s := resp.Summarize(w, nil, ev, resp.SummaryOptions{SpO2: true})
	if v, _ := s.Value("n_hypopneas_desat3"); v != 1 {
		t.Errorf("with SpO2: %v desaturating hypopneas, want 1 (AASM rule 1A, Berry et al. 2012)", v)
	}
	if v, _ := s.Value("n_hypopneas"); v != 2 {
		t.Errorf("%v hypopneas, want 2", v)
	}
	s = resp.Summarize(w, nil, ev, resp.SummaryOptions{})
	if v, _ := s.Value("n_hypopneas_desat3"); !math.IsNaN(v) || !strings.Contains(s.Reason("n_hypopneas_desat3"), "SpO2") {
		t.Errorf("without SpO2: %v (%q)", v, s.Reason("n_hypopneas_desat3"))
	}
}
