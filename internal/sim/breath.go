package sim

// Two-band respiratory inductance simulator. A schedule of segments (quiet
// breathing, exercise, sleep with apneas) is laid out as breath cycles with
// known timing and volume, and the cycles are rendered into rib-cage and
// abdominal band signals through the two-compartment model: the lung volume
// change is split between the rib cage and the abdomen (RibShare), and each
// band reads its compartment through its own gain (arbitrary units per
// litre), so the true calibration weights are 1/gain. Obstructed efforts move
// the two compartments in antiphase with no change of lung volume; central
// apneas move neither. Drift, white noise, a small cardiogenic oscillation
// and motion bursts are added on top.
//
// The physiology is plausible demo and test data (common practice, from
// memory), not an oracle: the tests score detectors against the ground truth
// this file returns, never against the physiology itself.

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// BreathKind says what a schedule segment does.
type BreathKind int

// Segment kinds.
const (
	BreathNormal              BreathKind = iota // breathing at the segment's rate and depth
	BreathObstructiveApnea                      // no airflow; effort continues, bands in antiphase
	BreathCentralApnea                          // no airflow and no effort: both bands flat
	BreathObstructiveHypopnea                   // airflow reduced to HypopneaFrac with paradoxical effort
	BreathCentralHypopnea                       // airflow and effort reduced together, bands in phase
)

// String names the kind.
func (k BreathKind) String() string {
	switch k {
	case BreathNormal:
		return "normal"
	case BreathObstructiveApnea:
		return "obstructive apnea"
	case BreathCentralApnea:
		return "central apnea"
	case BreathObstructiveHypopnea:
		return "obstructive hypopnea"
	case BreathCentralHypopnea:
		return "central hypopnea"
	}
	return fmt.Sprintf("BreathKind(%d)", int(k))
}

// IsApnea reports whether the kind is an apnea.
func (k BreathKind) IsApnea() bool { return k == BreathObstructiveApnea || k == BreathCentralApnea }

// IsEvent reports whether the kind is an apnea or a hypopnea.
func (k BreathKind) IsEvent() bool { return k != BreathNormal }

// BreathSegment is one piece of a schedule. Zero values inherit the previous
// segment's value (the first segment's zero values take the defaults noted),
// so event segments need only Kind and DurationS.
type BreathSegment struct {
	Label      string
	Kind       BreathKind
	DurationS  float64 // required, > 0
	RatePerMin float64 // mean breathing rate; 15 by default
	TidalL     float64 // mean tidal volume, L; 0.5 by default
	TiTtot     float64 // duty cycle; 0.42 by default
	RateCV     float64 // breath-to-breath CV of the cycle length; 0.1 by default
	TidalCV    float64 // breath-to-breath CV of the volume; 0.12 by default
	// RibShare is the fraction of the volume change taken by the rib cage
	// (posture: about 0.4 upright, 0.3 supine, common practice); 0.4 by default.
	RibShare float64
	// RibShareSD is the breath-to-breath SD of RibShare (natural breathing
	// shifts between rib cage and abdomen); 0.05 by default, negative for none.
	RibShareSD float64
	// RibGain and AbdGain are the band gains in AU per litre of their
	// compartment; they change with posture as the bands sit differently.
	// Defaults 1.6 and 0.9.
	RibGain, AbdGain float64
	SighsPerMin      float64 // sigh rate (sigh = 2.5 times the volume, then a 2 s pause); 0 by default and not inherited
	MotionPerMin     float64 // motion-burst rate (2-6 s bursts); 0 by default and not inherited
	// HypopneaFrac is the airflow left in a hypopnea; 0.45 by default.
	HypopneaFrac float64
}

