package dsp

import (
	"errors"
	"fmt"
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

// nnLike returns beat times (s, from 0) and mean-removed NN-like values
// (ms): a 1 s mean interval with LF (0.1 Hz) and HF (0.25 Hz) modulation,
// slow drift and noise, so the series is truly uneven.
func nnLike(seed uint64, n int) (tt, y []float64) {
	rng := rand.New(rand.NewPCG(seed, 5))
	ti := 0.0
	var mean float64
	for range n {
		nn := 1000 + 40*math.Sin(2*math.Pi*0.1*ti) + 25*math.Sin(2*math.Pi*0.25*ti) +
			30*math.Sin(2*math.Pi*0.01*ti) + 20*rng.NormFloat64()
		ti += nn / 1000
		tt = append(tt, ti)
		y = append(y, nn)
		mean += nn
	}
	mean /= float64(n)
	for i := range y {
		y[i] -= mean
	}
	return tt, y
}

// bandSums sums p over grid frequencies f_k = (k+1) df in the Task Force
// bands (VLF 0.003-0.04, LF 0.04-0.15, HF 0.15-0.4 Hz; Task Force 1996).
func bandSums(p []float64, df float64) [3]float64 {
	var s [3]float64
	edges := [4]float64{0.003, 0.04, 0.15, 0.4}
	for k, v := range p {
		f := float64(k+1) * df
		for b := range 3 {
			if f > edges[b] && f <= edges[b+1] {
				s[b] += v
			}
		}
	}
	return s
}

// The fast algorithm (Press and Rybicki 1989) approximates the exact
// Lomb-Scargle sums; its accuracy is measured against LombScargleGrid
// (itself checked against the direct form and scipy above) on an uneven
// NN-like series with the grid hrv uses (step 1/(4 T), up to 0.5 Hz). The
// bound 1e-3 on relative band-power error is the accuracy the feature
// tables need (common practice: band powers are reported to 3 digits); the
// measured errors are logged.
func TestLombFastMatchesGrid(t *testing.T) {
	tt, y := nnLike(21, 1200)
	span := tt[len(tt)-1] - tt[0]
	df := 1 / (4 * span)
	n := int(0.5 / df)
	want, err := LombScargleGrid(nil, tt, y, 2*math.Pi*df, 2*math.Pi*df, n)
	if err != nil {
		t.Fatal(err)
	}
	peak := 0.0
	for _, v := range want {
		peak = math.Max(peak, v)
	}
	wb := bandSums(want, df)
	var errs []float64
	for _, o := range []LombFastOptions{{}, {Order: 6}, {Order: 8, Oversample: 8}} {
		got, err := LombScargleFast(nil, tt, y, 2*math.Pi*df, n, o)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != n {
			t.Fatalf("%+v: %d values, want %d", o, len(got), n)
		}
		worst := 0.0
		for k := range want {
			worst = math.Max(worst, math.Abs(got[k]-want[k])/peak)
		}
		gb := bandSums(got, df)
		bandErr := 0.0
		for b := range wb {
			bandErr = math.Max(bandErr, math.Abs(gb[b]-wb[b])/wb[b])
		}
		t.Logf("options %+v (zero: default 4, 4): max |error|/peak %.2g, max relative band-power error %.2g", o, worst, bandErr)
		if bandErr > 1e-3 || worst > 1e-3 {
			t.Errorf("%+v: band error %.3g, pointwise %.3g of peak; want < 1e-3", o, bandErr, worst)
		}
		errs = append(errs, worst)
	}
	// Higher order and oversampling must not be less accurate (the point of
	// the options).
	if errs[2] > errs[0] {
		t.Errorf("order 8 x8 error %.3g above default's %.3g", errs[2], errs[0])
	}
}

// Cross-check of the fast algorithm against scipy.signal.lombscargle
// (Debian's scipy, exact direct sums) on a moderate uneven series.
func TestLombFastScipy(t *testing.T) {
	tt, y := nnLike(22, 700)
	span := tt[len(tt)-1] - tt[0]
	dw := 2 * math.Pi / (4 * span)
	n := int(2 * math.Pi * 0.5 / dw)
	om := make([]float64, n)
	for k := range om {
		om[k] = float64(k+1) * dw
	}
	got, err := LombScargleFast(nil, tt, y, dw, n, LombFastOptions{})
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
	if len(want) != n {
		t.Fatalf("scipy gave %d values, want %d", len(want), n)
	}
	peak := 0.0
	for _, v := range want {
		peak = math.Max(peak, v)
	}
	for k := range got {
		if math.Abs(got[k]-want[k]) > 1e-3*peak {
			t.Fatalf("omega %v: fast %v, scipy.signal.lombscargle %v (tolerance 1e-3 of peak)", om[k], got[k], want[k])
		}
	}
	df := dw / (2 * math.Pi)
	gb, wb := bandSums(got, df), bandSums(want, df)
	for b := range gb {
		if !relClose(gb[b], wb[b], 1e-3, 0) {
			t.Errorf("band %d: fast %v, scipy %v", b, gb[b], wb[b])
		}
	}
}

// Parseval (methods.md 2.6/2.7, derived): for white noise of variance s^2
// on uneven times, E[P] = s^2, so the one-sided density 2 T P integrates to
// ~ s^2 over (0, 1/(2 T)], T the mean interval. Checked for the fast form.
func TestLombFastParseval(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 1))
	var tt, y []float64
	ti, v := 0.0, 0.0
	for range 20000 {
		ti += 0.6 + 0.8*rng.Float64()
		tt = append(tt, ti)
		y = append(y, 30*rng.NormFloat64())
	}
	var m float64
	for _, x := range y {
		m += x
	}
	m /= float64(len(y))
	for i := range y {
		y[i] -= m
		v += y[i] * y[i]
	}
	v /= float64(len(y))
	tbar := (tt[len(tt)-1] - tt[0]) / float64(len(tt)-1)
	span := tt[len(tt)-1] - tt[0]
	df := 1 / (4 * span)
	n := int(1 / (2 * tbar) / df)
	p, err := LombScargleFast(nil, tt, y, 2*math.Pi*df, n, LombFastOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var s float64
	for _, x := range p {
		s += 2 * tbar * x * df
	}
	if !relClose(s, v, 0.05, 0) {
		t.Errorf("integral %v, variance %v (Parseval, derived)", s, v)
	}
}

