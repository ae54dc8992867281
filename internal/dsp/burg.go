package dsp

import (
	"fmt"
	"math"
	"math/cmplx"
)

// Burg fits an autoregressive model of the given order to x by Burg's method
// (J. P. Burg, maximum entropy spectral analysis, 1967/1975; the lattice
// recursion as in S. M. Kay, Modern Spectral Estimation, 1988, ch. 7):
//
//	x[n] + a[1] x[n-1] + ... + a[p] x[n-p] = e[n]
//
// It returns a[1..p] (a[0] = 1 is implied) and the driving-noise variance.
// x should have zero mean (detrend first). The recursion guarantees a stable
// model (every reflection coefficient has magnitude <= 1). It needs
// len(x) > order >= 1 and a series that is not identically zero.
// Cost O(order * len(x)).
func Burg(x []float64, order int) (a []float64, noiseVar float64, err error) {
	n := len(x)
	if order < 1 || order >= n {
		return nil, math.NaN(), fmt.Errorf("dsp: burg: order %d for %d samples: %w", order, n, ErrSeries)
	}
	var e float64
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, math.NaN(), fmt.Errorf("dsp: burg: sample %d is %v: %w", i, v, ErrSeries)
		}
		e += v * v
	}
	if e == 0 {
		return nil, math.NaN(), fmt.Errorf("dsp: burg: series is identically zero: %w", ErrSeries)
	}
	e /= float64(n)
	f := append([]float64(nil), x...) // forward prediction errors
	b := append([]float64(nil), x...) // backward prediction errors
	a = make([]float64, order+1)
	a[0] = 1
	prev := make([]float64, order+1)
	for k := 1; k <= order; k++ {
		var num, den float64
		for i := k; i < n; i++ {
			num += f[i] * b[i-1]
			den += f[i]*f[i] + b[i-1]*b[i-1]
		}
		if den == 0 {
			// Prediction already perfect: higher coefficients stay zero.
			break
		}
		kk := -2 * num / den
		copy(prev, a)
		for i := 1; i <= k; i++ {
			a[i] = prev[i] + kk*prev[k-i]
		}
		// Update errors from the end so b[i-1] is still the old value.
		for i := n - 1; i >= k; i-- {
			fi := f[i]
			f[i] = fi + kk*b[i-1]
			b[i] = b[i-1] + kk*fi
		}
		e *= 1 - kk*kk
	}
	return a[1:], e, nil
}

// ARSpectrum evaluates the one-sided power spectral density of the AR model
// (a, noiseVar) for a series sampled at fsHz, at the frequencies freqs (Hz),
// appended to dst: PSD(f) = 2 noiseVar / (fs |1 + sum_k a_k e^{-i 2 pi f k / fs}|^2).
// Its integral over [0, fs/2] is the model's variance.
func ARSpectrum(dst, a []float64, noiseVar, fsHz float64, freqs []float64) []float64 {
	for _, f := range freqs {
		// Powers of e^{-i w} by repeated multiplication: one complex
		// exponential per frequency.
		rot := cmplx.Exp(complex(0, -2*math.Pi*f/fsHz))
		var z complex128 = 1
		e := rot
		for _, ak := range a {
			z += complex(ak, 0) * e
			e *= rot
		}
		m := real(z)*real(z) + imag(z)*imag(z)
		dst = append(dst, 2*noiseVar/(fsHz*m))
	}
	return dst
}