// BreathConfig drives BreathSimulate.
type BreathConfig struct {
	RateHz   float64 // sampling rate, Hz; required
	Seed     uint64
	Segments []BreathSegment
	NoiseAU  float64 // white-noise SD on each band (AU); 0.004 when zero, negative for none
	DriftAU  float64 // amplitude of the slow baseline drift on each band (AU); 0.1 when zero, negative for none
	// CardiacL is the cardiogenic volume oscillation (L peak-to-peak at
	// 1.1 Hz); 0.01 when zero, negative for none.
	CardiacL float64
	// SpO2 adds a 1 Hz oxygen-saturation channel (percent) that desaturates
	// after apneas and hypopneas.
	SpO2 bool
	// RibOff and AbdOff are spans (s) in which that band is lost: its
	// samples are NaN, as a reader delivers a disconnected band.
	RibOff, AbdOff []BreathSpan
}

// BreathCycle is one breath (or breathing effort) to render.
type BreathCycle struct {
	OnsetS, EndInspS, EndExpS float64 // s
	PauseS                    float64 // flat pause after EndExpS, s
	TidalL                    float64 // airflow volume, L (0 for an effort without airflow)
	// ParadoxL is an effort moving the compartments in antiphase without
	// airflow: the rib cage loses what the abdomen gains (L).
	ParadoxL         float64
	RibShare         float64 // share of TidalL on the rib cage
	RibGain, AbdGain float64 // band gains, AU/L
}

// BreathTruth is one true breath with airflow.
type BreathTruth struct {
	Onset, EndInsp, EndExp float64 // s
	PauseS                 float64 // pause after EndExp, s
	TidalL                 float64
	Sigh                   bool
	Motion                 bool       // overlaps a motion burst
	Kind                   BreathKind // segment kind it belongs to (normal or a hypopnea)
}

// BreathEvent is a true apnea or hypopnea.
type BreathEvent struct {
	Kind       BreathKind
	Start, End float64 // s
}

// BreathSpan is a time span [Start, End) in seconds.
type BreathSpan struct{ Start, End float64 }

// BreathRecording is a simulated two-band recording and its ground truth.
type BreathRecording struct {
	RateHz   float64
	Rib, Abd []float64 // band signals, AU
	Cycles   []BreathCycle
	Breaths  []BreathTruth
	Events   []BreathEvent
	Motion   []BreathSpan
	// SpO2 is the oxygen saturation (percent) at 1 Hz when BreathConfig.SpO2.
	SpO2 []float64
	// Segments are the schedule with defaults and inheritance resolved, and
	// SegmentStart their start times (s).
	Segments     []BreathSegment
	SegmentStart []float64
}

// TrueWeights returns the true calibration weights (L per AU) of the
// segment containing t: 1/RibGain and 1/AbdGain.
func (r *BreathRecording) TrueWeights(t float64) (rib, abd float64) {
	i := 0
	for i+1 < len(r.SegmentStart) && r.SegmentStart[i+1] <= t {
		i++
	}
	s := r.Segments[i]
	return 1 / s.RibGain, 1 / s.AbdGain
}

// DurationS is the recording length in seconds.
func (r *BreathRecording) DurationS() float64 { return float64(len(r.Rib)) / r.RateHz }

