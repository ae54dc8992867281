package dsp

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// Evenly sampled: Lomb-Scargle equals the classical periodogram
// |sum y e^{-iwt}|^2 / N at the Fourier frequencies (methods 2.7, derived).
func TestLombEvenEqualsPeriodogram(t *testing.T) {
	const n = 64
	y := noise(6, n)
	var m float64
	for _, v := range y {
		m += v
	}
	m /= n
	tt := make([]float64, n)
	for i := range tt {
		tt[i] = float64(i)
		y[i] -= m
	}
	for k := 1; k < n/2; k++ {
		w := 2 * math.Pi * float64(k) / n
		got, err := LombScargle(nil, tt, y, []float64{w})
		if err != nil {
			t.Fatal(err)
		}
		var re, im float64
		for i, v := range y {
			re += v * math.Cos(w*tt[i])
			im -= v * math.Sin(w*tt[i])
		}
		if want := (re*re + im*im) / n; !relClose(got[0], want, 1e-9, 1e-12) {
			t.Errorf("k=%d: %v, periodogram %v", k, got[0], want)
		}
	}
}

// Cross-check against scipy.signal.lombscargle(t, y, omega) (unnormalised,
// precenter=False) on beat-timed uneven samples.
func TestLombScipy(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	var tt, y []float64
	for ti := 0.0; ti < 300; ti += 0.7 + 0.4*rng.Float64() {
		tt = append(tt, ti)
		y = append(y, 40*math.Sin(2*math.Pi*0.1*ti)+20*rng.NormFloat64())
	}
	var om []float64
	for f := 0.002; f <= 0.5; f += 0.002 {
		om = append(om, 2*math.Pi*f)
	}
	got, err := LombScargle(nil, tt, y, om)
	if err != nil {
		t.Fatal(err)
	}
	const script = `
import json, sys
import numpy as np
from scipy.signal import lombscargle
d = json.load(sys.stdin)
p = lombscargle(np.array(d["t"]), np.array(d["y"]), np.array(d["w"]))
print(json.dumps(p.tolist()))
`
	var want []float64
	refdata.Scipy(t, script, map[string]any{"t": tt, "y": y, "w": om}, &want)
	peak := 0.0
	for _, v := range want {
		peak = math.Max(peak, v)
	}
	for k := range got {
		if !relClose(got[k], want[k], 1e-8, 1e-12*peak) {
			t.Fatalf("omega %v: %v, scipy.signal.lombscargle %v", om[k], got[k], want[k])
		}
	}
}

func TestLombBadInput(t *testing.T) {
	if _, err := LombScargle(nil, []float64{0, 1}, []float64{1}, []float64{1}); !errors.Is(err, ErrSeries) {
		t.Errorf("mismatch: %v", err)
	}
	if _, err := LombScargle(nil, []float64{0, 1}, []float64{1, 2}, []float64{0}); !errors.Is(err, ErrSeries) {
		t.Errorf("zero frequency: %v", err)
	}
}

// The rotation-recurrence grid version equals the direct evaluation.
func TestLombGridEqualsDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	var tt, y []float64
	for ti := 3.0; ti < 600; ti += 0.5 + rng.Float64() {
		tt = append(tt, ti)
		y = append(y, rng.NormFloat64())
	}
	const w0, dw, n = 0.01, 0.004, 900
	om := make([]float64, n)
	for k := range om {
		om[k] = w0 + float64(k)*dw
	}
	want, err := LombScargle(nil, tt, y, om)
	if err != nil {
		t.Fatal(err)
	}
	got, err := LombScargleGrid(nil, tt, y, w0, dw, n)
	if err != nil {
		t.Fatal(err)
	}
	peak := 0.0
	for _, v := range want {
		peak = math.Max(peak, v)
	}
	for k := range want {
		if !relClose(got[k], want[k], 1e-9, 1e-12*peak) {
			t.Fatalf("omega %v: grid %v, direct %v", om[k], got[k], want[k])
		}
	}
	if _, err := LombScargleGrid(nil, tt, y, 0, dw, 3); !errors.Is(err, ErrSeries) {
		t.Errorf("zero first frequency: %v", err)
	}
}
