package hrv

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// sampEnDirect is the O(N^2 m) definition of Richman and Moorman 2000, the
// oracle for the pruned algorithm.
func sampEnDirect(x []float64, m int, r float64) (a, b int64) {
	n := len(x) - m
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			ok := true
			for k := 0; k < m; k++ {
				if math.Abs(x[i+k]-x[j+k]) > r {
					ok = false
					break
				}
			}
			if ok {
				b++
				if math.Abs(x[i+m]-x[j+m]) <= r {
					a++
				}
			}
		}
	}
	return a, b
}

// Exact small cases (methods.md 3.2, computed and hand-checked; Richman and
// Moorman 2000 definition).
func TestSampleEntropySmall(t *testing.T) {
	x := []float64{1, 2, 1, 2, 1, 2, 1, 2, 1, 2}
	a, b, _ := SampleEntropyCounts(x, 2, 0.5)
	if a != 12 || b != 12 {
		t.Errorf("1,2,1,2,...: A=%d B=%d, want 12 12", a, b)
	}
	if v, _ := SampleEntropy(x, 2, 0.5); v != 0 {
		t.Errorf("1,2,1,2,...: SampEn %v, want 0", v)
	}
	x = []float64{1, 2, 3, 1, 2, 3, 1, 2, 4, 1, 2, 3}
	a, b, _ = SampleEntropyCounts(x, 2, 0.5)
	v, _ := SampleEntropy(x, 2, 0.5)
	if a != 5 || b != 8 || !near(v, 0.470004, 1e-6) {
		t.Errorf("1,2,3,1,2,3,1,2,4,1,2,3: A=%d B=%d SampEn %v, want 5 8 0.470004", a, b, v)
	}
	c := make([]float64, 20)
	a, b, _ = SampleEntropyCounts(c, 2, 0.1)
	if want := int64(18 * 17 / 2); a != want || b != want {
		t.Errorf("constant: A=%d B=%d, want C(N-m,2) = %d", a, b, want)
	}
	inc := []float64{1, 2, 3, 4, 5, 6, 7, 8}
	if v, err := SampleEntropy(inc, 2, 0.5); !math.IsNaN(v) || !errors.Is(err, ErrUndefined) {
		t.Errorf("increasing: %v %v, want NaN ErrUndefined", v, err)
	}
}

// The pruned count equals the direct definition exactly, including
// quantised data with many ties at distance exactly r (1 ms quantisation is
// the RR case, methods.md 3.2).
func TestSampleEntropyExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 12))
	for trial := 0; trial < 40; trial++ {
		n := 50 + rng.IntN(400)
		x := make([]float64, n)
		for i := range x {
			x[i] = math.Round(800 + 30*rng.NormFloat64())
		}
		m := 1 + rng.IntN(3)
		r := float64(rng.IntN(12))
		if trial%2 == 1 {
			// continuous values on a lattice of r: many distances exactly r
			// and values on cell edges
			r = 0.5 + 5*rng.Float64()
			for i := range x {
				x[i] = 800 + r*math.Round(6*rng.NormFloat64())
				if i%3 == 0 {
					x[i] += rng.NormFloat64()
				}
			}
		}
		a, b, err := SampleEntropyCounts(x, m, r)
		if err != nil {
			t.Fatal(err)
		}
		wa, wb := sampEnDirect(x, m, r)
		if a != wa || b != wb {
			t.Fatalf("n=%d m=%d r=%v: A=%d B=%d, direct %d %d", n, m, r, a, b, wa, wb)
		}
		if g, ok := phiCountsGrid(x, n-m+1, m, r); ok {
			s := phiCountsSorted(x, n-m+1, m, r)
			slices.Sort(g)
			slices.Sort(s)
			if !slices.Equal(g, s) {
				t.Fatalf("n=%d m=%d r=%v: ApEn grid counts differ from the sorted scan", n, m, r)
			}
		}
	}
}

// Gaussian white noise: SampEn -> -ln(erf(r/(2 sigma))) = 2.1851 at
// r = 0.2 SD; uniform noise 2.1880 (methods.md 3.2, derived from Richman and
// Moorman's conditional-probability form). Tolerance +-0.05 at N = 3000 as
// methods.md advises.
func TestSampleEntropyWhiteNoise(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 1))
	g := make([]float64, 3000)
	u := make([]float64, 3000)
	for i := range g {
		g[i] = rng.NormFloat64()
		u[i] = rng.Float64()
	}
	want := -math.Log(math.Erf(0.1))
	if v, _ := SampleEntropy(g, 2, 0.2*sd(g, Sample)); !near(v, want, 0.05) {
		t.Errorf("Gaussian: SampEn %v, want %v +- 0.05 (derived)", v, want)
	}
	rho := 0.2 / math.Sqrt(12)
	wantU := -math.Log(2*rho - rho*rho)
	if v, _ := SampleEntropy(u, 2, 0.2*sd(u, Sample)); !near(v, wantU, 0.05) {
		t.Errorf("uniform: SampEn %v, want %v +- 0.05 (derived)", v, wantU)
	}
}

