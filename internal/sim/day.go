package sim

// The demo scenario: a trail runner's training day, compressed into two hours
// of one chest-worn recording (single-lead ECG, rib-cage and abdominal
// inductance bands, 3-axis accelerometer). One schedule of segments drives the
// beat, breath and step generators below; the waveform simulators of this
// package turn those events into signals. Everything is deterministic for a
// given seed, and everything the signals were made from is returned as ground
// truth.
//
// The physiology the schedule follows (common practice / textbook exercise
// physiology, from memory, used to make plausible demo data, not as an
// oracle): resting heart rate near 60 beats/min in a trained runner, rising
// with a first-order time constant of about 30 s toward a work-rate target and
// peaking near 185 beats/min in hard intervals; minute ventilation about
// 7 L/min at rest rising toward 100 L/min in hard running through both rate
// (up to ~50 breaths/min) and tidal volume (~2 L); respiratory sinus
// arrhythmia large at rest and in sleep, nearly abolished in hard exercise;
// during sleep slower breathing (about 10 breaths/min) and obstructive apneas
// in which effort continues with the rib cage and abdomen moving in antiphase,
// ended by a few larger recovery breaths, with a slower heart during the event
// and a faster one after it.

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"time"
)

// Day sampling rates, Hz.
const (
	DayECGRateHz  = 250
	DayBandRateHz = 50
	DayAccRateHz  = 50
)

// DayPosture is the body position in a segment.
type DayPosture int

// Postures of the scenario, matching the chest mounting of package motion
// (device +y toward the head, +x toward the wearer's left, +z out of the chest).
const (
	DayUpright DayPosture = iota
	DaySupine
	DayLeftSide
)

// String returns "upright", "supine" or "left".
func (p DayPosture) String() string {
	switch p {
	case DayUpright:
		return "upright"
	case DaySupine:
		return "supine"
	case DayLeftSide:
		return "left"
	}
	return fmt.Sprintf("DayPosture(%d)", int(p))
}

// gravity returns the static acceleration (device x, y, z) in g for the
// posture: +1 g opposite to gravity.
func (p DayPosture) gravity() (x, y, z float64) {
	switch p {
	case DaySupine:
		return 0, 0, 1
	case DayLeftSide:
		return -1, 0, 0
	}
	return 0, 1, 0
}

// DaySegment is one piece of the schedule. Targets are reached with
// first-order kinetics from the previous segment's values.
type DaySegment struct {
	Label      string     // annotation text: "rest", "warm-up", "intervals", "cool-down", "nap"
	StartS     float64    // s from the recording start
	EndS       float64    // s from the recording start
	HRbpm      float64    // heart-rate target, beats/min
	BreathsMin float64    // breathing-rate target, breaths/min
	TidalL     float64    // tidal-volume target, L
	CadenceSPM float64    // step cadence, steps/min; 0 = no steps
	Posture    DayPosture // body position
	// Work lists sub-intervals (seconds from StartS) run at the Hard targets
	// instead of the segment's own (the hard repeats of the intervals).
	Work []DayInterval
	Hard DayTargets
}

// DayTargets are the physiological targets of a hard repeat.
type DayTargets struct {
	HRbpm, BreathsMin, TidalL, CadenceSPM float64
}

// DayInterval is [StartS, EndS) in seconds.
type DayInterval struct{ StartS, EndS float64 }

// DaySchedule returns the scenario's segments (7200 s in all).
func DaySchedule() []DaySegment {
	var reps []DayInterval
	// Six 3-minute hard repeats with 100 s easy jogging between them.
	for k := 0; k < 6; k++ {
		s := 60 + float64(k)*280
		reps = append(reps, DayInterval{StartS: s, EndS: s + 180})
	}
	return []DaySegment{
		{Label: "rest", StartS: 0, EndS: 480, HRbpm: 58, BreathsMin: 13, TidalL: 0.55, Posture: DayUpright},
		{Label: "warm-up", StartS: 480, EndS: 1200, HRbpm: 140, BreathsMin: 28, TidalL: 1.5, CadenceSPM: 162, Posture: DayUpright},
		{Label: "intervals", StartS: 1200, EndS: 2880, HRbpm: 150, BreathsMin: 32, TidalL: 1.7, CadenceSPM: 164, Posture: DayUpright,
			Work: reps, Hard: DayTargets{HRbpm: 186, BreathsMin: 48, TidalL: 2.1, CadenceSPM: 182}},
		{Label: "cool-down", StartS: 2880, EndS: 3600, HRbpm: 100, BreathsMin: 18, TidalL: 0.9, CadenceSPM: 112, Posture: DayUpright},
		{Label: "nap", StartS: 3600, EndS: 7200, HRbpm: 52, BreathsMin: 10, TidalL: 0.5, Posture: DaySupine},
	}
}

