package resp_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/resp"
)

// halfCosine renders a breathing sum of n breaths with inspiration ti and
// expiration te (s) and amplitude vt, split equally between the bands.
func halfCosine(fs, ti, te, vt float64, n int) (rib, abd []float64) {
	tt := ti + te
	total := int(float64(n) * tt * fs)
	rib = make([]float64, total)
	abd = make([]float64, total)
	for i := range rib {
		t := math.Mod(float64(i)/fs, tt)
		var w float64
		if t < ti {
			w = 0.5 * (1 - math.Cos(math.Pi*t/ti))
		} else {
			w = 0.5 * (1 + math.Cos(math.Pi*(t-ti)/te))
		}
		rib[i] = vt * w / 2
		abd[i] = vt * w / 2
	}
	return rib, abd
}

// inner drops the first two and the last breath (filter start-up, end).
func inner(b []resp.Breath) []resp.Breath {
	if len(b) < 4 {
		return nil
	}
	return b[2 : len(b)-1]
}

func TestSinusoidBreathing(t *testing.T) {
	// methods reference 5.2 check values (derived): sum = sin(2*pi*0.25 t)
	// gives 15 breaths/min, Ti = Te = 2 s, Ti/Ttot = 0.5; the trough-to-peak
	// volume of a unit sine is 2 AU (derived). Rates span the 10-500 Hz.
	for _, fs := range []float64{10, 25, 50, 200, 500} {
		n := int(120 * fs)
		rib := make([]float64, n)
		abd := make([]float64, n)
		for i := range rib {
			s := math.Sin(2 * math.Pi * 0.25 * float64(i) / fs)
			rib[i], abd[i] = 0.5*s, 0.5*s
		}
		r, err := resp.Detect(rib, abd, resp.Options{RateHz: fs})
		if err != nil {
			t.Fatal(err)
		}
		bs := inner(r.Breaths)
		if len(bs) < 25 {
			t.Fatalf("%v Hz: %d breaths in 120 s of 15/min", fs, len(r.Breaths))
		}
		for _, b := range bs {
			if math.Abs(b.RatePerMin-15) > 0.2 || math.Abs(b.TiS-2) > 0.05 || math.Abs(b.TeS-2) > 0.05 ||
				math.Abs(b.TiTtot-0.5) > 0.01 || math.Abs(b.VtAU-2) > 0.03 || !math.IsNaN(b.VtL) || b.Quality != 0 || b.Paradox {
				t.Fatalf("%v Hz: breath %+v; want 15/min, Ti = Te = 2 s, Vt = 2 AU (methods 5.2, derived)", fs, b)
			}
		}
		// Onset at the trough: sin(2 pi 0.25 t) has its troughs at t = 3 + 4k s (derived).
		if d := math.Mod(bs[0].Onset-3, 4); math.Min(math.Abs(d), 4-math.Abs(d)) > 0.05 {
			t.Errorf("%v Hz: onset %v s, want 3 + 4k s (derived)", fs, bs[0].Onset)
		}
	}
}

func TestAsymmetricBreathing(t *testing.T) {
	// methods reference 5.2 (derived): Ti = 1.6 s, Te = 2.4 s gives
	// Ti/Ttot = 0.40 and 15 breaths/min; Vt is the waveform amplitude.
	rib, abd := halfCosine(50, 1.6, 2.4, 0.5, 30)
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: 50, Calibration: resp.Calibration{RibWeight: 1, AbdWeight: 1, Litres: true}})
	if err != nil {
		t.Fatal(err)
	}
	bs := inner(r.Breaths)
	if len(bs) < 20 {
		t.Fatalf("%d breaths", len(r.Breaths))
	}
	for _, b := range bs {
		if math.Abs(b.TiTtot-0.40) > 0.015 || math.Abs(b.RatePerMin-15) > 0.2 || math.Abs(b.VtL-0.5) > 0.01 ||
			math.Abs(b.FlowLs-0.5/1.6) > 0.015 {
			t.Fatalf("breath %+v; want Ti/Ttot 0.40, 15/min, Vt 0.5 L, flow 0.3125 L/s (methods 5.2, derived)", b)
		}
	}
}