func TestLombFastBadInput(t *testing.T) {
	tt, y := []float64{0, 1, 2}, []float64{1, -1, 0}
	for _, c := range []struct {
		name string
		t, y []float64
		step float64
		n    int
		o    LombFastOptions
	}{
		{"mismatch", tt, y[:2], 0.1, 4, LombFastOptions{}},
		{"one sample", tt[:1], y[:1], 0.1, 4, LombFastOptions{}},
		{"NaN", []float64{0, math.NaN(), 2}, y, 0.1, 4, LombFastOptions{}},
		{"zero step", tt, y, 0, 4, LombFastOptions{}},
		{"no points", tt, y, 0.1, 0, LombFastOptions{}},
		{"huge grid", tt, y, 0.1, 1 << 30, LombFastOptions{}},
		{"order 1", tt, y, 0.1, 4, LombFastOptions{Order: 1}},
		{"order 11", tt, y, 0.1, 4, LombFastOptions{Order: 11}},
	} {
		if _, err := LombScargleFast(nil, c.t, c.y, c.step, c.n, c.o); !errors.Is(err, ErrSeries) {
			t.Errorf("%s: %v, want ErrSeries", c.name, err)
		}
	}
}

// BenchmarkLombFastDay: fast Lomb-Scargle of a day-long NN-like series
// (100,000 beats) on hrv's grid (step 1/(4 T) up to 0.5 Hz).
func BenchmarkLombFastDay(b *testing.B) {
	tt, y := nnLike(24, 100000)
	span := tt[len(tt)-1] - tt[0]
	df := 1 / (4 * span)
	n := int(0.5 / df)
	b.ResetTimer()
	for b.Loop() {
		if _, err := LombScargleFast(nil, tt, y, 2*math.Pi*df, n, LombFastOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/day-series")
}

// A 0.1 Hz sinusoid on uneven beat times: the fast periodogram peaks at
// 0.1 Hz.
func ExampleLombScargleFast() {
	rng := rand.New(rand.NewPCG(1, 2))
	var t, y []float64
	for ti := 0.0; ti < 600; ti += 0.8 + 0.4*rng.Float64() {
		t = append(t, ti)
		y = append(y, 30*math.Sin(2*math.Pi*0.1*ti))
	}
	const df = 0.001 // Hz
	p, err := LombScargleFast(nil, t, y, 2*math.Pi*df, 500, LombFastOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	best := 0
	for k := range p {
		if p[k] > p[best] {
			best = k
		}
	}
	fmt.Printf("peak at %.3f Hz\n", float64(best+1)*df)
	// Output: peak at 0.100 Hz
}
