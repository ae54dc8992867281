package ecg_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/window"
)

// beatsFromRR turns intervals (ms) into beat times starting at 1 s.
func beatsFromRR(rr []float64) []float64 {
	t := []float64{1}
	for _, v := range rr {
		t = append(t, t[len(t)-1]+v/1000)
	}
	return t
}

// jittered returns n intervals around base with a smooth respiratory
// modulation of 2.5 % (period 4.3 beats) and white jitter of SD sd (ms): a
// baseline with small jitter, as the methods reference 4.1 checks ask. White
// jitter alone is not a heart rhythm: with it the rules flag a percent or so
// of beats (a property of the thresholds, not of the data).
func jittered(n int, base, sd float64, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 7))
	rr := make([]float64, n)
	for i := range rr {
		rr[i] = base*(1+0.025*math.Sin(2*math.Pi*float64(i)/4.3)) + sd*rng.NormFloat64()
	}
	return rr
}

func fixesAt(nn ecg.NN) map[ecg.Fix]int {
	m := map[ecg.Fix]int{}
	for _, f := range nn.Fix {
		m[f]++
	}
	return m
}

func TestCleanConstant(t *testing.T) {
	// Methods reference 4.1 check (derived): constant RR -> nothing flagged.
	rr := make([]float64, 200)
	for i := range rr {
		rr[i] = 800
	}
	nn, err := ecg.CleanRR(beatsFromRR(rr), nil, ecg.NNOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(nn.Ms) != 200 || nn.CorrectedFraction(0, len(nn.Ms)) != 0 {
		t.Fatalf("%d NN, corrected %v; want 200, 0", len(nn.Ms), nn.CorrectedFraction(0, len(nn.Ms)))
	}
}

func TestCleanInjected(t *testing.T) {
	// Methods reference 4.1 checks (derived from the rules; constants from
	// memory): a missed beat is split, an extra detection merged, a premature
	// beat with a compensatory pause flagged ectopic.
	t.Run("missed", func(t *testing.T) {
		rr := jittered(300, 1000, 3, 1)
		rr[150] = 2000 + rr[150] - 1000
		rr = append(rr[:151], rr[152:]...) // one RR of twice the baseline
		nn, err := ecg.CleanRR(beatsFromRR(rr), nil, ecg.NNOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if nn.Counts.Missed != 1 || nn.Counts.Ectopic+nn.Counts.Long+nn.Counts.Short+nn.Counts.Extra != 0 {
			t.Fatalf("counts %+v, want exactly one missed", nn.Counts)
		}
		if f := fixesAt(nn); f[ecg.FixMissed] != 2 {
			t.Fatalf("fixes %v, want the interval split in two", f)
		}
		for i, f := range nn.Fix {
			if f == ecg.FixMissed && math.Abs(nn.Ms[i]-1000) > 40 {
				t.Errorf("split half %.1f ms, want about 1000", nn.Ms[i])
			}
		}
	})
	t.Run("extra", func(t *testing.T) {
		rr := jittered(300, 1000, 3, 2)
		v := rr[150]
		rr = append(rr[:150], append([]float64{0.4 * v, 0.6 * v}, rr[151:]...)...)
		nn, _ := ecg.CleanRR(beatsFromRR(rr), nil, ecg.NNOptions{})
		if nn.Counts.Extra != 1 || nn.Counts.Ectopic+nn.Counts.Long+nn.Counts.Short+nn.Counts.Missed != 0 {
			t.Fatalf("counts %+v, want exactly one extra", nn.Counts)
		}
		for i, f := range nn.Fix {
			if f == ecg.FixExtra && math.Abs(nn.Ms[i]-v) > 1e-9 {
				t.Errorf("merged %.3f ms, want %.3f", nn.Ms[i], v)
			}
		}
		if len(nn.Ms) != 300 {
			t.Errorf("%d NN, want 300 after merging", len(nn.Ms))
		}
	})
	t.Run("ectopic", func(t *testing.T) {
		rr := jittered(300, 1000, 3, 3)
		rr[150], rr[151] = 700, 1300
		nn, _ := ecg.CleanRR(beatsFromRR(rr), nil, ecg.NNOptions{})
		if nn.Counts.Ectopic != 1 || nn.Counts.Long+nn.Counts.Short+nn.Counts.Missed+nn.Counts.Extra != 0 {
			t.Fatalf("counts %+v, want exactly one ectopic", nn.Counts)
		}
		if nn.Fix[150] != ecg.FixEctopic || nn.Fix[151] != ecg.FixEctopic {
			t.Fatalf("fix at 150, 151: %v %v", nn.Fix[150], nn.Fix[151])
		}
		for _, i := range []int{150, 151} {
			if math.Abs(nn.Ms[i]-1000) > 40 {
				t.Errorf("interpolated %.1f ms at %d, want about 1000", nn.Ms[i], i)
			}
		}
		if cf := nn.CorrectedFraction(100, 200); math.Abs(cf-0.02) > 1e-12 {
			t.Errorf("corrected fraction %v, want 2/100", cf)
		}
	})
}

func TestCleanPercentRule(t *testing.T) {
	// Methods reference 4.2 check (derived): 20 % rule on 1000, 1000, 750,
	// 1250, 1000 against the last accepted interval removes 750 and 1250;
	// against the raw previous interval it removes 750 and 1250 too (1250 vs
	// 750 is +67 %), and then 1000 vs 1250 (-20 %) is kept.
	rr := []float64{1000, 1000, 750, 1250, 1000}
	nn, err := ecg.CleanRR(beatsFromRR(rr), nil, ecg.NNOptions{Method: ecg.NNPercent})
	if err != nil {
		t.Fatal(err)
	}
	if nn.Counts.Percent != 2 || len(nn.Ms) != 3 || nn.Ms[2] != 1000 {
		t.Fatalf("vs accepted: %+v %v", nn.Counts, nn.Ms)
	}
	nn, _ = ecg.CleanRR(beatsFromRR(rr), nil, ecg.NNOptions{Method: ecg.NNPercent, PercentVsPrevious: true})
	if nn.Counts.Percent != 2 || len(nn.Ms) != 3 {
		t.Fatalf("vs previous: %+v %v", nn.Counts, nn.Ms)
	}
}

func TestCleanGapsAndLimits(t *testing.T) {
	rr := jittered(100, 800, 5, 4)
	bt := beatsFromRR(rr)
	// A gap between beats 40 and 41: that pair forms no interval.
	gap := []window.Interval{{Start: bt[40] + 0.1, End: bt[41] - 0.1}}
	nn, err := ecg.CleanRR(bt, gap, ecg.NNOptions{Method: ecg.NNLimitsOnly, MaxRRms: 805})
	if err != nil {
		t.Fatal(err)
	}
	over := 0
	for _, v := range rr {
		if v > 805 {
			over++
		}
	}
	if nn.Counts.AcrossGap != 1 || nn.Counts.Intervals != 99 {
		t.Errorf("counts %+v, want 1 across the gap and 99 intervals", nn.Counts)
	}
	if nn.Counts.OutOfRange+len(nn.Ms) != 99 || len(nn.RemovedS) != nn.Counts.OutOfRange {
		t.Errorf("out of range %d + kept %d != 99 (removed list %d)", nn.Counts.OutOfRange, len(nn.Ms), len(nn.RemovedS))
	}
	if _, err := ecg.CleanRR([]float64{1, 1}, nil, ecg.NNOptions{}); !errors.Is(err, ecg.ErrInput) {
		t.Errorf("non-increasing times: %v", err)
	}
	if _, err := ecg.CleanRR([]float64{1, math.NaN()}, nil, ecg.NNOptions{}); !errors.Is(err, ecg.ErrInput) {
		t.Errorf("NaN time: %v", err)
	}
	if _, err := ecg.CleanRR(bt, nil, ecg.NNOptions{MinRRms: 900, MaxRRms: 800}); !errors.Is(err, ecg.ErrOptions) {
		t.Errorf("limits reversed: %v", err)
	}
	if nn, err := ecg.CleanRR(nil, nil, ecg.NNOptions{}); err != nil || len(nn.Ms) != 0 {
		t.Errorf("no beats: %v %v", nn, err)
	}
}