func TestStreamMatchesBatch(t *testing.T) {
	// House rule: streaming and batch share one core; any chunking must give
	// the same breaths, bit for bit. The input has apneas, motion, sighs, a
	// posture change and an invalid (NaN) stretch.
	segs := []sim.BreathSegment{
		{DurationS: 120, RatePerMin: 14, TidalL: 0.6, SighsPerMin: 0.5, MotionPerMin: 1},
		{Kind: sim.BreathObstructiveApnea, DurationS: 20},
		{DurationS: 60, RibGain: 1.2},
		{Kind: sim.BreathCentralApnea, DurationS: 15},
		{DurationS: 60, RatePerMin: 30, TidalL: 1.5},
	}
	rec, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 7, Segments: segs})
	if err != nil {
		t.Fatal(err)
	}
	for i := 3000; i < 3100; i++ {
		rec.Rib[i] = math.NaN()
	}
	opt := resp.Options{RateHz: 50}
	want, err := resp.Detect(rec.Rib, rec.Abd, opt)
	if err != nil {
		t.Fatal(err)
	}
	if len(want.Breaths) < 50 || len(want.Gaps) != 1 {
		t.Fatalf("batch: %d breaths, gaps %v", len(want.Breaths), want.Gaps)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 20; trial++ {
		s, err := resp.NewStream(opt)
		if err != nil {
			t.Fatal(err)
		}
		var got resp.Result
		for i := 0; i < len(rec.Rib); {
			n := 1 + rng.IntN(700)
			if trial == 0 {
				n = 1
			}
			j := min(i+n, len(rec.Rib))
			if err := s.Push(rec.Rib[i:j], rec.Abd[i:j]); err != nil {
				t.Fatal(err)
			}
			if rng.IntN(3) == 0 {
				got.Breaths, got.Pauses, got.Gaps = s.Drain(got.Breaths, got.Pauses, got.Gaps)
			}
			i = j
		}
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		got.Breaths, got.Pauses, got.Gaps = s.Drain(got.Breaths, got.Pauses, got.Gaps)
		got.Discarded = s.Discarded()
		got.Calibration = s.Calibration()
		if d := cmp.Diff(want, got, cmpopts.EquateNaNs(), cmpopts.EquateEmpty()); d != "" {
			t.Fatalf("trial %d: stream differs from batch (-batch +stream):\n%s", trial, d)
		}
		if err := s.Push(rec.Rib[:1], rec.Abd[:1]); !errors.Is(err, resp.ErrClosed) {
			t.Fatalf("push after close: %v", err)
		}
	}
}

func TestBadInput(t *testing.T) {
	// Bad input gives an error or a flagged result, never a panic (house rule).
	if _, err := resp.Detect(nil, nil, resp.Options{RateHz: 50}); !errors.Is(err, resp.ErrInput) {
		t.Errorf("empty: %v", err)
	}
	if _, err := resp.Detect([]float64{1, 2}, []float64{1}, resp.Options{RateHz: 50}); !errors.Is(err, resp.ErrInput) {
		t.Errorf("mismatched: %v", err)
	}
	for _, fs := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if _, err := resp.Detect([]float64{1}, []float64{1}, resp.Options{RateHz: fs}); !errors.Is(err, resp.ErrInput) {
			t.Errorf("rate %v: %v", fs, err)
		}
	}
	if _, err := resp.Detect([]float64{1}, []float64{1}, resp.Options{RateHz: 50, HysteresisFrac: math.NaN()}); !errors.Is(err, resp.ErrInput) {
		t.Errorf("NaN option accepted: %v", err)
	}
	if _, err := resp.Detect([]float64{1}, []float64{1}, resp.Options{RateHz: 50, Calibration: resp.Calibration{RibWeight: -1}}); !errors.Is(err, resp.ErrInput) {
		t.Errorf("negative weight accepted: %v", err)
	}
	// Flat line: no breaths, no gaps.
	flat := make([]float64, 5000)
	r, err := resp.Detect(flat, flat, resp.Options{RateHz: 50})
	if err != nil || len(r.Breaths) != 0 || len(r.Gaps) != 0 {
		t.Errorf("flat: %v, %d breaths, gaps %v", err, len(r.Breaths), r.Gaps)
	}
	// All NaN / Inf: one gap covering the record, no breaths.
	bad := make([]float64, 500)
	for i := range bad {
		bad[i] = math.NaN()
		if i%2 == 1 {
			bad[i] = math.Inf(-1)
		}
	}
	r, err = resp.Detect(bad, flat[:500], resp.Options{RateHz: 50})
	if err != nil || len(r.Breaths) != 0 || len(r.Gaps) != 1 || r.Gaps[0].Start != 0 || r.Gaps[0].End != 10 {
		t.Errorf("all invalid: %v, %d breaths, gaps %v", err, len(r.Breaths), r.Gaps)
	}
}

