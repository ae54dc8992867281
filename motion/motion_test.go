package motion_test

import (
	"errors"
	"math"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

var origin = time.Date(2026, 5, 16, 12, 0, 0, 0, time.UTC)

// gen returns n samples of device axes from f(t) in g.
func gen(rate float64, dur float64, f func(t float64) (x, y, z float64)) (x, y, z []float64) {
	n := int(math.Round(rate * dur))
	x, y, z = make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range x {
		x[i], y[i], z[i] = f(float64(i) / rate)
	}
	return
}

// oneEpoch summarises a whole signal as one window (AnchorStart, length =
// duration) and fails on anything but one valid epoch.
func oneEpoch(t *testing.T, x, y, z []float64, rate float64, opts motion.Options) motion.Epoch {
	t.Helper()
	d := time.Duration(float64(len(x)) / rate * float64(time.Second))
	ep, err := motion.Epochs(x, y, z, rate, origin, window.Spec{Length: d, Step: d, Anchor: window.AnchorStart}, opts)
	if err != nil {
		t.Fatal(err)
	}
	if len(ep) != 1 || !ep[0].Valid {
		t.Fatalf("got %d epochs (%+v), want one valid", len(ep), ep)
	}
	return ep[0]
}

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.5g, want %.5g ± %g", name, got, want, tol)
	}
}

// Analytic cases of methods reference section 6.2/6.3 (ENMO: van Hees et al.
// 2013; MAD: Vähä-Ypyä et al. 2015), derived from the definitions. The
// device's up axis is +y (default mount), so "vertical" is y.
func TestENMOAndMADAnalytic(t *testing.T) {
	const rate = 100
	static := func(g float64) func(float64) (float64, float64, float64) {
		return func(float64) (float64, float64, float64) { return 0, g, 0 }
	}
	w := 2 * math.Pi // 1 Hz, 60 whole cycles in 60 s
	cases := []struct {
		name       string
		f          func(float64) (float64, float64, float64)
		enmo, mad  float64
		tolE, tolM float64
	}{
		{"static 1 g", static(1), 0, 0, 1e-9, 1e-9},               // derived
		{"static 1.2 g", static(1.2), 200, 0, 1e-3, 1e-3},         // derived: 1000 (1.2 - 1)
		{"static 0.8 g truncated", static(0.8), 0, 0, 1e-9, 1e-3}, // derived: max(0, 0.8 - 1)
		{"vertical 0.1 g sine", func(t float64) (float64, float64, float64) { // derived: 0.1/pi g; MAD 2A/pi
			return 0, 1 + 0.1*math.Sin(w*t), 0
		}, 1000 * 0.1 / math.Pi, 1000 * 2 * 0.1 / math.Pi, 0.05, 0.1},
		{"horizontal 0.1 g sine", func(t float64) (float64, float64, float64) { // computed in methods 6.2: 2.495 mg
			return 0.1 * math.Sin(w*t), 1, 0
		}, 2.495, math.NaN(), 0.01, 0},
	}
	for _, c := range cases {
		x, y, z := gen(rate, 60, c.f)
		e := oneEpoch(t, x, y, z, rate, motion.Options{})
		near(t, c.name+" ENMO mg", e.ENMOmg, c.enmo, c.tolE)
		if !math.IsNaN(c.mad) {
			near(t, c.name+" MAD mg", e.MADmg, c.mad, c.tolM)
		}
	}
	// MAD is invariant to a constant offset of |a| (methods 6.3, derived).
	x, y, z := gen(rate, 60, func(t float64) (float64, float64, float64) { return 0, 1.3 + 0.1*math.Sin(w*t), 0 })
	near(t, "offset sine MAD mg", oneEpoch(t, x, y, z, rate, motion.Options{}).MADmg, 200/math.Pi, 0.1)
}

// A static device gives zero counts in every mode, zero steps and no
// artefact (methods 6.1 consequence of the band-pass and dead band; derived).
func TestStaticDeviceCountsZero(t *testing.T) {
	for _, rate := range []float64{10, 50, 100, 500} {
		x, y, z := gen(rate, 120, func(float64) (float64, float64, float64) { return 0.1, 0.97, 0.2 })
		e := oneEpoch(t, x, y, z, rate, motion.Options{})
		if e.CountsPIMmgs != 0 || e.CountsZC != 0 || e.CountsTATs != 0 || e.Steps != 0 || e.MADmg > 1e-3 || e.Artefact {
			t.Errorf("%v Hz static: %+v", rate, e)
		}
	}
}