// DayApneas are the obstructive apneas of the nap (start, end in s from the
// recording start): 15 to 28 s, each above the 10 s minimum of the AASM
// apnea rule (Berry et al. 2012).
var DayApneas = []DayInterval{
	{StartS: 4320, EndS: 4338}, {StartS: 4980, EndS: 5002}, {StartS: 5610, EndS: 5625},
	{StartS: 6150, EndS: 6178}, {StartS: 6720, EndS: 6740},
}

// DayLeadOff is the ECG lead-off gap (s from the start): the electrode lifts
// during the fourth hard repeat.
var DayLeadOff = DayInterval{StartS: 2260, EndS: 2285}

// DayBagCalibration is when, at rest, the runner breathes through a
// fixed-volume calibration bag of DayBagL: every breath then moves exactly
// that volume while the rib-cage share varies, the reference for an
// absolute band calibration (methods: least squares against reference
// volumes, common practice) and the constant-volume case where QDC is exact
// (Sackner et al. 1989; De Groote et al. 2001).
var DayBagCalibration = DayInterval{StartS: 60, EndS: 180}

// DayBagL is the calibration bag's volume, L.
const DayBagL = 1.0

// DayLeftSideFrom is when the napper rolls onto the left side (s).
const DayLeftSideFrom = 5300.0

// DayDurationS is the recording length, s.
const DayDurationS = 7200.0

// DayStart is the UTC start of the demo recording.
var DayStart = time.Date(2026, time.May, 16, 12, 0, 0, 0, time.UTC)

// DayBeat is one simulated heart beat.
type DayBeat struct {
	TimeS float64 // R-peak time, s
	Kind  byte    // 'N' normal, 'V' premature ventricular
}

// DayBreath is one simulated breath.
type DayBreath struct {
	OnsetS  float64 // start of inspiration, s
	PeakS   float64 // end of inspiration, s
	EndS    float64 // end of expiration, s
	TidalL  float64 // volume, L (0 for an effort without airflow)
	RibFrac float64 // share of the volume taken by the rib cage, 0..1
	// EffortL is the volume an obstructed effort shifts from the rib cage
	// to the abdomen (L); 0 for breaths with airflow.
	EffortL float64
	// Obstructed marks an effort against a closed airway: the bands move in
	// antiphase with equal and opposite volume and their calibrated sum is flat.
	Obstructed bool
}

// DayTruth is everything the demo's signals were made from.
type DayTruth struct {
	Segments []DaySegment
	Beats    []DayBeat
	Breaths  []DayBreath
	Apneas   []DayInterval // obstructive apneas
	Steps    []float64     // step (impact) times from AccelSimulate, s
	LeadOff  []DayInterval // ECG gaps (samples NaN)
	Posture  []DayPosture  // posture per second of the recording
}