func breathResolve(in []BreathSegment) ([]BreathSegment, error) {
	if len(in) == 0 {
		return nil, fmt.Errorf("sim: breath schedule is empty")
	}
	prev := BreathSegment{RatePerMin: 15, TidalL: 0.5, TiTtot: 0.42, RateCV: 0.1, TidalCV: 0.12, RibShare: 0.4, RibShareSD: 0.05, RibGain: 1.6, AbdGain: 0.9, HypopneaFrac: 0.45}
	out := make([]BreathSegment, len(in))
	for i, s := range in {
		if !(s.DurationS > 0) || math.IsInf(s.DurationS, 0) || s.DurationS > 30*86400 {
			return nil, fmt.Errorf("sim: breath segment %d: duration %v s", i, s.DurationS)
		}
		inh := func(v *float64, p float64) {
			if *v == 0 {
				*v = p
			}
		}
		inh(&s.RatePerMin, prev.RatePerMin)
		inh(&s.TidalL, prev.TidalL)
		inh(&s.TiTtot, prev.TiTtot)
		inh(&s.RateCV, prev.RateCV)
		inh(&s.TidalCV, prev.TidalCV)
		inh(&s.RibShare, prev.RibShare)
		inh(&s.RibShareSD, prev.RibShareSD)
		inh(&s.RibGain, prev.RibGain)
		inh(&s.AbdGain, prev.AbdGain)
		inh(&s.HypopneaFrac, prev.HypopneaFrac)
		switch {
		case !(s.RatePerMin >= 2 && s.RatePerMin <= 80), !(s.TidalL > 0 && s.TidalL <= 6),
			!(s.TiTtot > 0.1 && s.TiTtot < 0.9), !(s.RibShare >= 0 && s.RibShare <= 1),
			!(s.RibGain > 0), !(s.AbdGain > 0), s.RateCV < 0 || s.RateCV > 0.5, s.TidalCV < 0 || s.TidalCV > 0.5,
			!(s.HypopneaFrac > 0 && s.HypopneaFrac < 1), s.SighsPerMin < 0, s.MotionPerMin < 0:
			return nil, fmt.Errorf("sim: breath segment %d (%s): implausible parameters %+v", i, s.Label, s)
		}
		out[i] = s
		prev = s
	}
	return out, nil
}