// Counts of a sinusoid of |a| derived from the documented pipeline: the
// band-passed amplitude is A|H(f)| (Butterworth response of the count
// filter), rectified, dead band subtracted, integrated; two hysteresis
// crossings per cycle; time above threshold is the fraction of the cycle
// where A|H||sin| exceeds the threshold.
func TestCountsSinusoidDerived(t *testing.T) {
	// 1.0137 Hz rather than 1 Hz so that sample phases drift from cycle to
	// cycle and the threshold quantisation averages out.
	const rate, f, A, dur = 100.0, 1.0137, 0.3, 120.0
	x, y, z := gen(rate, dur, func(t float64) (float64, float64, float64) { return 0, 1 + A*math.Sin(2*math.Pi*f*t), 0 })
	ep, err := motion.Epochs(x, y, z, rate, origin, window.Spec{Length: time.Minute, Step: time.Minute, Anchor: window.AnchorStart}, motion.Options{})
	if err != nil {
		t.Fatal(err)
	}
	e := ep[1] // second minute: the filter's start-up has died away
	c, _ := dsp.ButterBandpass(2, 0.29, 1.66, rate)
	amp := A * cmplxAbs(c.Response(f, rate))
	const dead = 0.068
	// Mean over a cycle of max(0, amp|sin| - dead), by fine quadrature.
	var m, above float64
	const q = 100000
	for k := 0; k < q; k++ {
		v := amp * math.Abs(math.Sin(2*math.Pi*float64(k)/q))
		m += math.Max(0, v-dead)
		if v > dead {
			above++
		}
	}
	m /= q
	// Tolerances: the minute holds 60.8 cycles, so a partial cycle (under
	// 1 %) is not averaged.
	near(t, "PIM mg·s", e.CountsPIMmgs, 1000*m*60, 0.01*1000*m*60)
	near(t, "TAT s", e.CountsTATs, 60*above/q, 0.3)
	if e.Counts(motion.CountsPIM) != e.CountsPIMmgs || e.Counts(motion.CountsTAT) != e.CountsTATs || !math.IsNaN(e.Counts(motion.CountMode(9))) {
		t.Error("Epoch.Counts does not pick the mode's value")
	}
	if zc := e.Counts(motion.CountsZC); math.Abs(zc-2*f*60) > 1.5 {
		t.Errorf("zero crossings %d, want %.1f ± 1.5 (2 per cycle)", e.CountsZC, 2*f*60)
	}
	// Above the pass band counts fall: 4 Hz of the same amplitude gives far
	// fewer (methods 6.1: content above ~2 Hz strongly attenuated).
	x, y, z = gen(rate, dur, func(t float64) (float64, float64, float64) { return 0, 1 + A*math.Sin(2*math.Pi*4*t), 0 })
	ep4, _ := motion.Epochs(x, y, z, rate, origin, window.Spec{Length: time.Minute, Step: time.Minute, Anchor: window.AnchorStart}, motion.Options{})
	if ep4[1].CountsPIMmgs > 0.25*e.CountsPIMmgs {
		t.Errorf("4 Hz PIM %.1f not well below 1 Hz PIM %.1f", ep4[1].CountsPIMmgs, e.CountsPIMmgs)
	}
}

func cmplxAbs(c complex128) float64 { return math.Hypot(real(c), imag(c)) }

// Inclination checks of methods reference 6.4 (derived): g = (0,0,1) gives
// 0° from the reference axis and a 90° axis angle; (0, sin30°, cos30°) gives
// 30° and 60°; (1,0,0) gives 90° and 0°.
func TestInclinationAngles(t *testing.T) {
	s30, c30 := math.Sin(math.Pi/6), math.Cos(math.Pi/6)
	for _, c := range []struct{ gx, gy, gz, theta, zang float64 }{
		{0, 0, 1, 0, 90}, {0, s30, c30, 30, 60}, {1, 0, 0, 90, 0},
	} {
		// Inclination takes the reference (up) axis first.
		near(t, "theta", motion.Inclination(c.gz, c.gx, c.gy), c.theta, 1e-9)
		near(t, "z-angle", motion.AxisAngle(c.gx, c.gy, c.gz), c.zang, 1e-9)
	}
	if !math.IsNaN(motion.Inclination(0, 0, 0)) {
		t.Error("inclination of a zero vector should be NaN")
	}
}

