package hrv

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

func alternating(n int) []float64 {
	nn := make([]float64, n)
	for i := range nn {
		nn[i] = 800
		if i%2 == 1 {
			nn[i] = 850
		}
	}
	return nn
}

// methods.md 2.7: NN alternating 800, 850, ... (N = 300), Task Force 1996
// definitions; values derived (and computed in methods.md).
func TestAlternatingSeries(t *testing.T) {
	nn := alternating(300)
	m, _ := MeanNN(nn)
	sdp, _ := SDNN(nn, Population)
	sds, _ := SDNN(nn, Sample)
	rm, _ := RMSSD(nn)
	ssd, _ := SDSD(nn, Sample)
	_, c50, _ := PNN(nn, 50, PNNOptions{})
	sd1, sd2, _ := Poincare(nn, Sample)
	for _, c := range []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"mean", m, 825, 1e-9},        // derived
		{"SDNN pop", sdp, 25.0, 1e-9}, // derived
		{"SDNN sample", sds, 25.04, 0.005},
		{"RMSSD", rm, 50.0, 1e-9}, // derived
		{"SDSD sample", ssd, 50.08, 0.005},
		{"NN50", float64(c50), 0, 0}, // differences are exactly 50, not > 50
		{"SD1", sd1, 35.41, 0.005},   // SDSD/sqrt 2, Brennan et al. 2001
		{"SD2", sd2, 0, 1e-9},        // mirror-symmetric about the identity line
	} {
		if !near(c.got, c.want, c.tol) {
			t.Errorf("%s = %v, want %v +- %v (methods.md 2.7)", c.name, c.got, c.want, c.tol)
		}
	}
}

// methods.md 2.7: all NN equal -> SDNN = RMSSD = SDSD = 0, NN50 = 0,
// triangular index 1 (derived).
func TestConstantSeries(t *testing.T) {
	nn := make([]float64, 120)
	for i := range nn {
		nn[i] = 1000
	}
	a, _ := SDNN(nn, Sample)
	b, _ := RMSSD(nn)
	c, _ := SDSD(nn, Sample)
	p, n50, _ := PNN(nn, 50, PNNOptions{})
	ti, _ := TriangularIndex(nn, 0)
	if a != 0 || b != 0 || c != 0 || p != 0 || n50 != 0 || ti != 1 {
		t.Errorf("constant: SDNN %v RMSSD %v SDSD %v pNN50 %v NN50 %d tri %v; want 0 0 0 0 0 1 (derived)", a, b, c, p, n50, ti)
	}
}

// NN spread uniformly over k histogram bins -> triangular index = k (derived).
func TestTriangularIndexUniform(t *testing.T) {
	for _, k := range []int{1, 5, 17} {
		var nn []float64
		for b := 0; b < k; b++ {
			for j := 0; j < 10; j++ {
				nn = append(nn, (float64(100+b)+0.1+0.08*float64(j))*HistBinMs)
			}
		}
		got, err := TriangularIndex(nn, 0)
		if err != nil || got != float64(k) {
			t.Errorf("k = %d: triangular index %v (%v), want %d (derived)", k, got, err, k)
		}
	}
}

// Histogram exactly triangular from 700 to 900 ms -> TINN = 200 ms +- one
// bin (methods.md 2.7, derived).
func TestTINNTriangle(t *testing.T) {
	var nn []float64
	const peak = 60.0
	for b := int(math.Floor(700 / HistBinMs)); b <= int(math.Floor(900/HistBinMs)); b++ {
		c := (float64(b) + 0.5) * HistBinMs
		h := peak * (1 - math.Abs(c-800)/100)
		for j := 0; j < int(math.Round(h)); j++ {
			nn = append(nn, c)
		}
	}
	got, err := TINN(nn, 0)
	if err != nil || !near(got, 200, HistBinMs) {
		t.Errorf("TINN = %v (%v), want 200 +- %v ms (derived)", got, err, HistBinMs)
	}
}

// pNNx variants and the strict inequality (Task Force 1996 wording; N vs
// N-1 denominator is common practice).
func TestPNNVariants(t *testing.T) {
	nn := []float64{800, 851, 800, 860, 860, 790, 840.5} // diffs 51 -51 60 0 -70 50.5
	p, c, _ := PNN(nn, 50, PNNOptions{})
	if c != 5 || !near(p, 100*5.0/7, 1e-12) {
		t.Errorf("any pair: %d, %v%%; want 5, %v (hand count)", c, p, 100*5.0/7)
	}
	p, c, _ = PNN(nn, 50, PNNOptions{Denominator: PerDifference})
	if c != 5 || !near(p, 100*5.0/6, 1e-12) {
		t.Errorf("per difference: %d, %v%%", c, p)
	}
	if _, c, _ = PNN(nn, 50, PNNOptions{Pairs: FirstLonger}); c != 2 {
		t.Errorf("first longer: %d, want 2 (hand count)", c)
	}
	if _, c, _ = PNN(nn, 50, PNNOptions{Pairs: SecondLonger}); c != 3 {
		t.Errorf("second longer: %d, want 3 (hand count)", c)
	}
}