// BreathSimulate lays out the schedule's breaths and renders both bands. The
// same config gives identical output. Event segments begin and end on breath
// boundaries; an apnea segment is one stretch without airflow (obstructive:
// efforts at the segment rate; central: flat), and the first two breaths
// after any event are recovery breaths of 1.6 times the volume.
func BreathSimulate(cfg BreathConfig) (*BreathRecording, error) {
	if !(cfg.RateHz >= 1 && cfg.RateHz <= 2000) {
		return nil, fmt.Errorf("sim: breath sampling rate %v Hz", cfg.RateHz)
	}
	segs, err := breathResolve(cfg.Segments)
	if err != nil {
		return nil, err
	}
	rng := rand.New(rand.NewPCG(cfg.Seed, 0xb4ea7b))
	rec := &BreathRecording{RateHz: cfg.RateHz, Segments: segs}
	t := 0.0
	recovery := 0
	for si, s := range segs {
		rec.SegmentStart = append(rec.SegmentStart, t)
		end := t + s.DurationS
		if s.Kind.IsEvent() {
			rec.Events = append(rec.Events, BreathEvent{Kind: s.Kind, Start: t, End: end})
			recovery = 2
		}
		if s.Kind == BreathCentralApnea {
			rec.Cycles = append(rec.Cycles, BreathCycle{OnsetS: t, EndInspS: t, EndExpS: t, PauseS: end - t, RibShare: s.RibShare, RibGain: s.RibGain, AbdGain: s.AbdGain})
			t = end
			continue
		}
		for t < end-1e-9 {
			ttot := 60 / s.RatePerMin * math.Exp(s.RateCV*breathNorm(rng))
			vt := s.TidalL * math.Exp(s.TidalCV*breathNorm(rng))
			duty := s.TiTtot * (1 + 0.05*breathNorm(rng))
			share := s.RibShare
			if s.RibShareSD > 0 {
				share = math.Max(0.05, math.Min(0.95, share+s.RibShareSD*breathNorm(rng)))
			}
			c := BreathCycle{OnsetS: t, RibShare: share, RibGain: s.RibGain, AbdGain: s.AbdGain}
			sigh := false
			pause := 0.0
			switch s.Kind {
			case BreathNormal:
				if recovery > 0 {
					vt *= 1.6
					recovery--
				} else if s.SighsPerMin > 0 && rng.Float64() < s.SighsPerMin*ttot/60 {
					vt *= 2.5
					ttot *= 1.5
					duty = 0.5
					sigh = true
					pause = 2
				}
				c.TidalL = vt
			case BreathObstructiveApnea:
				c.ParadoxL = 0.5 * vt
			case BreathObstructiveHypopnea:
				c.TidalL = s.HypopneaFrac * vt
				c.ParadoxL = 0.3 * vt
			case BreathCentralHypopnea:
				c.TidalL = s.HypopneaFrac * vt
			}
			// Event segments end on a breath boundary: stretch or shrink the
			// last cycle to fit; a normal segment's last breath may run over
			// into the next normal segment.
			if (s.Kind.IsEvent() || (si+1 < len(segs) && segs[si+1].Kind.IsEvent())) && t+ttot+pause > end-0.4*ttot {
				ttot = end - t - pause
				if ttot < 1 {
					ttot, pause = end-t, 0
				}
			}
			c.EndInspS = t + duty*ttot
			c.EndExpS = t + ttot
			c.PauseS = pause
			rec.Cycles = append(rec.Cycles, c)
			if c.TidalL > 0 {
				rec.Breaths = append(rec.Breaths, BreathTruth{Onset: t, EndInsp: c.EndInspS, EndExp: c.EndExpS, PauseS: pause, TidalL: c.TidalL, Sigh: sigh, Kind: s.Kind})
			}
			t += ttot + pause
		}
		if t > end { // a normal segment ran over: the next one starts later
			segs[si].DurationS += t - end
		}
	}
	n := int(math.Round(t * cfg.RateHz))
	// Motion bursts.
	for si, s := range segs {
		if s.MotionPerMin > 0 {
			for u := rec.SegmentStart[si]; u < rec.SegmentStart[si]+s.DurationS; u += 1 {
				if rng.Float64() < s.MotionPerMin/60 {
					d := 2 + 4*rng.Float64()
					rec.Motion = append(rec.Motion, BreathSpan{Start: u, End: u + d})
					u += d
				}
			}
		}
	}
	for i := range rec.Breaths {
		b := &rec.Breaths[i]
		for _, m := range rec.Motion {
			if m.Start < b.EndExp && m.End > b.Onset {
				b.Motion = true
			}
		}
	}
	rec.Rib, rec.Abd = BreathRender(rec.Cycles, n, cfg, rng)
	breathAddMotion(rec, cfg, rng)
	for _, off := range []struct {
		x  []float64
		sp []BreathSpan
	}{{rec.Rib, cfg.RibOff}, {rec.Abd, cfg.AbdOff}} {
		for _, sp := range off.sp {
			for i := max(0, int(sp.Start*cfg.RateHz)); i < min(len(off.x), int(sp.End*cfg.RateHz)); i++ {
				off.x[i] = math.NaN()
			}
		}
	}
	if cfg.SpO2 {
		rec.SpO2 = breathSpO2(rec.Events, breathSeconds(n, cfg.RateHz), rng)
	}
	return rec, nil
}

func breathSeconds(n int, fs float64) float64 { return float64(n) / fs }

func breathNorm(rng *rand.Rand) float64 { return math.Max(-2.5, math.Min(2.5, rng.NormFloat64())) }

