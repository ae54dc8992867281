package sim

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
)

// The accelerometer simulator: a chest-worn 3-axis sensor in the mounting of
// package motion (device +x toward the wearer's left, +y toward the head, +z
// out of the chest). A schedule of segments sets the posture (the gravity
// reaction, +1 g opposite to gravity) and the step cadence; every step adds
// an impact along the vertical with zero net area (no net change of
// velocity per step), a fore-aft rock at the step rate and a lateral sway at
// half of it; white noise is added last. The shapes are plausible demo
// choices, not a biomechanical model.

// AccelActivity is what the wearer does in a segment.
type AccelActivity int

// Activities of an accelerometer schedule.
const (
	AccelSitting  AccelActivity = iota // upright, reclined 10°, still
	AccelStanding                      // upright, leaning 3° forward, still
	AccelWalking                       // upright, leaning 5° forward, steps of 0.35 g
	AccelRunning                       // upright, leaning 8° forward, steps of 2 g
	AccelSupine                        // lying on the back, head raised 10°
	AccelProne                         // lying face down
	AccelLeft                          // lying on the left side
	AccelRight                         // lying on the right side
)

// String returns the activity label.
func (a AccelActivity) String() string {
	switch a {
	case AccelSitting:
		return "sitting"
	case AccelStanding:
		return "standing"
	case AccelWalking:
		return "walking"
	case AccelRunning:
		return "running"
	case AccelSupine:
		return "supine"
	case AccelProne:
		return "prone"
	case AccelLeft:
		return "left"
	case AccelRight:
		return "right"
	}
	return fmt.Sprintf("AccelActivity(%d)", int(a))
}

// Lying reports whether the activity is one of the lying postures.
func (a AccelActivity) Lying() bool { return a >= AccelSupine && a <= AccelRight }

// gravity returns the device-axis gravity reaction (x left, y up, z forward)
// for the activity, g. A forward lean by angle a gives forward = -sin a.
func (a AccelActivity) gravity() [3]float64 {
	deg := math.Pi / 180
	switch a {
	case AccelSitting:
		return [3]float64{0, math.Cos(10 * deg), math.Sin(10 * deg)}
	case AccelStanding:
		return [3]float64{0, math.Cos(3 * deg), -math.Sin(3 * deg)}
	case AccelWalking:
		return [3]float64{0, math.Cos(5 * deg), -math.Sin(5 * deg)}
	case AccelRunning:
		return [3]float64{0, math.Cos(8 * deg), -math.Sin(8 * deg)}
	case AccelSupine:
		return [3]float64{0, math.Sin(10 * deg), math.Cos(10 * deg)}
	case AccelProne:
		return [3]float64{0, 0, -1}
	case AccelLeft:
		return [3]float64{-1, 0, 0}
	case AccelRight:
		return [3]float64{1, 0, 0}
	}
	return [3]float64{0, 1, 0}
}

// stepAmp is the vertical impact peak of one step, g.
func (a AccelActivity) stepAmp() float64 {
	switch a {
	case AccelWalking:
		return 0.35
	case AccelRunning:
		return 2
	}
	return 0
}

// AccelSegment is one piece of an accelerometer schedule.
type AccelSegment struct {
	Activity  AccelActivity
	DurationS float64 // > 0
	// CadenceSPM is the step rate for walking and running, steps/min
	// (ignored otherwise; 0 means 110 walking, 165 running).
	CadenceSPM float64
}

// AccelConfig configures AccelSimulate. Zero values mean the defaults.
type AccelConfig struct {
	RateHz float64 // samples per second; 50 when zero
	Seed   uint64  // random seed; runs with equal seeds are identical
	// NoiseG is the SD of the white noise on each axis, g; 0.005 when zero,
	// negative for none.
	NoiseG float64
	// JitterFrac is the SD of step intervals relative to the cadence period;
	// 0.02 when zero, negative for none.
	JitterFrac float64
	// TransitionS is how long a change of posture takes, s; 2 when zero.
	TransitionS float64
}