// NN_i = 1000 + 50 sin(2 pi 0.1 t_i) over 300 s: SDNN ~ A/sqrt 2 = 35.36,
// RMSSD ~ sqrt 2 A sin(pi f T) = 21.85 (methods.md 2.7, derived; computed on
// beat-timed series 35.37 / 21.83).
func TestSinusoidTimeDomain(t *testing.T) {
	for _, c := range []struct {
		a, f             float64
		sdnn, rmssd, tol float64
	}{
		{50, 0.1, 35.36, 21.85, 0.1},
		{30, 0.25, 21.21, 30.00, 0.1},
	} {
		nn, _ := sinusoidNN(300, []float64{c.a}, []float64{c.f})
		s, _ := SDNN(nn, Sample)
		r, _ := RMSSD(nn)
		if !near(s, c.sdnn, c.tol) || !near(r, c.rmssd, c.tol) {
			t.Errorf("A=%v f=%v: SDNN %v RMSSD %v, want %v / %v (derived)", c.a, c.f, s, r, c.sdnn, c.rmssd)
		}
	}
}

// sinusoidNN builds NN_i = 1000 + sum A sin(2 pi f t) with t the time of the
// beat starting the interval, for dur seconds; returns NN and end times.
func sinusoidNN(dur float64, amp, freq []float64) (nn, end []float64) {
	t := 0.0
	for t < dur {
		v := 1000.0
		for k := range amp {
			v += amp[k] * math.Sin(2*math.Pi*freq[k]*t)
		}
		t += v / 1000
		nn = append(nn, v)
		end = append(end, t)
	}
	return nn, end
}

// SDANN and SDNN index on segments with known means and spreads (derived):
// segment k holds 250 intervals alternating m_k -+ 10 ms (population SD
// exactly 10, mean exactly m_k) at end times well inside the segment, so
// SDNN index = 10 and SDANN = SD of the m_k (Task Force 1996 definitions).
func TestSegments(t *testing.T) {
	means := []float64{750, 1000, 1250}
	var nn, end []float64
	for k, m := range means {
		for j := 0; j < 250; j++ {
			v := m - 10
			if j%2 == 1 {
				v = m + 10
			}
			nn = append(nn, v)
			end = append(end, 300*float64(k)+1+float64(j))
		}
	}
	// one interval in a fourth segment so that the third is complete
	nn = append(nn, 800)
	end = append(end, 905)
	sdann, idx, k, err := Segments(nn, end, 300, Population)
	if err != nil {
		t.Fatal(err)
	}
	if k != 3 {
		t.Fatalf("%d segments, want 3", k)
	}
	wantAnn := sd(means, Population)
	if !near(sdann, wantAnn, 1e-9) || !near(idx, 10, 1e-9) {
		t.Errorf("SDANN %v SDNN index %v, want %v and 10 (derived)", sdann, idx, wantAnn)
	}
	if _, _, _, err := Segments(nn[:300], end[:300], 300, Sample); !errors.Is(err, ErrTooFew) {
		t.Errorf("one segment: %v, want ErrTooFew", err)
	}
}

func TestTimeDomainBadInput(t *testing.T) {
	for name, nn := range map[string][]float64{
		"NaN":      {800, math.NaN(), 800},
		"Inf":      {800, math.Inf(1)},
		"zero":     {800, 0, 800},
		"negative": {800, -5, 800},
	} {
		if _, err := RMSSD(nn); !errors.Is(err, ErrInput) {
			t.Errorf("%s: RMSSD err %v, want ErrInput", name, err)
		}
		if _, err := SDNN(nn, Sample); !errors.Is(err, ErrInput) {
			t.Errorf("%s: SDNN err %v", name, err)
		}
	}
	if v, err := RMSSD([]float64{800}); !errors.Is(err, ErrTooFew) || !math.IsNaN(v) {
		t.Errorf("one interval: %v %v, want NaN ErrTooFew", v, err)
	}
	if _, err := SDNN(nil, Sample); !errors.Is(err, ErrTooFew) {
		t.Errorf("empty SDNN: %v", err)
	}
	if _, err := TINN([]float64{500, 500000}, 0); !errors.Is(err, ErrInput) {
		t.Errorf("huge range TINN: %v, want ErrInput (bounded histogram)", err)
	}
	if _, err := TriangularIndex([]float64{800}, -1); !errors.Is(err, ErrInput) {
		t.Errorf("negative bin: %v", err)
	}
}

func randomNN(seed uint64, n int) []float64 {
	rng := rand.New(rand.NewPCG(seed, 99))
	nn := make([]float64, n)
	v := 850.0
	for i := range nn {
		v = 850 + 0.8*(v-850) + 25*rng.NormFloat64()
		nn[i] = v
	}
	return nn
}

// Mean HR is 60000 / mean NN; min and max come from the longest and
// shortest interval (derived from the definitions in HeartRate's doc).
func TestHeartRate(t *testing.T) {
	mean, lo, hi, err := HeartRate([]float64{600, 1000, 750})
	if err != nil || !near(mean, 60000/(2350.0/3), 1e-9) || !near(lo, 60, 1e-12) || !near(hi, 100, 1e-12) {
		t.Errorf("HeartRate = %v %v %v (%v), want %v 60 100", mean, lo, hi, err, 60000/(2350.0/3))
	}
}