// ApEn check values (methods.md 3.3, computed; Pincus 1991 definition).
func TestApproximateEntropy(t *testing.T) {
	for _, c := range []struct {
		x    []float64
		want float64
	}{
		{[]float64{5, 5, 5, 5, 5, 5, 5, 5}, 0},
		{[]float64{1, 2, 1, 2, 1, 2, 1, 2, 1, 2}, 0.006186},
		{[]float64{1, 2, 3, 1, 2, 3, 1, 2, 4, 1, 2, 3}, 0.227603},
	} {
		v, err := ApproximateEntropy(c.x, 2, 0.5)
		if err != nil || !near(v, c.want, 1e-6) {
			t.Errorf("ApEn(%v) = %v (%v), want %v (methods.md 3.3, computed)", c.x, v, err, c.want)
		}
	}
	if _, err := ApproximateEntropy([]float64{1, 2, 3}, 2, 0.5); !errors.Is(err, ErrTooFew) {
		t.Errorf("too short: %v", err)
	}
}

// DFA (Peng et al. 1995): white noise alpha2 ~ 0.5, Brownian motion ~ 1.5
// (standard asymptotics; methods.md 3.4 computed alpha2 0.51 / 1.49 and
// alpha1 ~ 0.58 for white noise with this estimator, N = 65536).
func TestDFAWhiteAndBrownian(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 2))
	w := make([]float64, 65536)
	b := make([]float64, len(w))
	s := 0.0
	for i := range w {
		w[i] = rng.NormFloat64()
		s += w[i]
		b[i] = s
	}
	a2w, _ := DFA(w, 16, 64)
	a2b, _ := DFA(b, 16, 64)
	a1w, _ := DFA(w, 4, 16)
	if !near(a2w, 0.5, 0.05) || !near(a2b, 1.5, 0.05) {
		t.Errorf("alpha2 white %v Brownian %v, want 0.5 / 1.5 +- 0.05", a2w, a2b)
	}
	if !near(a1w, 0.58, 0.03) {
		t.Errorf("alpha1 white %v, want ~0.58 (small-scale bias, methods.md 3.4 computed)", a1w)
	}
	// Invariant to adding a constant and to a positive scale (methods.md 3.4).
	y := make([]float64, 2000)
	for i := range y {
		y[i] = 3*w[i] + 700
	}
	a, _ := DFA(w[:2000], 4, 16)
	c, _ := DFA(y, 4, 16)
	if !near(a, c, 1e-9) {
		t.Errorf("affine invariance: %v vs %v", a, c)
	}
	// The variants estimate the same exponent (methods.md 3.4 options).
	for _, o := range []DFAOptions{{Sizes: 12}, {BothEnds: true}, {Sizes: 12, BothEnds: true}} {
		o.MinBox, o.MaxBox = 16, 64
		if v, err := DFAWith(b, o); err != nil || !near(v, 1.5, 0.05) {
			t.Errorf("%+v: Brownian alpha2 %v (%v), want 1.5 +- 0.05", o, v, err)
		}
		if v, err := DFAWith(w, o); err != nil || !near(v, 0.5, 0.05) {
			t.Errorf("%+v: white alpha2 %v (%v), want 0.5 +- 0.05", o, v, err)
		}
	}
	if _, err := DFAWith(w, DFAOptions{MinBox: 4, MaxBox: 16, Sizes: 1}); !errors.Is(err, ErrInput) {
		t.Errorf("one size: %v", err)
	}
	if v, err := DFA(make([]float64, 100), 4, 16); !math.IsNaN(v) || !errors.Is(err, ErrUndefined) {
		t.Errorf("flat: %v %v, want NaN ErrUndefined", v, err)
	}
	if _, err := DFA(w[:10], 4, 16); !errors.Is(err, ErrTooFew) {
		t.Errorf("short: %v", err)
	}
}

// Poincare identities (Brennan et al. 2001): SD1^2 = SDSD^2 / 2 exactly with
// the same estimator; SD2^2 = 2 SDNN^2 - SDSD^2/2 up to O(1/N).
func TestPoincareIdentities(t *testing.T) {
	nn := randomNN(15, 2000)
	sd1, sd2, _ := Poincare(nn, Sample)
	sdsd, _ := SDSD(nn, Sample)
	sdnn, _ := SDNN(nn, Sample)
	if !near(sd1*sd1, sdsd*sdsd/2, 1e-9*sdsd*sdsd) {
		t.Errorf("SD1^2 %v, SDSD^2/2 %v", sd1*sd1, sdsd*sdsd/2)
	}
	want := 2*sdnn*sdnn - sdsd*sdsd/2
	if !near(sd2*sd2, want, 0.01*want) {
		t.Errorf("SD2^2 %v, 2 SDNN^2 - SDSD^2/2 = %v", sd2*sd2, want)
	}
}