// AccelSpan is the activity over [StartS, EndS), s from the start.
type AccelSpan struct {
	StartS, EndS float64
	Activity     AccelActivity
}

// AccelRecord is a simulated recording with its ground truth.
type AccelRecord struct {
	RateHz  float64
	X, Y, Z []float64   // device axes, g
	Steps   []float64   // true step (impact) times, s
	Spans   []AccelSpan // the schedule laid out in time
}

// ErrAccelSchedule reports an unusable schedule or configuration.
var ErrAccelSchedule = errors.New("sim: invalid accelerometer schedule")

// AccelSimulate renders a schedule. It is deterministic for a given seed.
func AccelSimulate(segs []AccelSegment, cfg AccelConfig) (*AccelRecord, error) {
	if cfg.RateHz == 0 {
		cfg.RateHz = 50
	}
	if cfg.NoiseG == 0 {
		cfg.NoiseG = 0.005
	}
	if cfg.JitterFrac == 0 {
		cfg.JitterFrac = 0.02
	}
	if cfg.TransitionS == 0 {
		cfg.TransitionS = 2
	}
	if !(cfg.RateHz > 0 && cfg.RateHz <= 10000) || !(cfg.TransitionS > 0) || math.IsNaN(cfg.NoiseG) || math.IsNaN(cfg.JitterFrac) {
		return nil, fmt.Errorf("sim: accel config %+v: %w", cfg, ErrAccelSchedule)
	}
	if len(segs) == 0 {
		return nil, fmt.Errorf("sim: empty accelerometer schedule: %w", ErrAccelSchedule)
	}
	rng := rand.New(rand.NewPCG(cfg.Seed, 0xacce1))
	rec := &AccelRecord{RateHz: cfg.RateHz}
	t := 0.0
	type stepEv struct{ t, amp, period float64 }
	var steps []stepEv
	for i, s := range segs {
		if !(s.DurationS > 0) || s.DurationS > 400*86400 || s.CadenceSPM < 0 || s.CadenceSPM > 400 {
			return nil, fmt.Errorf("sim: accel segment %d %+v: %w", i, s, ErrAccelSchedule)
		}
		rec.Spans = append(rec.Spans, AccelSpan{StartS: t, EndS: t + s.DurationS, Activity: s.Activity})
		if amp := s.Activity.stepAmp(); amp > 0 {
			cad := s.CadenceSPM
			if cad == 0 {
				cad = 110
				if s.Activity == AccelRunning {
					cad = 165
				}
			}
			period := 60 / cad
			// The first step lands half a period in, the last a period
			// before the segment ends, so steps never straddle segments.
			for ts := t + period/2; ts < t+s.DurationS-period; {
				steps = append(steps, stepEv{t: ts, amp: amp * (1 + 0.05*rng.NormFloat64()), period: period})
				ts += period * (1 + math.Max(-0.2, math.Min(0.2, jitter(rng, cfg.JitterFrac))))
			}
		}
		t += s.DurationS
	}
	n := int(math.Round(t * cfg.RateHz))
	rec.X, rec.Y, rec.Z = make([]float64, n), make([]float64, n), make([]float64, n)
	rec.Steps = make([]float64, len(steps))
	for k, s := range steps {
		rec.Steps[k] = s.t
	}
	si, sp := 0, 0
	for i := 0; i < n; i++ {
		ti := float64(i) / cfg.RateHz
		for sp+1 < len(rec.Spans) && ti >= rec.Spans[sp].EndS {
			sp++
		}
		g := rec.Spans[sp].Activity.gravity()
		// Blend into this posture from the previous one over TransitionS.
		if sp > 0 {
			if f := (ti - rec.Spans[sp].StartS) / cfg.TransitionS; f < 1 {
				p := rec.Spans[sp-1].Activity.gravity()
				g = slerpish(p, g, f)
			}
		}
		var v, fwd, lat float64 // vertical impact, fore-aft rock, lateral sway (g)
		for si < len(steps) && steps[si].t+1 < ti {
			si++
		}
		for k := si; k < len(steps) && steps[k].t-1 < ti; k++ {
			s := steps[k]
			d := ti - s.t
			// Zero-area impact: a sharp positive peak (SD 40 ms) and a broader
			// negative lobe (SD 120 ms, 120 ms later) of equal area.
			v += s.amp * (gauss(d, 0.04) - (0.04/0.12)*gauss(d-0.12, 0.12))
			if d >= 0 && d < s.period {
				ph := 2 * math.Pi * d / s.period
				fwd += 0.3 * s.amp * math.Sin(ph)
				sign := 1.0
				if k%2 == 1 {
					sign = -1
				}
				lat += 0.15 * s.amp * sign * math.Sin(ph/2)
			}
		}
		// Vertical is the gravity direction; fore-aft and lateral are the
		// body's forward and left axes (device z and x).
		a := [3]float64{g[0]*(1+v) + lat, g[1] * (1 + v), g[2]*(1+v) + fwd}
		if cfg.NoiseG > 0 {
			for k := range a {
				a[k] += cfg.NoiseG * rng.NormFloat64()
			}
		}
		rec.X[i], rec.Y[i], rec.Z[i] = a[0], a[1], a[2]
	}
	return rec, nil
}