// Postures of a chest-worn sensor from static gravity, default and a rotated
// mount (methods 6.4 rules, common practice; the expected classes follow
// from the documented axis convention).
func TestPostureClasses(t *testing.T) {
	s30, c30 := math.Sin(math.Pi/6), math.Cos(math.Pi/6)
	cases := []struct {
		name    string
		x, y, z float64 // device axes, default mount: x left, y up, z forward
		want    motion.Posture
		incl    float64
	}{
		{"standing", 0, 1, 0, motion.PostureUpright, 0},
		{"reclined 30°", 0, c30, s30, motion.PostureUpright, 30},
		{"supine", 0, 0, 1, motion.PostureSupine, 90},
		{"prone", 0, 0, -1, motion.PostureProne, 90},
		{"left side", -1, 0, 0, motion.PostureLeft, 90},
		{"right side", 1, 0, 0, motion.PostureRight, 90},
	}
	for _, c := range cases {
		x, y, z := gen(50, 30, func(float64) (float64, float64, float64) { return c.x, c.y, c.z })
		e := oneEpoch(t, x, y, z, 50, motion.Options{})
		if e.Posture != c.want {
			t.Errorf("%s: posture %v, want %v", c.name, e.Posture, c.want)
		}
		near(t, c.name+" inclination", e.InclinationDeg, c.incl, 1e-3)
		// The same body posture seen by a device mounted with up = -x, left =
		// +z, forward = -y: device reading (x, y, z) = (-up, -forward, left).
		up, left, fwd := c.y, c.x, c.z
		m := motion.Options{Mount: motion.Mount{Up: motion.NegX, Left: motion.PosZ, Forward: motion.NegY}}
		x, y, z = gen(50, 30, func(float64) (float64, float64, float64) { return -up, -fwd, left })
		if e2 := oneEpoch(t, x, y, z, 50, m); e2.Posture != c.want {
			t.Errorf("%s rotated mount: posture %v, want %v", c.name, e2.Posture, c.want)
		}
	}
	if err := (motion.Mount{Up: motion.PosX, Left: motion.NegX, Forward: motion.PosZ}).Validate(); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("mount reusing an axis: %v", err)
	}
}

// Step checks of methods reference 6.5 (derived): |a| = 1 + 0.3 sin(2π·2t)
// for 60 s gives 120 steps (±1) and 120 steps/min; 0.5 Hz at 0.02 g gives 0.
func TestStepsTwoHertz(t *testing.T) {
	for _, rate := range []float64{25, 50, 100, 200} {
		x, y, z := gen(rate, 60, func(t float64) (float64, float64, float64) { return 0, 1 + 0.3*math.Sin(2*math.Pi*2*t), 0 })
		e := oneEpoch(t, x, y, z, rate, motion.Options{})
		if e.Steps < 119 || e.Steps > 121 {
			t.Errorf("%v Hz: %d steps, want 120 ± 1", rate, e.Steps)
		}
		near(t, "cadence spm", e.CadenceSPM, 120, 0.5)
		x, y, z = gen(rate, 60, func(t float64) (float64, float64, float64) { return 0, 1 + 0.02*math.Sin(2*math.Pi*0.5*t), 0 })
		if e := oneEpoch(t, x, y, z, rate, motion.Options{}); e.Steps != 0 || !math.IsNaN(e.CadenceSPM) {
			t.Errorf("%v Hz slow sway: %d steps, cadence %v", rate, e.Steps, e.CadenceSPM)
		}
	}
}

