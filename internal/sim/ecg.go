package sim

// ECG simulator after the dynamical model of P. E. McSharry, G. D. Clifford,
// L. Tarassenko, L. A. Smith, "A dynamical model for generating synthetic
// electrocardiogram signals", IEEE Trans Biomed Eng 50(3):289-294, 2003.
// In that model a point circles a unit limit cycle in the (x, y) plane at the
// angular velocity of the heart rate, and the ECG is the z coordinate, pushed
// by five Gaussian events P, Q, R, S, T at fixed phases and pulled back to a
// baseline z0 (their eq. 3):
//
//	dz/dt = -sum_i a_i dtheta_i exp(-dtheta_i^2 / (2 b_i^2)) - (z - z0).
//
// On the limit cycle the phase is known in closed form (it advances by 2 pi
// from one R-peak to the next), so we drive it directly from the beat times;
// each event's phase offset and width are converted to time offsets per beat
// so the QRS keeps a fixed width while the P and T waves move with sqrt(RR)
// (a Bazett-like scaling in the spirit of the paper's rate-dependent widths;
// our choice), and the event heights are given directly in mV, which is the
// same equation with a_i scaled by the angular velocity. The heights' ratios
// P:Q:R:S:T = 0.25:-0.17:1:-0.25:0.4 are a_i b_i^2 of the paper's Table 1
// (theta = -pi/3, -pi/12, 0, pi/12, pi/2; a = 1.2, -5, 30, -7.5, 0.75;
// b = 0.25, 0.1, 0.1, 0.1, 0.4; from memory), and the time offsets and widths
// at 60 beats/min are theta_i/(2 pi) s and b_i/(2 pi) s.
//
// The ground-truth R-peak time is the R event centre (phase 0); the sampled
// maximum sits within about 2 ms of it (the decay term and the unequal Q and
// S pull it slightly; measured in the package test).

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
)

// ECGBeat is one simulated beat.
type ECGBeat struct {
	TimeS float64 // R event time, s from the start
	Kind  byte    // 'N' normal, 'A' atrial premature, 'V' ventricular premature
	// Hidden is true when the beat falls in a lead-off gap (it happened but
	// the samples there are NaN).
	Hidden bool
}

// ECGInterval is a span [StartS, EndS) in seconds from the start.
type ECGInterval struct{ StartS, EndS float64 }

// ECGEctopic asks for a premature beat: the first beat due after AtS is
// replaced by a premature one of Kind 'A' or 'V'.
type ECGEctopic struct {
	AtS  float64
	Kind byte
}

// ECGConfig configures ECGSimulate. Zero values mean the documented defaults.
type ECGConfig struct {
	RateHz    float64 // sampling rate; 250 Hz when zero
	DurationS float64 // length; must be > 0
	// HeartRate returns the heart rate (beats/min) at time t; a constant
	// MeanHR when nil.
	HeartRate func(t float64) float64
	MeanHR    float64 // 60 beats/min when zero and HeartRate is nil
	// RSAFraction is the respiratory sinus arrhythmia depth: RR is scaled by
	// 1 + RSAFraction sin(2 pi BreathHz t). 0 means none.
	RSAFraction float64
	BreathHz    float64 // 0.25 Hz (15 breaths/min) when zero
	// JitterFraction is the SD of independent RR jitter as a fraction of RR.
	JitterFraction float64
	Ectopics       []ECGEctopic
	LeadOff        []ECGInterval // samples set to NaN
	AmplitudemV    float64       // R-wave height; 1 mV when zero
	NoisemV        float64       // SD of added white Gaussian noise
	// WandermV is the amplitude of a baseline wander at BreathHz (the z0 of
	// the model, as in the paper).
	WandermV float64
	Invert   bool   // flip the polarity
	Seed     uint64 // random seed (jitter and noise)
}

// ECGSignal is a simulated recording and its ground truth.
type ECGSignal struct {
	RateHz  float64
	Samples []float64 // mV; NaN inside lead-off gaps
	Beats   []ECGBeat
}

