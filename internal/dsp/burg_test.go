package dsp

import (
	"errors"
	"math"
	"testing"
)

// AR(1) x_n = 0.9 x_{n-1} + e_n, sigma_e = 1, N = 1e4: a1 ~ -0.9 +- 0.02,
// PSD(0) = 2/(fs 0.01) (methods 2.7, derived), integral = 1/(1-0.81) (derived).
func TestBurgAR1(t *testing.T) {
	e := noise(9, 10000)
	x := make([]float64, len(e))
	for i := range x {
		x[i] = e[i]
		if i > 0 {
			x[i] += 0.9 * x[i-1]
		}
	}
	a, v, err := Burg(x, 1)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(a[0]+0.9) > 0.02 {
		t.Errorf("a1 = %v, want -0.9 +- 0.02 (derived)", a[0])
	}
	if math.Abs(v-1) > 0.05 {
		t.Errorf("noise variance %v, want 1", v)
	}
	const fs = 4.0
	exact := ARSpectrum(nil, []float64{-0.9}, 1, fs, []float64{0})[0]
	if want := 2 / (fs * 0.01); math.Abs(exact-want) > 1e-9*want {
		t.Errorf("exact AR(1) PSD(0) = %v, want %v (derived)", exact, want)
	}
	var fr []float64
	const nf = 20000
	for k := 0; k < nf; k++ {
		fr = append(fr, (float64(k)+0.5)*fs/2/nf)
	}
	var s float64
	for _, p := range ARSpectrum(nil, []float64{-0.9}, 1, fs, fr) {
		s += p * fs / 2 / nf
	}
	if want := 1 / (1 - 0.81); math.Abs(s-want) > 1e-3*want {
		t.Errorf("integral of AR(1) PSD = %v, want variance %v (derived)", s, want)
	}
}

// AR(2) with poles at radius 0.95, angle pi/4: coefficients recovered.
func TestBurgAR2(t *testing.T) {
	r, th := 0.95, math.Pi/4
	a1, a2 := -2*r*math.Cos(th), r*r
	e := noise(10, 20000)
	x := make([]float64, len(e))
	for i := range x {
		x[i] = e[i]
		if i > 0 {
			x[i] -= a1 * x[i-1]
		}
		if i > 1 {
			x[i] -= a2 * x[i-2]
		}
	}
	a, _, err := Burg(x, 2)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(a[0]-a1) > 0.02 || math.Abs(a[1]-a2) > 0.02 {
		t.Errorf("a = %v, want [%v %v] (derived from the generating model)", a, a1, a2)
	}
}

func TestBurgBadInput(t *testing.T) {
	if _, _, err := Burg([]float64{1, 2, 3}, 3); !errors.Is(err, ErrSeries) {
		t.Errorf("order too high: %v", err)
	}
	if _, _, err := Burg(make([]float64, 10), 2); !errors.Is(err, ErrSeries) {
		t.Errorf("zero series: %v", err)
	}
}