// The minimum regular-run rule (methods 6.5, common practice): three bumps
// 0.5 s apart and isolated bumps 5 s apart are not steps; a fourth bump in
// rhythm makes a run and all four count.
func TestStepsMinimumRun(t *testing.T) {
	bumps := func(times []float64) func(float64) (float64, float64, float64) {
		return func(t float64) (float64, float64, float64) {
			v := 1.0
			for _, b := range times {
				v += 0.5 * math.Exp(-0.5*math.Pow((t-b)/0.05, 2))
			}
			return 0, v, 0
		}
	}
	for _, c := range []struct {
		name  string
		times []float64
		want  int
	}{
		{"three in rhythm", []float64{10, 10.5, 11}, 0},
		{"isolated", []float64{5, 10, 15, 20, 25}, 0},
		{"four in rhythm", []float64{10, 10.5, 11, 11.5}, 4},
	} {
		x, y, z := gen(50, 30, bumps(c.times))
		tr, err := motion.Derive(x, y, z, 50, motion.Options{})
		if err != nil {
			t.Fatal(err)
		}
		if len(tr.StepTimes) != c.want {
			t.Errorf("%s: %d steps %v, want %d", c.name, len(tr.StepTimes), tr.StepTimes, c.want)
		}
	}
}

// Units: the same motion in m/s^2 gives the same epoch as in g (9.80665 m/s^2
// per g, standard gravity).
func TestUnitsMS2(t *testing.T) {
	f := func(t float64) (float64, float64, float64) {
		return 0.1 * math.Sin(3*t), 1 + 0.3*math.Sin(2*math.Pi*1.8*t), 0.05
	}
	x, y, z := gen(50, 60, f)
	a := oneEpoch(t, x, y, z, 50, motion.Options{})
	for i := range x {
		x[i], y[i], z[i] = x[i]*motion.StandardGravity, y[i]*motion.StandardGravity, z[i]*motion.StandardGravity
	}
	b := oneEpoch(t, x, y, z, 50, motion.Options{Unit: motion.UnitMS2})
	near(t, "ENMO", b.ENMOmg, a.ENMOmg, 1e-3)
	near(t, "MAD", b.MADmg, a.MADmg, 1e-3)
	if a.Steps != b.Steps {
		t.Errorf("steps %d in g, %d in m/s2", a.Steps, b.Steps)
	}
	if u, err := motion.ParseUnit("m/s^2"); err != nil || u != motion.UnitMS2 {
		t.Errorf("ParseUnit m/s^2: %v %v", u, err)
	}
	if _, err := motion.ParseUnit("furlong"); !errors.Is(err, motion.ErrInput) {
		t.Errorf("ParseUnit furlong: %v", err)
	}
}

// Intensity classes at the MAD cut-points 91 and 414 mg (Vähä-Ypyä et al.,
// PLoS One 2015, hip-worn adults).
func TestIntensityCutPoints(t *testing.T) {
	for _, c := range []struct {
		mad  float64
		want motion.Intensity
	}{{0, motion.IntensityLight}, {90.9, motion.IntensityLight}, {91, motion.IntensityModerate},
		{413.9, motion.IntensityModerate}, {414, motion.IntensityVigorous}, {math.NaN(), motion.IntensityUnknown}} {
		if got := motion.ClassifyIntensity(c.mad, motion.IntensityOptions{}); got != c.want {
			t.Errorf("MAD %v mg: %v, want %v", c.mad, got, c.want)
		}
	}
	if got := motion.ClassifyIntensity(50, motion.IntensityOptions{ModerateMg: 30, VigorousMg: 300}); got != motion.IntensityModerate {
		t.Errorf("custom cut-points: %v", got)
	}
}

// Non-wear checks of methods reference 6.6 (derived): a stationary device
// with 1 mg white noise for 2 h is non-wear throughout under both rule
// variants; 50 mg-amplitude movement on two axes is wear.
func TestNonWear(t *testing.T) {
	const rate = 10.0
	rng := newRand(1)
	x, y, z := gen(rate, 7200, func(float64) (float64, float64, float64) {
		return 0.001 * rng.NormFloat64(), 1 + 0.001*rng.NormFloat64(), 0.001 * rng.NormFloat64()
	})
	for _, o := range []motion.NonWearOptions{{}, {WindowS: 1800, SDmg: 3, Either: true}} {
		iv, err := motion.NonWear(x, y, z, rate, motion.UnitG, o)
		if err != nil {
			t.Fatal(err)
		}
		if len(iv) != 1 || iv[0].Start != 0 || iv[0].End != 7200 {
			t.Errorf("%+v: non-wear %v, want [0, 7200)", o, iv)
		}
	}
	x, y, z = gen(rate, 7200, func(t float64) (float64, float64, float64) {
		return 0.05 * math.Sin(0.5*t), 1 + 0.05*math.Sin(0.7*t), 0
	})
	iv, err := motion.NonWear(x, y, z, rate, motion.UnitG, motion.NonWearOptions{})
	if err != nil || len(iv) != 0 {
		t.Errorf("moving device: non-wear %v (%v), want none", iv, err)
	}
}

