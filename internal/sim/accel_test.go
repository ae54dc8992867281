package sim

import (
	"errors"
	"math"
	"testing"
)

func TestAccelDeterministicAndTruth(t *testing.T) {
	segs := []AccelSegment{
		{Activity: AccelStanding, DurationS: 20},
		{Activity: AccelWalking, DurationS: 60, CadenceSPM: 120},
		{Activity: AccelSupine, DurationS: 20},
	}
	a, err := AccelSimulate(segs, AccelConfig{RateHz: 50, Seed: 7})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := AccelSimulate(segs, AccelConfig{RateHz: 50, Seed: 7})
	if len(a.X) != 100*50 {
		t.Fatalf("%d samples, want 5000", len(a.X))
	}
	for i := range a.X {
		if a.X[i] != b.X[i] || a.Y[i] != b.Y[i] || a.Z[i] != b.Z[i] {
			t.Fatalf("sample %d differs between runs with the same seed", i)
		}
	}
	// 60 s at 120 steps/min with the first step half a period in and none in
	// the last period: 119 steps give or take the 2 % interval jitter
	// (derived from the schedule rule above).
	if n := len(a.Steps); n < 116 || n > 121 {
		t.Errorf("%d steps in a 60 s walk at 120/min", n)
	}
	// Still segments read 1 g along their gravity direction (derived from the
	// posture table: standing is upright, supine puts gravity on +z).
	mean := func(v []float64, lo, hi int) float64 {
		s := 0.0
		for _, x := range v[lo:hi] {
			s += x
		}
		return s / float64(hi-lo)
	}
	if y := mean(a.Y, 250, 900); math.Abs(y-math.Cos(3*math.Pi/180)) > 0.01 {
		t.Errorf("standing mean y %.4f g", y)
	}
	if z := mean(a.Z, 4500, 5000); math.Abs(z-math.Cos(10*math.Pi/180)) > 0.01 {
		t.Errorf("supine mean z %.4f g", z)
	}
	if act, ok := a.ActivityAt(30); !ok || act != AccelWalking {
		t.Errorf("activity at 30 s: %v %v", act, ok)
	}
	if n := a.StepsIn(20, 80); n != len(a.Steps) {
		t.Errorf("steps in the walking segment %d of %d", n, len(a.Steps))
	}
}

func TestAccelTrailDay(t *testing.T) {
	total := 0.0
	for _, s := range AccelTrailDay() {
		total += s.DurationS
	}
	if total != 7200 { // the demo is a two-hour recording (DayDurationS)
		t.Errorf("trail day lasts %v s, want 7200", total)
	}
}

func TestAccelBadSchedule(t *testing.T) {
	for _, segs := range [][]AccelSegment{nil, {{Activity: AccelWalking, DurationS: -1}}, {{Activity: AccelWalking, DurationS: math.NaN()}}} {
		if _, err := AccelSimulate(segs, AccelConfig{}); !errors.Is(err, ErrAccelSchedule) {
			t.Errorf("%v: error %v, want ErrAccelSchedule", segs, err)
		}
	}
	if _, err := AccelSimulate([]AccelSegment{{DurationS: 1}}, AccelConfig{RateHz: math.Inf(1)}); !errors.Is(err, ErrAccelSchedule) {
		t.Errorf("infinite rate: %v", err)
	}
}