func jitter(rng *rand.Rand, frac float64) float64 {
	if frac <= 0 {
		return 0
	}
	return frac * rng.NormFloat64()
}

func gauss(d, sd float64) float64 { return math.Exp(-0.5 * d * d / (sd * sd)) }

// slerpish interpolates between two unit vectors and renormalises to 1 g.
func slerpish(a, b [3]float64, f float64) [3]float64 {
	var c [3]float64
	for k := range c {
		c[k] = a[k] + f*(b[k]-a[k])
	}
	n := math.Sqrt(c[0]*c[0] + c[1]*c[1] + c[2]*c[2])
	if n < 1e-6 { // opposite postures: pass through the up axis
		return [3]float64{0, 1, 0}
	}
	for k := range c {
		c[k] /= n
	}
	return c
}

// ActivityAt returns the scheduled activity at t (s) and whether t is inside
// the recording.
func (r *AccelRecord) ActivityAt(t float64) (AccelActivity, bool) {
	for _, s := range r.Spans {
		if t >= s.StartS && t < s.EndS {
			return s.Activity, true
		}
	}
	return 0, false
}

// StepsIn counts the true steps in [start, end).
func (r *AccelRecord) StepsIn(start, end float64) int {
	n := 0
	for _, s := range r.Steps {
		if s >= start && s < end {
			n++
		}
	}
	return n
}

// AccelTrailDay is the demo's accelerometer schedule: about two hours of a
// trail runner's day (rest, a walk to the trail head, an easy run, hard
// repeats with walking recoveries, a cool-down, then a nap that rolls from
// the back to either side).
func AccelTrailDay() []AccelSegment {
	segs := []AccelSegment{
		{Activity: AccelSitting, DurationS: 600},
		{Activity: AccelStanding, DurationS: 180},
		{Activity: AccelWalking, DurationS: 600, CadenceSPM: 110},
		{Activity: AccelRunning, DurationS: 900, CadenceSPM: 164},
	}
	for k := 0; k < 4; k++ {
		segs = append(segs,
			AccelSegment{Activity: AccelRunning, DurationS: 180, CadenceSPM: 182},
			AccelSegment{Activity: AccelWalking, DurationS: 120, CadenceSPM: 116})
	}
	return append(segs,
		AccelSegment{Activity: AccelRunning, DurationS: 600, CadenceSPM: 156},
		AccelSegment{Activity: AccelWalking, DurationS: 300, CadenceSPM: 104},
		AccelSegment{Activity: AccelSitting, DurationS: 600},
		AccelSegment{Activity: AccelSupine, DurationS: 1200},
		AccelSegment{Activity: AccelLeft, DurationS: 600},
		AccelSegment{Activity: AccelRight, DurationS: 300},
		AccelSegment{Activity: AccelStanding, DurationS: 120},
	)
}