func TestClippingAndBandLoss(t *testing.T) {
	// Saturation: the abdominal band is clipped at 80 % of its peak for a
	// stretch of breaths; a flat (disconnected) rib band later. Both must be
	// flagged (house rule: flagged, never silently passed).
	rib, abd := halfCosine(50, 1.6, 2.4, 1, 40)
	for i := 20 * 50; i < 40*50; i++ {
		abd[i] = math.Min(abd[i], 0.4)
	}
	for i := 80 * 50; i < 100*50; i++ {
		rib[i] = 0.123
	}
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: 50})
	if err != nil {
		t.Fatal(err)
	}
	var clip, loss int
	for _, b := range r.Breaths {
		if b.Quality&resp.QualityClipping != 0 && b.Onset > 19 && b.EndExp < 42 {
			clip++
		}
		if b.Quality&resp.QualityBandLoss != 0 && b.Onset > 79 && b.EndExp < 102 {
			loss++
		}
		if b.Onset > 44 && b.EndExp < 78 && b.Quality != 0 {
			t.Errorf("clean breath flagged: %+v", b)
		}
	}
	if clip < 4 || loss < 4 {
		t.Errorf("clipped breaths flagged %d (want >= 4 of 5), band loss %d (want >= 4 of 5)", clip, loss)
	}
}

// cycleSpec is one synthetic breath: half-cosine inspiration over ti,
// expiration over te, amplitude vt, then a flat pause.
type cycleSpec struct{ ti, te, vt, pause float64 }

func renderCycles(fs float64, cs []cycleSpec) (rib, abd []float64, onsets []float64) {
	t0 := 0.0
	for _, c := range cs {
		onsets = append(onsets, t0)
		n := int(math.Round((c.ti + c.te + c.pause) * fs))
		for i := 0; i < n; i++ {
			t := float64(i) / fs
			var w float64
			switch {
			case t < c.ti:
				w = 0.5 * (1 - math.Cos(math.Pi*t/c.ti))
			case t < c.ti+c.te:
				w = 0.5 * (1 + math.Cos(math.Pi*(t-c.ti)/c.te))
			}
			rib = append(rib, 0.35*c.vt*w)
			abd = append(abd, 0.65*c.vt*w)
		}
		t0 += float64(n) / fs
	}
	return rib, abd, onsets
}

