package sim

import (
	"math"
	"testing"
)

func TestBreathSimulateDeterministicAndTruth(t *testing.T) {
	cfg := BreathConfig{RateHz: 25, Seed: 5, SpO2: true, Segments: []BreathSegment{
		{DurationS: 120, RatePerMin: 12, TidalL: 0.5, SighsPerMin: 0.5},
		{Kind: BreathObstructiveApnea, DurationS: 20},
		{DurationS: 60},
		{Kind: BreathCentralApnea, DurationS: 15},
		{DurationS: 60, MotionPerMin: 2},
	}}
	a, err := BreathSimulate(cfg)
	if err != nil {
		t.Fatal(err)
	}
	b, _ := BreathSimulate(cfg)
	if len(a.Rib) != len(b.Rib) || len(a.Breaths) != len(b.Breaths) {
		t.Fatal("same config, different output")
	}
	for i := range a.Rib {
		if a.Rib[i] != b.Rib[i] || a.Abd[i] != b.Abd[i] {
			t.Fatalf("sample %d differs between runs with one seed", i)
		}
	}
	c, _ := BreathSimulate(BreathConfig{RateHz: 25, Seed: 6, Segments: cfg.Segments})
	if c.Rib[1000] == a.Rib[1000] {
		t.Error("another seed gave the same samples")
	}
	// Events at their scheduled times, on breath boundaries.
	if len(a.Events) != 2 || a.Events[0].Kind != BreathObstructiveApnea || a.Events[1].Kind != BreathCentralApnea {
		t.Fatalf("events %+v", a.Events)
	}
	for _, e := range a.Events {
		for _, br := range a.Breaths {
			if br.Onset < e.End && br.EndExp > e.Start {
				t.Errorf("true breath %+v inside apnea %+v", br, e)
			}
		}
	}
	if d := a.Events[0].End - a.Events[0].Start; d != 20 {
		t.Errorf("obstructive apnea lasts %v s, scheduled 20", d)
	}
	// Breaths are contiguous, ordered, with Ti/Ttot near the schedule.
	sighs := 0
	for i, br := range a.Breaths {
		if !(br.Onset < br.EndInsp && br.EndInsp < br.EndExp) || br.TidalL <= 0 {
			t.Fatalf("breath %d malformed: %+v", i, br)
		}
		if br.Sigh {
			sighs++
		}
	}
	if sighs == 0 {
		t.Error("no sigh at 0.5/min over 2 min")
	}
	if len(a.Motion) == 0 {
		t.Error("no motion burst at 2/min over 1 min")
	}
	// During the obstructive apnea the true calibrated sum (rib/RibGain +
	// abd/AbdGain) stays flat while both bands move; in the central apnea
	// both are flat (the simulator's two-compartment model, derived).
	ra, aa := a.TrueWeights(130)
	exc := func(x []float64, s, e float64) float64 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := int(s * 25); i < int(e*25); i++ {
			lo, hi = math.Min(lo, x[i]), math.Max(hi, x[i])
		}
		return hi - lo
	}
	sum := make([]float64, len(a.Rib))
	for i := range sum {
		sum[i] = ra*a.Rib[i] + aa*a.Abd[i]
	}
	e0, e1 := a.Events[0], a.Events[1]
	breath := exc(sum, 20, 60)
	if s := exc(sum, e0.Start+2, e0.End-2); s > 0.15*breath || exc(a.Rib, e0.Start+2, e0.End-2) < 0.3*exc(a.Rib, 20, 60) {
		t.Errorf("obstructive apnea: sum excursion %.3f (breathing %.3f), rib excursion %.3f", s, breath, exc(a.Rib, e0.Start+2, e0.End-2))
	}
	if r := exc(a.Rib, e1.Start+2, e1.End-2); r > 0.2*exc(a.Rib, 20, 60) {
		t.Errorf("central apnea: rib band still moves by %.3f", r)
	}
	// SpO2 dips after events (1 Hz).
	if len(a.SpO2) != int(math.Ceil(a.DurationS())) || a.SpO2[0] != 97 {
		t.Fatalf("SpO2 %d samples starting %v", len(a.SpO2), a.SpO2[0])
	}
	if lo := a.SpO2[int(e0.End)+20]; lo > 94 {
		t.Errorf("SpO2 20 s after the apnea %v, want a dip of 3 %% or more", lo)
	}
}

func TestBreathTrailDay(t *testing.T) {
	// The demo's day: about two hours; minute ventilation in the hard
	// repeats toward 100 L/min (exercise physiology, common practice);
	// apneas only in the nap; quiet rest about 7 L/min.
	rec, err := BreathSimulate(BreathConfig{RateHz: 50, Seed: 1, Segments: BreathTrailDay()})
	if err != nil {
		t.Fatal(err)
	}
	if d := rec.DurationS(); d < 6000 || d > 8000 {
		t.Errorf("duration %v s, want about 2 h", d)
	}
	ve := func(label string, minRate float64) float64 {
		var v, tt float64
		for _, b := range rec.Breaths {
			for i, s := range rec.Segments {
				if s.Label == label && s.RatePerMin >= minRate && b.Onset >= rec.SegmentStart[i] && b.Onset < rec.SegmentStart[i]+s.DurationS {
					v += b.TidalL
					tt += b.EndExp - b.Onset + b.PauseS
				}
			}
		}
		return 60 * v / tt
	}
	if v := ve("intervals", 40); v < 85 || v > 115 {
		t.Errorf("hard-repeat ventilation %.1f L/min, want toward 100", v)
	}
	if v := ve("rest", 0); v < 5 || v > 10 {
		t.Errorf("rest ventilation %.1f L/min", v)
	}
	napStart := 0.0
	for i, s := range rec.Segments {
		if s.Label == "nap" {
			napStart = rec.SegmentStart[i]
			break
		}
	}
	n := 0
	for _, e := range rec.Events {
		if e.Start < napStart {
			t.Errorf("event %+v before the nap", e)
		}
		if e.Kind == BreathObstructiveApnea {
			n++
		}
	}
	if n < 3 {
		t.Errorf("%d obstructive apneas in the nap, want several", n)
	}
}

func TestBreathBadConfig(t *testing.T) {
	for _, cfg := range []BreathConfig{
		{RateHz: 0, Segments: BreathQuiet(10)},
		{RateHz: 50},
		{RateHz: 50, Segments: []BreathSegment{{DurationS: -1}}},
		{RateHz: 50, Segments: []BreathSegment{{DurationS: 10, RatePerMin: 500}}},
		{RateHz: 50, Segments: []BreathSegment{{DurationS: math.NaN()}}},
	} {
		if _, err := BreathSimulate(cfg); err == nil {
			t.Errorf("config %+v accepted", cfg)
		}
	}
}

func TestBreathBandOff(t *testing.T) {
	rec, err := BreathSimulate(BreathConfig{RateHz: 10, Seed: 1, Segments: BreathQuiet(60), RibOff: []BreathSpan{{Start: 20, End: 25}}})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < len(rec.Rib); i++ {
		off := i >= 200 && i < 250
		if math.IsNaN(rec.Rib[i]) != off || math.IsNaN(rec.Abd[i]) {
			t.Fatalf("sample %d: rib %v abd %v (rib off 20-25 s only)", i, rec.Rib[i], rec.Abd[i])
		}
	}
}
