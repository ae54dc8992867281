package dsp

import (
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func TestSmoothnessPriorsChecks(t *testing.T) {
	z := noise(1, 200)
	// lambda = 0: the trend is z itself (methods 2.7, derived).
	tr, err := SmoothnessTrend(nil, z, 0)
	if err != nil {
		t.Fatal(err)
	}
	for i := range z {
		if tr[i] != z[i] {
			t.Fatalf("lambda=0 trend[%d] = %v, want z = %v", i, tr[i], z[i])
		}
	}
	// A straight line is in the null space of D2: z_stat = 0 for any lambda (derived).
	line := make([]float64, 300)
	for i := range line {
		line[i] = 3 + 0.25*float64(i)
	}
	for _, lam := range []float64{1, 10, 500} {
		st, err := DetrendSmoothness(nil, line, lam)
		if err != nil {
			t.Fatal(err)
		}
		for i, v := range st {
			if math.Abs(v) > 1e-7 {
				t.Fatalf("lambda=%v: line residual[%d] = %v, want 0 (derived)", lam, i, v)
			}
		}
	}
	// lambda -> infinity: the trend tends to the least-squares line (derived).
	// N = 50, lambda = 1e5: lambda^2 times the smallest non-zero eigenvalue of
	// D2'D2 (~ (pi/N)^4) is ~1.6e5, so the limit is reached to ~1e-5.
	z = z[:50]
	st, _ := DetrendSmoothness(nil, z, 1e5)
	lin := DetrendLinear(nil, z)
	for i := range z {
		if math.Abs(st[i]-lin[i]) > 1e-3 {
			t.Fatalf("lambda=1e5: z_stat[%d] = %v, linear-detrend %v (derived limit)", i, st[i], lin[i])
		}
	}
}

// The banded solve equals the dense formula (I + lambda^2 D2'D2)^-1 z of
// Tarvainen et al. 2002, solved with gonum.
func TestSmoothnessPriorsDense(t *testing.T) {
	const n, lam = 60, 7.5
	z := noise(2, n)
	d2 := mat.NewDense(n-2, n, nil)
	for r := 0; r < n-2; r++ {
		d2.Set(r, r, 1)
		d2.Set(r, r+1, -2)
		d2.Set(r, r+2, 1)
	}
	var a mat.Dense
	a.Mul(d2.T(), d2)
	a.Scale(lam*lam, &a)
	for i := 0; i < n; i++ {
		a.Set(i, i, a.At(i, i)+1)
	}
	var want mat.VecDense
	if err := want.SolveVec(&a, mat.NewVecDense(n, append([]float64(nil), z...))); err != nil {
		t.Fatal(err)
	}
	got, err := SmoothnessTrend(nil, z, lam)
	if err != nil {
		t.Fatal(err)
	}
	for i := range got {
		if !relClose(got[i], want.AtVec(i), 1e-9, 1e-12) {
			t.Fatalf("trend[%d] = %v, dense solve %v", i, got[i], want.AtVec(i))
		}
	}
}

// Away from the ends the stationary part is a high-pass with
// |H(f)| = l^2 16 sin^4(pi f/fs) / (1 + l^2 16 sin^4(pi f/fs)) (derived in
// methods 2.6 from Tarvainen et al. 2002).
func TestSmoothnessPriorsResponse(t *testing.T) {
	const n, fs, lam = 4000, 4.0, 10.0
	for _, f := range []float64{0.1, 0.2, 0.3, 0.6} {
		z := make([]float64, n)
		for i := range z {
			z[i] = math.Sin(2 * math.Pi * f * float64(i) / fs)
		}
		st, _ := DetrendSmoothness(nil, z, lam)
		s4 := math.Pow(math.Sin(math.Pi*f/fs), 4)
		h := lam * lam * 16 * s4 / (1 + lam*lam*16*s4)
		// amplitude over the middle half by projection on the input sinusoid
		var num, den float64
		for i := n / 4; i < 3*n/4; i++ {
			num += st[i] * z[i]
			den += z[i] * z[i]
		}
		if g := num / den; math.Abs(g-h) > 0.005 {
			t.Errorf("f=%v Hz: gain %v, want %v (derived)", f, g, h)
		}
	}
}

func TestDetrendBadInput(t *testing.T) {
	if _, err := SmoothnessTrend(nil, []float64{1, math.NaN(), 2}, 1); !errors.Is(err, ErrSeries) {
		t.Errorf("NaN sample: %v", err)
	}
	if _, err := SmoothnessTrend(nil, []float64{1, 2, 3}, -1); !errors.Is(err, ErrSeries) {
		t.Errorf("negative lambda: %v", err)
	}
}