func TestIrregularShallowSighsPauses(t *testing.T) {
	// Irregular lengths and depths, shallow breaths (40 % of the usual),
	// a sigh (2.5 times, with a 5 s pause after it), a slow deep breath and
	// quick shallow ones: every breath found, timing to 0.1 s, volumes to
	// 3 %, the sigh flagged and the pause measured (construction, derived).
	var cs []cycleSpec
	for i := 0; i < 8; i++ {
		cs = append(cs, cycleSpec{1.5 + 0.1*float64(i%3), 2.4 + 0.3*float64(i%4), 0.5 + 0.05*float64(i%3), 0})
	}
	cs = append(cs,
		cycleSpec{1.3, 2.0, 0.2, 0}, cycleSpec{1.2, 1.9, 0.2, 0}, // shallow
		cycleSpec{2.5, 3.5, 1.25, 5},                             // sigh, then a pause
		cycleSpec{1.6, 2.6, 0.5, 0}, cycleSpec{3.0, 4.5, 0.8, 0}, // slow deep
		cycleSpec{0.9, 1.3, 0.3, 0}, cycleSpec{0.9, 1.2, 0.3, 0}, // quick shallow
	)
	for i := 0; i < 6; i++ {
		cs = append(cs, cycleSpec{1.6, 2.6, 0.5, 0})
	}
	rib, abd, onsets := renderCycles(50, cs)
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: 50})
	if err != nil {
		t.Fatal(err)
	}
	// The first breath has no trough before it and the last one no rise
	// after it: breaths 1 .. len-2 are expected.
	want := len(cs) - 2
	if len(r.Breaths) != want {
		for _, b := range r.Breaths {
			t.Logf("%+v", b)
		}
		t.Fatalf("%d breaths, want %d", len(r.Breaths), want)
	}
	for k, b := range r.Breaths {
		c := cs[k+1]
		// Next to a pause the ends are placed where the sum is within 1 % of
		// the breath's amplitude of the trough: for half-cosine flanks that
		// is 6.4 % of the flank early (derived), 0.22 s for the sigh's 3.5 s
		// expiration; 0.3 s is allowed there.
		tol := 0.1
		if c.pause > 0 || cs[k].pause > 0 {
			tol = 0.3
		}
		if math.Abs(b.Onset-onsets[k+1]) > tol || math.Abs(b.TiS-c.ti) > tol || math.Abs(b.TeS-c.te) > tol+0.05 || math.Abs(b.VtAU/c.vt-1) > 0.03 {
			t.Errorf("breath %d: onset %.2f Ti %.2f Te %.2f Vt %.3f; want %.2f, %.2f, %.2f, %.3f", k+1, b.Onset, b.TiS, b.TeS, b.VtAU, onsets[k+1], c.ti, c.te, c.vt)
		}
		if b.Sigh != (c.vt > 1) {
			t.Errorf("breath %d (Vt %.2f): sigh flag %v", k+1, c.vt, b.Sigh)
		}
		if c.pause > 0 && math.Abs(b.PauseS-c.pause) > 0.6 {
			t.Errorf("breath %d: pause %.2f s, want %.1f", k+1, b.PauseS, c.pause)
		}
		if c.pause == 0 && b.PauseS != 0 {
			t.Errorf("breath %d: pause %.2f s where there is none", k+1, b.PauseS)
		}
	}
}

func TestLongFlatThenBreathing(t *testing.T) {
	// Five minutes of a flat sum (longer than the 120 s buffer) before and
	// between breathing: detection starts cleanly after each (no stale
	// buffer reads), the flat time is reported as pause excursions, and the
	// breaths are all found (construction, derived).
	fs := 10.0
	var rib, abd []float64
	flat := func(s float64) {
		for i := 0; i < int(s*fs); i++ {
			rib, abd = append(rib, 0.001*math.Sin(float64(i))), append(abd, 0)
		}
	}
	breathe := func(n int) {
		r, a := halfCosine(fs, 1.6, 2.4, 1, n)
		rib, abd = append(rib, r...), append(abd, a...)
	}
	flat(300)
	breathe(20)
	flat(300)
	breathe(20)
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: fs})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Breaths) < 36 || len(r.Breaths) > 40 {
		t.Errorf("%d breaths, want 38-40 of the 40 drawn", len(r.Breaths))
	}
	var quiet float64
	for _, p := range r.Pauses {
		quiet += p.End - p.Start
	}
	if quiet < 250 {
		t.Errorf("%.0f s of pause excursions, want most of the 300 s flat stretch between the breathing", quiet)
	}
}