// ECGSimulate lays out beats from the heart-rate function, RSA, jitter and
// the requested ectopic beats, then synthesises the waveform.
func ECGSimulate(cfg ECGConfig) (ECGSignal, error) {
	if !(cfg.DurationS > 0) || cfg.DurationS > 14*86400 {
		return ECGSignal{}, fmt.Errorf("sim: ECG duration %v s outside (0, 14 days]", cfg.DurationS)
	}
	if cfg.MeanHR == 0 {
		cfg.MeanHR = 60
	}
	if cfg.BreathHz == 0 {
		cfg.BreathHz = 0.25
	}
	hr := cfg.HeartRate
	if hr == nil {
		m := cfg.MeanHR
		hr = func(float64) float64 { return m }
	}
	rng := rand.New(rand.NewPCG(cfg.Seed, 0xec6))
	ect := append([]ECGEctopic(nil), cfg.Ectopics...)
	sort.Slice(ect, func(i, j int) bool { return ect[i].AtS < ect[j].AtS })
	var beats []ECGBeat
	t := 0.4
	ei := 0
	for t < cfg.DurationS {
		h := hr(t)
		if !(h >= 20 && h <= 300) {
			return ECGSignal{}, fmt.Errorf("sim: heart rate %v beats/min at %v s outside 20..300", h, t)
		}
		rr := 60 / h * (1 + cfg.RSAFraction*math.Sin(2*math.Pi*cfg.BreathHz*t) + cfg.JitterFraction*rng.NormFloat64())
		if ei < len(ect) && t >= ect[ei].AtS && len(beats) > 0 {
			prev := beats[len(beats)-1].TimeS
			k := ect[ei].Kind
			ei++
			switch k {
			case 'V':
				// Premature at 65 % of RR, full compensatory pause.
				beats = append(beats, ECGBeat{TimeS: prev + 0.65*rr, Kind: 'V'})
				t = prev + 2*rr
				continue
			case 'A':
				// Premature at 70 % of RR, sinus node reset (no full pause).
				pt := prev + 0.7*rr
				beats = append(beats, ECGBeat{TimeS: pt, Kind: 'A'})
				t = pt + rr
				continue
			default:
				return ECGSignal{}, fmt.Errorf("sim: ectopic kind %q not A or V", k)
			}
		}
		beats = append(beats, ECGBeat{TimeS: t, Kind: 'N'})
		t += rr
	}
	for len(beats) > 0 && beats[len(beats)-1].TimeS >= cfg.DurationS {
		beats = beats[:len(beats)-1]
	}
	return ECGFromBeats(beats, cfg)
}