// Auto-calibration (van Hees et al. 2014 principle: still-period means lie on
// the 1 g sphere): a device with known offset and scale errors, held still in
// 26 orientations, is recovered (derived: the fit is exact for noise-free
// points).
func TestCalibrateRecovers(t *testing.T) {
	const rate = 50.0
	off := [3]float64{0.03, -0.02, 0.015}
	sc := [3]float64{1.02, 0.97, 1.01}
	var x, y, z []float64
	for a := -1; a <= 1; a++ {
		for b := -1; b <= 1; b++ {
			for c := -1; c <= 1; c++ {
				if a == 0 && b == 0 && c == 0 {
					continue
				}
				n := math.Sqrt(float64(a*a + b*b + c*c))
				g := [3]float64{float64(a) / n, float64(b) / n, float64(c) / n}
				for i := 0; i < int(20*rate); i++ { // 20 s still
					// raw = (true - offset) / scale, so calibrated = offset + scale*raw.
					x = append(x, (g[0]-off[0])/sc[0])
					y = append(y, (g[1]-off[1])/sc[1])
					z = append(z, (g[2]-off[2])/sc[2])
				}
			}
		}
	}
	cal, err := motion.Calibrate(x, y, z, rate, motion.UnitG, motion.CalibrationOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 3; k++ {
		near(t, "offset", cal.OffsetG[k], off[k], 1e-4)
		near(t, "scale", cal.Scale[k], sc[k], 1e-4)
	}
	if cal.ErrorAfterMg > 0.1 || cal.ErrorBeforeMg < 5 {
		t.Errorf("sphere error before %.2f mg after %.3f mg", cal.ErrorBeforeMg, cal.ErrorAfterMg)
	}
	// Applying the calibration makes still ENMO vanish.
	e := oneEpoch(t, x[:1000], y[:1000], z[:1000], rate, motion.Options{Calibration: cal})
	near(t, "calibrated still ENMO", e.ENMOmg, 0, 0.1)

	// One orientation only: the fit is not determined.
	x1, y1, z1 := gen(rate, 600, func(float64) (float64, float64, float64) { return 0, 1, 0 })
	if _, err := motion.Calibrate(x1, y1, z1, rate, motion.UnitG, motion.CalibrationOptions{}); !errors.Is(err, motion.ErrCalibration) {
		t.Errorf("single orientation: %v, want ErrCalibration", err)
	}
}

// Bad input gives errors or flagged samples, never a panic.
func TestBadInput(t *testing.T) {
	x, y, z := gen(50, 60, func(t float64) (float64, float64, float64) { return 0, 1 + 0.3*math.Sin(4*math.Pi*t), 0 })
	if _, err := motion.Derive(x, y, z[:10], 50, motion.Options{}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("length mismatch: %v", err)
	}
	for _, r := range []float64{0, 5, 501, math.NaN(), math.Inf(1)} {
		if _, err := motion.Derive(x, y, z, r, motion.Options{}); !errors.Is(err, motion.ErrInput) {
			t.Errorf("rate %v: %v", r, err)
		}
	}
	if _, err := motion.Derive(x, y, z, 50, motion.Options{Steps: motion.StepOptions{HighHz: 40}}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("step band above Nyquist: %v", err)
	}
	if _, err := motion.Derive(x, y, z, 50, motion.Options{Counts: motion.CountOptions{DeadBandG: math.NaN()}}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("NaN dead band: %v", err)
	}
	// NaN and Inf runs are flagged, reported as gaps, and lower coverage.
	for i := 500; i < 1250; i++ {
		y[i] = math.NaN()
	}
	x[2000] = math.Inf(1)
	tr, err := motion.Derive(x, y, z, 50, motion.Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []window.Interval{{Start: 10, End: 25}, {Start: 40, End: 40.02}}
	if len(tr.Gaps) != 2 || tr.Gaps[0] != want[0] || math.Abs(tr.Gaps[1].End-want[1].End) > 1e-9 {
		t.Errorf("gaps %v, want %v", tr.Gaps, want)
	}
	ep, err := motion.EpochsOf(tr, origin, window.Spec{Length: 30 * time.Second, Step: 30 * time.Second, Anchor: window.AnchorStart}, nil, motion.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if ep[0].Valid || math.Abs(ep[0].Coverage-0.5) > 1e-9 || math.IsNaN(ep[0].ENMOmg) {
		t.Errorf("half-missing epoch: %+v", ep[0])
	}
	// An all-NaN window has NaN measures and a reason.
	for i := range y {
		y[i] = math.NaN()
	}
	ep, _ = motion.Epochs(x, y, z, 50, origin, window.Spec{Length: time.Minute, Step: time.Minute, Anchor: window.AnchorStart}, motion.Options{})
	if len(ep) != 1 || !math.IsNaN(ep[0].ENMOmg) || ep[0].Reason == "" || ep[0].Posture != motion.PostureUnknown {
		t.Errorf("all-NaN epoch: %+v", ep)
	}
	// Saturation at the sensor range flags the window.
	x, y, z = gen(50, 60, func(t float64) (float64, float64, float64) { return 0, 1 + 3*math.Sin(4*math.Pi*t), 0 })
	e := oneEpoch(t, x, y, z, 50, motion.Options{RangeG: 2})
	if e.Saturated == 0 || !e.Artefact {
		t.Errorf("saturated epoch: %+v", e)
	}
}

// Columns and Values line up, and every measure column carries a unit or a
// class label.
func TestColumnsValues(t *testing.T) {
	x, y, z := gen(50, 60, func(t float64) (float64, float64, float64) { return 0, 1 + 0.3*math.Sin(4*math.Pi*t), 0 })
	e := oneEpoch(t, x, y, z, 50, motion.Options{})
	if len(e.Values()) != len(motion.Columns()) {
		t.Fatalf("%d values for %d columns", len(e.Values()), len(motion.Columns()))
	}
}

// NonWear merges per-block statistics; it must decide exactly as the pure
// per-window NonWearWindow applied to every window of the engine's grid,
// for aligned (3600/900 s) and unaligned (1000/300 s) windows, with NaNs.
func TestNonWearBlocksMatchPureWindow(t *testing.T) {
	const rate = 10.0
	rng := newRand(4)
	var x, y, z []float64
	for i := 0; i < 6*3600*10; i++ {
		tt := float64(i) / rate
		amp := 0.001
		if int(tt/5000)%2 == 1 {
			amp = 0.02 // worn stretches
		}
		x, y, z = append(x, amp*rng.NormFloat64()), append(y, 1+amp*rng.NormFloat64()), append(z, amp*rng.NormFloat64())
		if i%9973 == 0 {
			y[i] = math.NaN()
		}
	}
	for _, o := range []motion.NonWearOptions{{}, {WindowS: 1000, StepS: 300}, {WindowS: 1800, SDmg: 3, Either: true}} {
		got, err := motion.NonWear(x, y, z, rate, motion.UnitG, o)
		if err != nil {
			t.Fatal(err)
		}
		w0, s0 := o.WindowS, o.StepS
		if w0 == 0 {
			w0 = 3600
		}
		if s0 == 0 {
			s0 = 900
		}
		g, _ := window.NewGrid(window.Spec{Length: time.Duration(w0 * 1e9), Step: time.Duration(s0 * 1e9), Anchor: window.AnchorStart}, time.Unix(0, 0))
		gaps := window.InvalidRuns(nil, y, rate, 0)
		seq, _ := g.Samples(rate, 0, len(x), gaps)
		var want []window.Interval
		for w := range seq {
			if w.Valid && motion.NonWearWindow(x[w.Lo:w.Hi], y[w.Lo:w.Hi], z[w.Lo:w.Hi], o) {
				want = append(want, window.Interval{Start: math.Max(0, w.Start), End: math.Min(w.End, float64(len(x))/rate)})
			}
		}
		want, _ = window.NormalizeGaps(want)
		if len(want) == 0 || len(got) != len(want) {
			t.Fatalf("%+v: got %v, want %v", o, got, want)
		}
		for i := range want {
			if got[i] != want[i] {
				t.Errorf("%+v: interval %d got %v want %v", o, i, got[i], want[i])
			}
		}
	}
}

// Bad input to the batch helpers gives errors that wrap the package's
// sentinels.
func TestHelpersBadInput(t *testing.T) {
	x, y, z := gen(10, 100, func(float64) (float64, float64, float64) { return 0, 1, 0 })
	if _, err := motion.NonWear(x, y, z[:5], 10, motion.UnitG, motion.NonWearOptions{}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("non-wear ragged: %v", err)
	}
	if _, err := motion.NonWear(x, y, z, 1, motion.UnitG, motion.NonWearOptions{}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("non-wear 1 Hz: %v", err)
	}
	if _, err := motion.NonWear(x, y, z, 10, motion.UnitG, motion.NonWearOptions{MinAxes: 4}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("non-wear 4 axes: %v", err)
	}
	if _, err := motion.Calibrate(x, y, z[:5], 10, motion.UnitG, motion.CalibrationOptions{}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("calibrate ragged: %v", err)
	}
	if _, err := motion.Calibrate(x, y, z, 10, motion.UnitG, motion.CalibrationOptions{MinPoints: 2}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("calibrate 2 points: %v", err)
	}
	bad := &motion.Calibration{Scale: [3]float64{1, 0, 1}}
	if _, err := motion.Derive(x, y, z, 10, motion.Options{Calibration: bad}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("zero calibration scale: %v", err)
	}
	if _, err := motion.Derive(x, y, z, 10, motion.Options{Intensity: motion.IntensityOptions{ModerateMg: 500}}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("moderate cut-point above vigorous: %v", err)
	}
	if _, err := motion.Derive(x, y, z, 10, motion.Options{Unit: motion.Unit(7)}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("unknown unit: %v", err)
	}
}

// A patch tilted 20° on the chest: with the mounting derived from a standing
// period (MountFromUpright), postures and inclinations come out as for an
// untilted device (derived: the rotation is exact); without it standing reads
// as 20° inclined.
func TestTiltedMountFromUpright(t *testing.T) {
	a := 20 * math.Pi / 180
	up := [3]float64{0, math.Cos(a), math.Sin(a)}   // body up in device axes
	fwd := [3]float64{0, -math.Sin(a), math.Cos(a)} // body forward in device axes
	left := [3]float64{up[1]*fwd[2] - up[2]*fwd[1], up[2]*fwd[0] - up[0]*fwd[2], up[0]*fwd[1] - up[1]*fwd[0]}
	dev := func(u, l, f float64) func(float64) (float64, float64, float64) {
		return func(float64) (float64, float64, float64) {
			return u*up[0] + l*left[0] + f*fwd[0], u*up[1] + l*left[1] + f*fwd[1], u*up[2] + l*left[2] + f*fwd[2]
		}
	}
	m, err := motion.MountFromUpright(up[0], up[1], up[2], motion.PosZ)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		u, l, f float64
		want    motion.Posture
		incl    float64
	}{{1, 0, 0, motion.PostureUpright, 0}, {0, 0, 1, motion.PostureSupine, 90}, {0, -1, 0, motion.PostureLeft, 90}, {0, 1, 0, motion.PostureRight, 90}, {0, 0, -1, motion.PostureProne, 90}} {
		x, y, z := gen(50, 30, dev(c.u, c.l, c.f))
		e := oneEpoch(t, x, y, z, 50, motion.Options{Mount: m})
		if e.Posture != c.want {
			t.Errorf("body (%v,%v,%v): posture %v, want %v", c.u, c.l, c.f, e.Posture, c.want)
		}
		near(t, "inclination", e.InclinationDeg, c.incl, 1e-3)
	}
	x, y, z := gen(50, 30, dev(1, 0, 0))
	near(t, "untilted mount on the tilted patch", oneEpoch(t, x, y, z, 50, motion.Options{}).InclinationDeg, 20, 1e-3)
	bad := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 2}}
	if err := (motion.Mount{Matrix: &bad}).Validate(); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("non-orthonormal matrix: %v", err)
	}
	refl := [3][3]float64{{0, 1, 0}, {-1, 0, 0}, {0, 0, 1}} // left = -(up × forward)
	if err := (motion.Mount{Matrix: &refl}).Validate(); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("reflection: %v", err)
	}
	if _, err := motion.MountFromUpright(0, 0, 1, motion.PosZ); !errors.Is(err, motion.ErrInput) {
		t.Errorf("forward along up: %v", err)
	}
}