// BreathRender renders cycles into n samples of each band at cfg.RateHz,
// with cfg's drift, noise and cardiogenic oscillation (rng drives the noise;
// nil means a fixed seed). Inspiration rises as a half cosine over Ti and
// expiration falls as a half cosine over Te (smooth at both ends), and the
// compartments share the volume by RibShare; ParadoxL moves the abdomen out
// and the rib cage in by the same volume, in step with the cycle.
func BreathRender(cycles []BreathCycle, n int, cfg BreathConfig, rng *rand.Rand) (rib, abd []float64) {
	if rng == nil {
		rng = rand.New(rand.NewPCG(cfg.Seed, 0xb4ea7c))
	}
	fs := cfg.RateHz
	rib = make([]float64, n)
	abd = make([]float64, n)
	noise := cfg.NoiseAU
	if noise == 0 {
		noise = 0.004
	}
	drift := cfg.DriftAU
	if drift == 0 {
		drift = 0.1
	}
	card := cfg.CardiacL
	if card == 0 {
		card = 0.01
	}
	noise, drift, card = math.Max(0, noise), math.Max(0, drift), math.Max(0, card)
	ph := [4]float64{rng.Float64() * 2 * math.Pi, rng.Float64() * 2 * math.Pi, rng.Float64() * 2 * math.Pi, rng.Float64() * 2 * math.Pi}
	ci := 0
	for i := 0; i < n; i++ {
		t := float64(i) / fs
		for ci+1 < len(cycles) && cycles[ci+1].OnsetS <= t {
			ci++
		}
		var v, p float64
		c := BreathCycle{RibShare: 0.4, RibGain: 1.6, AbdGain: 0.9}
		if len(cycles) > 0 {
			c = cycles[ci]
			w := 0.0
			switch {
			case t < c.OnsetS:
			case t < c.EndInspS:
				w = 0.5 * (1 - math.Cos(math.Pi*(t-c.OnsetS)/(c.EndInspS-c.OnsetS)))
			case t < c.EndExpS:
				w = 0.5 * (1 + math.Cos(math.Pi*(t-c.EndInspS)/(c.EndExpS-c.EndInspS)))
			}
			v = c.TidalL * w
			p = c.ParadoxL * w
		}
		v += card * 0.5 * math.Sin(2*math.Pi*1.1*t)
		rcVol := c.RibShare*v - p
		abVol := (1-c.RibShare)*v + p
		dr := drift * (0.7*math.Sin(2*math.Pi*0.004*t+ph[0]) + 0.3*math.Sin(2*math.Pi*0.013*t+ph[1]))
		da := drift * (0.7*math.Sin(2*math.Pi*0.005*t+ph[2]) + 0.3*math.Sin(2*math.Pi*0.011*t+ph[3]))
		rib[i] = c.RibGain*rcVol + dr + noise*rng.NormFloat64()
		abd[i] = c.AbdGain*abVol + da + noise*rng.NormFloat64()
	}
	return rib, abd
}

// breathAddMotion adds each burst: a band-limited wobble (1-5 Hz components) of
// about a litre-equivalent on both bands plus a slow shift of the baseline.
func breathAddMotion(rec *BreathRecording, cfg BreathConfig, rng *rand.Rand) {
	fs := cfg.RateHz
	for _, m := range rec.Motion {
		var f, a, p [4]float64
		for k := range f {
			f[k] = 1 + 4*rng.Float64()
			a[k] = 0.3 + 0.4*rng.Float64()
			p[k] = rng.Float64() * 2 * math.Pi
		}
		shiftR, shiftA := 0.3*rng.NormFloat64(), 0.3*rng.NormFloat64()
		i0 := int(m.Start * fs)
		i1 := min(int(m.End*fs), len(rec.Rib))
		for i := i0; i < i1; i++ {
			t := float64(i) / fs
			env := math.Sin(math.Pi * (t - m.Start) / (m.End - m.Start))
			var w float64
			for k := range f {
				w += a[k] * math.Sin(2*math.Pi*f[k]*t+p[k])
			}
			rec.Rib[i] += env * (w + shiftR)
			rec.Abd[i] += env * (0.8*w + shiftA)
		}
	}
}

// breathSpO2 is 97 % at rest, dipping after each event by 3-7 % (apneas
// deeper than hypopneas) with the nadir about 20 s after the event ends
// (circulation delay; common practice, from memory).
func breathSpO2(ev []BreathEvent, dur float64, rng *rand.Rand) []float64 {
	n := int(math.Ceil(dur))
	out := make([]float64, n)
	depth := make([]float64, len(ev))
	for i, e := range ev {
		depth[i] = 3.5 + 2*rng.Float64()
		if e.Kind.IsApnea() {
			depth[i] += 1.5
		}
	}
	for i := range out {
		t := float64(i)
		v := 97.0
		for k, e := range ev {
			d := t - (e.End + 20)
			v -= depth[k] * math.Exp(-0.5*d*d/(12*12))
		}
		out[i] = math.Round(v*10) / 10
	}
	return out
}