// MeanHR returns the mean heart rate (beats/min) over [start, end) from the
// true beats: beats per minute counted as 60 / mean RR.
func (tr *DayTruth) MeanHR(start, end float64) float64 {
	var sum float64
	n := 0
	for i := 1; i < len(tr.Beats); i++ {
		t := tr.Beats[i].TimeS
		if t >= start && t < end {
			sum += t - tr.Beats[i-1].TimeS
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return 60 / (sum / float64(n))
}

// BreathRate returns the mean breathing rate (breaths/min) over [start, end)
// from the true breaths with airflow (obstructed efforts excluded).
func (tr *DayTruth) BreathRate(start, end float64) float64 {
	var sum float64
	n := 0
	for _, b := range tr.Breaths {
		if b.OnsetS >= start && b.OnsetS < end && !b.Obstructed {
			sum += b.EndS - b.OnsetS
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return 60 / (sum / float64(n))
}

// Ventilation returns the true minute ventilation (L/min) over [start, end):
// 60 times the volume of the breaths starting in it over its length.
func (tr *DayTruth) Ventilation(start, end float64) float64 {
	var v float64
	for _, b := range tr.Breaths {
		if b.OnsetS >= start && b.OnsetS < end {
			v += b.TidalL
		}
	}
	return 60 * v / (end - start)
}

// StepsIn counts the true steps in [start, end).
func (tr *DayTruth) StepsIn(start, end float64) int {
	lo := sort.SearchFloat64s(tr.Steps, start)
	hi := sort.SearchFloat64s(tr.Steps, end)
	return hi - lo
}

// state is the instantaneous target set at time t.
type dayState struct {
	hr, br, vt, cadence float64
	posture             DayPosture
}

// target returns the schedule's targets at time t (s).
func targetAt(segs []DaySegment, t float64) dayState {
	for _, s := range segs {
		if t >= s.StartS && t < s.EndS {
			st := dayState{hr: s.HRbpm, br: s.BreathsMin, vt: s.TidalL, cadence: s.CadenceSPM, posture: s.Posture}
			for _, w := range s.Work {
				if t-s.StartS >= w.StartS && t-s.StartS < w.EndS {
					st.hr, st.br, st.vt, st.cadence = s.Hard.HRbpm, s.Hard.BreathsMin, s.Hard.TidalL, s.Hard.CadenceSPM
				}
			}
			if s.Posture == DaySupine && t >= DayLeftSideFrom {
				st.posture = DayLeftSide
			}
			return st
		}
	}
	last := segs[len(segs)-1]
	return dayState{hr: last.HRbpm, br: last.BreathsMin, vt: last.TidalL, posture: last.Posture}
}

// dayKinetics integrates the first-order approach of heart rate, breathing
// rate and tidal volume to their targets, one value per second.
// Time constants (from memory, typical of moderate exercise): heart rate 30 s
// on and off, ventilation 40 s.
type dayKinetics struct {
	hr, br, vt []float64 // per second
	cadence    []float64
	posture    []DayPosture
}

func newKinetics(segs []DaySegment, dur float64) dayKinetics {
	n := int(math.Ceil(dur)) + 1
	k := dayKinetics{hr: make([]float64, n), br: make([]float64, n), vt: make([]float64, n),
		cadence: make([]float64, n), posture: make([]DayPosture, n)}
	st := targetAt(segs, 0)
	hr, br, vt := st.hr, st.br, st.vt
	const tauHR, tauVE = 30.0, 40.0
	for i := 0; i < n; i++ {
		st = targetAt(segs, float64(i))
		hr += (st.hr - hr) * (1 - math.Exp(-1/tauHR))
		br += (st.br - br) * (1 - math.Exp(-1/tauVE))
		vt += (st.vt - vt) * (1 - math.Exp(-1/tauVE))
		k.hr[i], k.br[i], k.vt[i] = hr, br, vt
		k.cadence[i] = st.cadence
		k.posture[i] = st.posture
	}
	return k
}

// at interpolates a per-second series at t.
func at(v []float64, t float64) float64 {
	if t <= 0 {
		return v[0]
	}
	i := int(t)
	if i >= len(v)-1 {
		return v[len(v)-1]
	}
	f := t - float64(i)
	return v[i]*(1-f) + v[i+1]*f
}

func inAny(t float64, iv []DayInterval) (DayInterval, bool) {
	for _, x := range iv {
		if t >= x.StartS && t < x.EndS {
			return x, true
		}
	}
	return DayInterval{}, false
}

// dayBreaths lays out the breaths: rate and depth follow the kinetics with
// breath-to-breath variability of 8 % in the period (Tobin et al. report a
// 20 % CV of rate at rest over 15 min; 8 % keeps the exercise trend
// readable, a demo choice) and 10 % in the depth, a varying rib-cage share,
// an occasional sigh at rest and in sleep, and during each apnea obstructed
// efforts at the same rate followed by two recovery breaths of double depth.
func dayBreaths(k dayKinetics, apneas []DayInterval, dur float64, rng *rand.Rand) []DayBreath {
	var out []DayBreath
	t := 0.5
	recovery := 0
	for t < dur-1 {
		br := at(k.br, t)
		ttot := 60 / br * (1 + 0.08*rng.NormFloat64())
		ttot = math.Max(ttot, 0.6)
		// Duty cycle: 0.42 at rest (Tobin et al. 1983, from memory) toward 0.5 in hard exercise.
		duty := 0.42 + 0.08*math.Min(1, math.Max(0, (br-13)/35))
		vt := at(k.vt, t) * (1 + 0.1*rng.NormFloat64())
		vt = math.Max(vt, 0.15)
		bag := t >= DayBagCalibration.StartS && t < DayBagCalibration.EndS
		if bag {
			vt = DayBagL // breaths through the fixed-volume bag
		}
		rib := 0.4 // upright: about 40 % rib cage (common practice)
		if k.posture[int(t)] != DayUpright {
			rib = 0.3 // lying: breathing shifts toward the abdomen (common practice)
		}
		// Natural breathing shifts between rib cage and abdomen from breath
		// to breath (the premise of QDC, Sackner et al. 1989); SD 0.05 as
		// the breathing simulator's default.
		rib = math.Max(0.05, math.Min(0.95, rib+0.05*rng.NormFloat64()))
		b := DayBreath{OnsetS: t, PeakS: t + duty*ttot, EndS: t + ttot, TidalL: vt, RibFrac: rib}
		if a, ok := inAny(t, apneas); ok {
			// Effort against the closed airway: half the scheduled volume
			// moved between the compartments, none through the mouth; the
			// last effort is cut at the event's end.
			b.Obstructed = true
			b.EffortL = 0.5 * b.TidalL
			b.TidalL = 0
			if b.EndS > a.EndS {
				b.EndS = a.EndS
				b.PeakS = b.OnsetS + duty*(b.EndS-b.OnsetS)
			}
			recovery = 2
		} else if recovery > 0 {
			b.TidalL *= 2
			recovery--
		} else if br < 16 && rng.Float64() < 0.01 && !bag {
			b.TidalL *= 2.5 // a sigh
		}
		// Breaths do not run into an apnea: the last breath before it ends at
		// its start, so the event begins on a breath boundary.
		if !b.Obstructed {
			for _, a := range apneas {
				if a.StartS > b.OnsetS && a.StartS < b.EndS {
					b.EndS = a.StartS
					b.PeakS = b.OnsetS + duty*(b.EndS-b.OnsetS)
				}
			}
		}
		out = append(out, b)
		t = b.EndS
	}
	return out
}

// dayBeats lays out the R-peaks: RR from the heart-rate kinetics, modulated
// by respiratory sinus arrhythmia at the breathing frequency (amplitude 5 %
// of RR at rest and in sleep, falling to 0.5 % at 180 beats/min), a 0.1 Hz
// (Mayer-wave) component of 2 %, 1 % white jitter, bradycardia of 10 % in
// apneas and a 15 % faster heart for 10 s after each; and a premature
// ventricular beat with a full compensatory pause about once every 400 beats.
func dayBeats(k dayKinetics, breaths []DayBreath, apneas []DayInterval, dur float64, rng *rand.Rand) []DayBeat {
	var out []DayBeat
	bi := 0
	phase := func(t float64) float64 {
		for bi+1 < len(breaths) && breaths[bi].EndS <= t {
			bi++
		}
		b := breaths[bi]
		return 2 * math.Pi * (t - b.OnsetS) / (b.EndS - b.OnsetS)
	}
	t := 0.3
	for t < dur {
		hr := at(k.hr, t)
		rr := 60 / hr
		rsa := 0.05 - 0.045*math.Min(1, math.Max(0, (hr-60)/120))
		rr *= 1 - rsa*math.Cos(phase(t)) + 0.02*math.Sin(2*math.Pi*0.1*t) + 0.01*rng.NormFloat64()
		if _, ok := inAny(t, apneas); ok {
			rr *= 1.1
		} else if _, ok := inAny(t-10, apneas); ok {
			rr /= 1.15
		}
		if len(out) > 10 && rng.Float64() < 1.0/400 && out[len(out)-1].Kind == 'N' {
			// Premature ventricular beat at 65 % of the RR, then a pause so
			// that the two intervals sum to two normal ones (compensatory).
			out = append(out, DayBeat{TimeS: t - 0.35*rr, Kind: 'V'})
			t += rr
			out = append(out, DayBeat{TimeS: t, Kind: 'N'})
			t += rr
			continue
		}
		out = append(out, DayBeat{TimeS: t, Kind: 'N'})
		t += rr
	}
	return out
}

// dayAccelSegments turns the schedule into the accelerometer simulator's
// segments: still upright at rest (sitting), running in the warm-up and the
// intervals (hard repeats at their own cadence), walking in the cool-down,
// and lying in the nap (on the back, then on the left side).
func dayAccelSegments(segs []DaySegment) []AccelSegment {
	var out []AccelSegment
	add := func(a AccelActivity, from, to, cad float64) {
		if to > from {
			out = append(out, AccelSegment{Activity: a, DurationS: to - from, CadenceSPM: cad})
		}
	}
	for _, s := range segs {
		switch {
		case s.Posture == DaySupine:
			add(AccelSupine, s.StartS, math.Min(s.EndS, DayLeftSideFrom), 0)
			add(AccelLeft, math.Max(s.StartS, DayLeftSideFrom), s.EndS, 0)
		case s.CadenceSPM == 0:
			add(AccelSitting, s.StartS, s.EndS, 0)
		default:
			act := AccelRunning
			if s.CadenceSPM < 130 {
				act = AccelWalking // below ~130 steps/min people walk (common practice)
			}
			t := s.StartS
			for _, w := range s.Work {
				add(act, t, s.StartS+w.StartS, s.CadenceSPM)
				add(AccelRunning, s.StartS+w.StartS, s.StartS+w.EndS, s.Hard.CadenceSPM)
				t = s.StartS + w.EndS
			}
			add(act, t, s.EndS, s.CadenceSPM)
		}
	}
	return out
}

// dayEvents builds the beat and breath ground truth of the scenario.
func dayEvents(seed uint64) DayTruth {
	segs := DaySchedule()
	rng := rand.New(rand.NewPCG(seed, 0x7d1a1bea7))
	k := newKinetics(segs, DayDurationS)
	breaths := dayBreaths(k, DayApneas, DayDurationS, rng)
	beats := dayBeats(k, breaths, DayApneas, DayDurationS, rng)
	return DayTruth{
		Segments: segs, Beats: beats, Breaths: breaths, Apneas: append([]DayInterval(nil), DayApneas...),
		LeadOff: []DayInterval{DayLeadOff}, Posture: k.posture[:int(DayDurationS)],
	}
}

// DayRecording is the simulated demo recording: plain sample slices from a
// common start, and the ground truth they were made from.
type DayRecording struct {
	Start     time.Time // UTC time of sample 0 of every signal
	DurationS float64
	// ECG is a single lead in mV at DayECGRateHz, NaN in the lead-off gap.
	ECG []float64
	// RibCage and Abdomen are the inductance bands at DayBandRateHz, in
	// arbitrary units (uncalibrated, as a real band delivers them).
	RibCage, Abdomen []float64
	// AccX, AccY, AccZ are the chest accelerometer axes at DayAccRateHz, g
	// (device +y toward the head, +x toward the left, +z out of the chest).
	AccX, AccY, AccZ []float64
	Truth            DayTruth
}

// DaySimulate renders the scenario for a seed: the schedule drives the beat
// and breath layout of this file, then ECGFromBeats (McSharry et al. 2003
// waveform), BreathRender (two-compartment bands) and AccelSimulate turn
// events into signals. The same seed gives identical output.
func DaySimulate(seed uint64) (*DayRecording, error) {
	tr := dayEvents(seed)
	beats := make([]ECGBeat, len(tr.Beats))
	for i, b := range tr.Beats {
		beats[i] = ECGBeat{TimeS: b.TimeS, Kind: b.Kind}
	}
	ecgSig, err := ECGFromBeats(beats, ECGConfig{
		RateHz: DayECGRateHz, DurationS: DayDurationS,
		LeadOff:     []ECGInterval{{StartS: DayLeadOff.StartS, EndS: DayLeadOff.EndS}},
		AmplitudemV: 1.2, NoisemV: 0.02, WandermV: 0.05, BreathHz: 0.2, Seed: seed,
	})
	if err != nil {
		return nil, fmt.Errorf("sim: day ECG: %w", err)
	}
	rib, abd := dayBands(tr, seed)
	acc, err := AccelSimulate(dayAccelSegments(tr.Segments), AccelConfig{RateHz: DayAccRateHz, Seed: seed})
	if err != nil {
		return nil, fmt.Errorf("sim: day accelerometer: %w", err)
	}
	tr.Steps = acc.Steps
	return &DayRecording{
		Start: DayStart, DurationS: DayDurationS,
		ECG:     ecgSig.Samples,
		RibCage: rib, Abdomen: abd,
		AccX: acc.X, AccY: acc.Y, AccZ: acc.Z,
		Truth: tr,
	}, nil
}

// dayBandGains returns the rib-cage and abdominal band gains (AU per litre of
// compartment volume) for a posture: bands sit differently lying down, so
// the gains change (the values of the breathing simulator's trail-day
// schedule: 1.6/0.9 upright, 1.4/1.0 supine, 1.2/1.1 on the side).
func dayBandGains(p DayPosture) (rib, abd float64) {
	switch p {
	case DaySupine:
		return 1.4, 1.0
	case DayLeftSide:
		return 1.2, 1.1
	}
	return 1.6, 0.9
}

// dayBands renders the breaths into the two bands with BreathRender (its
// default drift, noise and cardiogenic oscillation).
func dayBands(tr DayTruth, seed uint64) (rib, abd []float64) {
	cycles := make([]BreathCycle, len(tr.Breaths))
	for i, b := range tr.Breaths {
		rg, ag := dayBandGains(tr.Posture[min(int(b.OnsetS), len(tr.Posture)-1)])
		cycles[i] = BreathCycle{OnsetS: b.OnsetS, EndInspS: b.PeakS, EndExpS: b.EndS, TidalL: b.TidalL,
			ParadoxL: b.EffortL, RibShare: b.RibFrac, RibGain: rg, AbdGain: ag}
	}
	cfg := BreathConfig{RateHz: DayBandRateHz, Seed: seed}
	return BreathRender(cycles, int(DayDurationS*DayBandRateHz), cfg, rand.New(rand.NewPCG(seed, 0xba4d5)))
}

// DaySignal is one channel of the demo recording, named and in units that
// the recording package's role guessing recognises (ECG, rib-cage and
// abdominal bands, acc_x/y/z).
type DaySignal struct {
	Name, Unit string
	RateHz     float64
	Samples    []float64
	Gaps       []DayInterval // known invalid spans (NaN samples), s
}

// Signals returns the recording's channels in file order.
func (d *DayRecording) Signals() []DaySignal {
	return []DaySignal{
		{Name: "ECG", Unit: "mV", RateHz: DayECGRateHz, Samples: d.ECG, Gaps: d.Truth.LeadOff},
		{Name: "RIP rib cage", Unit: "a.u.", RateHz: DayBandRateHz, Samples: d.RibCage},
		{Name: "RIP abdomen", Unit: "a.u.", RateHz: DayBandRateHz, Samples: d.Abdomen},
		{Name: "acc_x", Unit: "g", RateHz: DayAccRateHz, Samples: d.AccX},
		{Name: "acc_y", Unit: "g", RateHz: DayAccRateHz, Samples: d.AccY},
		{Name: "acc_z", Unit: "g", RateHz: DayAccRateHz, Samples: d.AccZ},
	}
}

// DayLabel is a labelled interval of the recording.
type DayLabel struct {
	Text         string
	StartS, EndS float64
}

// Labels returns the schedule's segments and the simulated apneas
// ("obstructive apnea") as labelled intervals in time order: the
// annotations a user would have from a diary and a scorer.
func (d *DayRecording) Labels() []DayLabel {
	var out []DayLabel
	for _, s := range d.Truth.Segments {
		out = append(out, DayLabel{Text: s.Label, StartS: s.StartS, EndS: s.EndS})
	}
	for _, a := range d.Truth.Apneas {
		out = append(out, DayLabel{Text: "obstructive apnea", StartS: a.StartS, EndS: a.EndS})
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].StartS < out[j].StartS })
	return out
}

// ReferenceBreaths returns one label per breath taken wholly inside the bag
// calibration, reading "vref=1.00 L" (the convention of the feature
// extractor's reference-breath annotations).
func (d *DayRecording) ReferenceBreaths() []DayLabel {
	var out []DayLabel
	for _, b := range d.Truth.Breaths {
		if b.OnsetS >= DayBagCalibration.StartS && b.EndS <= DayBagCalibration.EndS && !b.Obstructed {
			out = append(out, DayLabel{Text: fmt.Sprintf("vref=%.2f L", b.TidalL), StartS: b.OnsetS, EndS: b.EndS})
		}
	}
	return out
}