// ECGFromBeats synthesises the waveform for given beats (R times and kinds)
// with the rate, amplitude, noise, wander, polarity and lead-off gaps of cfg
// (its heart-rate fields are ignored). The beats are returned with Hidden set
// for those inside a gap.
func ECGFromBeats(beats []ECGBeat, cfg ECGConfig) (ECGSignal, error) {
	if cfg.RateHz == 0 {
		cfg.RateHz = 250
	}
	if cfg.AmplitudemV == 0 {
		cfg.AmplitudemV = 1
	}
	if cfg.BreathHz == 0 {
		cfg.BreathHz = 0.25
	}
	if !(cfg.RateHz >= 50 && cfg.RateHz <= 10000) {
		return ECGSignal{}, fmt.Errorf("sim: ECG rate %v Hz outside 50..10000", cfg.RateHz)
	}
	if !(cfg.DurationS > 0) || cfg.DurationS > 14*86400 {
		return ECGSignal{}, fmt.Errorf("sim: ECG duration %v s outside (0, 14 days]", cfg.DurationS)
	}
	for i := 1; i < len(beats); i++ {
		if !(beats[i].TimeS > beats[i-1].TimeS) {
			return ECGSignal{}, fmt.Errorf("sim: beat %d at %v s not after %v s", i, beats[i].TimeS, beats[i-1].TimeS)
		}
	}
	fs := cfg.RateHz
	n := int(math.Round(cfg.DurationS * fs))
	out := make([]float64, n)
	rng := rand.New(rand.NewPCG(cfg.Seed, 0x5e6a1))
	ev := ecgEvents(beats, cfg.AmplitudemV)
	sub := int(math.Ceil(1000 / fs)) // internal step <= 1 ms
	h := 1 / (fs * float64(sub))
	z0 := func(t float64) float64 { return cfg.WandermV * math.Sin(2*math.Pi*cfg.BreathHz*t) }
	wmax := 0.0
	for _, e := range ev {
		wmax = math.Max(wmax, e.w)
	}
	ei := 0
	// forcing is the Gaussian-derivative push of all events near t
	// (McSharry et al. 2003 eq. 3, time form).
	forcing := func(t float64) float64 {
		for ei < len(ev) && ev[ei].c+6*ev[ei].w < t {
			ei++
		}
		f := 0.0
		for j := ei; j < len(ev) && ev[j].c-6*wmax <= t+h; j++ {
			d := t - ev[j].c
			if math.Abs(d) > 6*ev[j].w {
				continue
			}
			w2 := ev[j].w * ev[j].w
			f += -ev[j].h * d / w2 * math.Exp(-d*d/(2*w2))
		}
		return f
	}
	deriv := func(t, z float64) float64 { return forcing(t) - (z - z0(t)) }
	z := z0(0)
	sign := 1.0
	if cfg.Invert {
		sign = -1
	}
	for i := 0; i < n; i++ {
		t := float64(i) / fs
		out[i] = sign * z
		for s := 0; s < sub; s++ {
			// Classical fourth-order Runge-Kutta.
			k1 := deriv(t, z)
			k2 := deriv(t+h/2, z+h/2*k1)
			k3 := deriv(t+h/2, z+h/2*k2)
			k4 := deriv(t+h, z+h*k3)
			z += h / 6 * (k1 + 2*k2 + 2*k3 + k4)
			t += h
		}
	}
	if cfg.NoisemV > 0 {
		for i := range out {
			out[i] += cfg.NoisemV * rng.NormFloat64()
		}
	}
	bs := append([]ECGBeat(nil), beats...)
	for _, g := range cfg.LeadOff {
		a := max(0, int(math.Ceil(g.StartS*fs)))
		b := min(n, int(math.Ceil(g.EndS*fs)))
		for i := a; i < b; i++ {
			out[i] = math.NaN()
		}
		for i := range bs {
			if bs[i].TimeS >= g.StartS && bs[i].TimeS < g.EndS {
				bs[i].Hidden = true
			}
		}
	}
	return ECGSignal{RateHz: fs, Samples: out, Beats: bs}, nil
}

type ecgEvent struct{ c, w, h float64 } // centre (s), width (s), height (mV)

// ecgEvents places the P, Q, R, S, T events of every beat, sorted by centre.
func ecgEvents(beats []ECGBeat, amp float64) []ecgEvent {
	var ev []ecgEvent
	for k, b := range beats {
		rr := 1.0
		switch {
		case k > 0:
			rr = b.TimeS - beats[k-1].TimeS
		case len(beats) > 1:
			rr = beats[1].TimeS - b.TimeS
		}
		if b.Kind == 'V' || b.Kind == 'A' {
			// A premature beat's repolarisation follows the sinus cycle
			// it interrupts, not its own short coupling interval.
			if k+1 < len(beats) {
				rr = math.Max(rr, beats[k+1].TimeS-b.TimeS)
			}
		}
		q := math.Sqrt(math.Max(0.2, math.Min(rr, 2)))
		t := b.TimeS
		switch b.Kind {
		case 'V':
			// Wide, tall QRS without a P wave and a discordant T wave
			// (textbook morphology of a ventricular premature beat; our
			// parameters).
			ev = append(ev,
				ecgEvent{t - 0.06, 0.03, -0.2 * amp},
				ecgEvent{t, 0.035, 1.4 * amp},
				ecgEvent{t + 0.07, 0.035, -0.5 * amp},
				ecgEvent{t + 0.3*q, 0.08 * q, -0.45 * amp})
		default:
			p := 0.25 * amp
			if b.Kind == 'A' {
				p = 0.12 * amp // ectopic atrial focus: a smaller, different P
			}
			ev = append(ev,
				ecgEvent{t - 0.167*q, 0.040 * q, p},
				ecgEvent{t - 0.042, 0.016, -0.17 * amp},
				ecgEvent{t, 0.016, amp},
				ecgEvent{t + 0.042, 0.016, -0.25 * amp},
				ecgEvent{t + 0.25*q, 0.064 * q, 0.4 * amp})
		}
	}
	sort.Slice(ev, func(i, j int) bool { return ev[i].c < ev[j].c })
	return ev
}