// BreathQuiet returns a schedule of quiet adult breathing for durationS
// seconds: 12 breaths/min of 0.5 L (minute ventilation 6 L/min), the
// textbook resting values (common practice), with the default variability.
func BreathQuiet(durationS float64) []BreathSegment {
	return []BreathSegment{{Label: "quiet", DurationS: durationS, RatePerMin: 12, TidalL: 0.5}}
}

// BreathTrailDay returns a breathing schedule for a trail runner's training
// day of about two hours: sitting rest, warm-up, five hard repeats pushing
// minute ventilation toward 100 L/min (46/min of 2.15 L) with easy jogging
// between, cool-down, seated rest, and a supine nap with obstructive apneas,
// a central apnea and hypopneas, and a roll onto the side that changes the
// band gains. Motion bursts come with running.
func BreathTrailDay() []BreathSegment {
	segs := []BreathSegment{
		{Label: "rest", DurationS: 600, RatePerMin: 13, TidalL: 0.55, RibShare: 0.4, RibGain: 1.6, AbdGain: 0.9, SighsPerMin: 0.2},
		{Label: "warm-up", DurationS: 900, RatePerMin: 26, TidalL: 1.4, RateCV: 0.06, TidalCV: 0.08, TiTtot: 0.46, MotionPerMin: 0.3},
	}
	for k := 0; k < 5; k++ {
		segs = append(segs,
			BreathSegment{Label: "intervals", DurationS: 240, RatePerMin: 46, TidalL: 2.15, TiTtot: 0.5, MotionPerMin: 0.3},
			BreathSegment{Label: "intervals", DurationS: 180, RatePerMin: 30, TidalL: 1.5, TiTtot: 0.47, MotionPerMin: 0.3})
	}
	segs = append(segs,
		BreathSegment{Label: "cool-down", DurationS: 900, RatePerMin: 18, TidalL: 0.9, TiTtot: 0.44, RateCV: 0.1, TidalCV: 0.1, MotionPerMin: 0.1},
		BreathSegment{Label: "rest", DurationS: 300, RatePerMin: 14, TidalL: 0.6, TiTtot: 0.42, SighsPerMin: 0.2},
	)
	nap := BreathSegment{Label: "nap", DurationS: 300, RatePerMin: 11, TidalL: 0.5, RibShare: 0.3, RibGain: 1.4, AbdGain: 1.0, RateCV: 0.06, TidalCV: 0.08}
	segs = append(segs, nap,
		BreathSegment{Label: "nap", Kind: BreathObstructiveApnea, DurationS: 18},
		BreathSegment{Label: "nap", DurationS: 240},
		BreathSegment{Label: "nap", Kind: BreathObstructiveApnea, DurationS: 24},
		BreathSegment{Label: "nap", DurationS: 300},
		BreathSegment{Label: "nap", Kind: BreathObstructiveHypopnea, DurationS: 20},
		BreathSegment{Label: "nap", DurationS: 240},
		BreathSegment{Label: "nap", Kind: BreathObstructiveApnea, DurationS: 16},
		BreathSegment{Label: "nap", DurationS: 300, RibShare: 0.35, RibGain: 1.2, AbdGain: 1.1}, // rolls onto the side
		BreathSegment{Label: "nap", Kind: BreathCentralApnea, DurationS: 14},
		BreathSegment{Label: "nap", DurationS: 240},
		BreathSegment{Label: "nap", Kind: BreathObstructiveApnea, DurationS: 22},
		BreathSegment{Label: "nap", DurationS: 300},
	)
	return segs
}
