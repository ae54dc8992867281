package dsp

import (
	"fmt"
	"math"
)

// LombScargle returns the unnormalised Lomb-Scargle periodogram of samples y
// taken at times t, at the angular frequencies omega (rad per unit of t),
// appended to dst (N. R. Lomb, Astrophys Space Sci 39:447-462, 1976;
// J. D. Scargle, Astrophys J 263:835-853, 1982):
//
//	P(w) = 1/2 { [sum y_j cos w(t_j - tau)]^2 / sum cos^2 w(t_j - tau)
//	           + [sum y_j sin w(t_j - tau)]^2 / sum sin^2 w(t_j - tau) }
//
// with tan(2 w tau) = sum sin(2 w t_j) / sum cos(2 w t_j). y is used as given
// (subtract its mean first for spectral work). This is the quantity scipy.signal
// .lombscargle(t, y, omega) returns with precenter and normalize false. For
// evenly sampled data it equals the classical periodogram |sum y_j e^{-iwt_j}|^2 / N
// at the Fourier frequencies. Cost O(len(t) * len(omega)); omega must be
// positive and finite.
func LombScargle(dst, t, y, omega []float64) ([]float64, error) {
	if len(t) != len(y) {
		return dst, fmt.Errorf("dsp: lomb-scargle: %d times but %d values: %w", len(t), len(y), ErrSeries)
	}
	if len(t) < 2 {
		return dst, fmt.Errorf("dsp: lomb-scargle: %d samples, need at least 2: %w", len(t), ErrSeries)
	}
	for i := range t {
		if math.IsNaN(t[i]) || math.IsInf(t[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return dst, fmt.Errorf("dsp: lomb-scargle: sample %d (%v, %v) not finite: %w", i, t[i], y[i], ErrSeries)
		}
	}
	for i, w := range omega {
		if !(w > 0) || math.IsInf(w, 0) {
			return dst, fmt.Errorf("dsp: lomb-scargle: frequency %d is %v: %w", i, w, ErrSeries)
		}
	}
	for _, w := range omega {
		var xc, xs, cc, ss, cs float64
		for j, tj := range t {
			s, c := math.Sincos(w * tj)
			xc += y[j] * c
			xs += y[j] * s
			cc += c * c
			ss += s * s
			cs += c * s
		}
		dst = append(dst, lombValue(w, xc, xs, cc, ss, cs))
	}
	return dst, nil
}

// LombScargleGrid is LombScargle on the uniform grid of angular frequencies
// omega0 + k*step, k = 0..n-1, appended to dst. Instead of a sine and cosine
// per sample and frequency it advances each sample's phase by a rotation
// (cos, sin of step*t_j) and re-seeds the phases exactly every 32
// frequencies, so rounding stays near 1e-14 relative while the cost drops to
// a few multiplications per sample and frequency. Same conventions and
// checks as LombScargle.
func LombScargleGrid(dst, t, y []float64, omega0, step float64, n int) ([]float64, error) {
	if len(t) != len(y) {
		return dst, fmt.Errorf("dsp: lomb-scargle: %d times but %d values: %w", len(t), len(y), ErrSeries)
	}
	if len(t) < 2 {
		return dst, fmt.Errorf("dsp: lomb-scargle: %d samples, need at least 2: %w", len(t), ErrSeries)
	}
	for i := range t {
		if math.IsNaN(t[i]) || math.IsInf(t[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return dst, fmt.Errorf("dsp: lomb-scargle: sample %d (%v, %v) not finite: %w", i, t[i], y[i], ErrSeries)
		}
	}
	if !(omega0 > 0) || !(step > 0) || math.IsInf(omega0+step*float64(n), 0) || n < 0 {
		return dst, fmt.Errorf("dsp: lomb-scargle: grid %v + k*%v, %d points: %w", omega0, step, n, ErrSeries)
	}
	m := len(t)
	c := make([]float64, m)
	s := make([]float64, m)
	rc := make([]float64, m)
	rs := make([]float64, m)
	for j, tj := range t {
		rs[j], rc[j] = math.Sincos(step * tj)
	}
	for k := 0; k < n; k++ {
		w := omega0 + float64(k)*step
		if k%32 == 0 {
			for j, tj := range t {
				s[j], c[j] = math.Sincos(w * tj)
			}
		} else {
			for j := range t {
				cj, sj := c[j], s[j]
				c[j] = cj*rc[j] - sj*rs[j]
				s[j] = sj*rc[j] + cj*rs[j]
			}
		}
		var xc, xs, cc, ss, cs float64
		for j := range t {
			cj, sj := c[j], s[j]
			xc += y[j] * cj
			xs += y[j] * sj
			cc += cj * cj
			ss += sj * sj
			cs += cj * sj
		}
		dst = append(dst, lombValue(w, xc, xs, cc, ss, cs))
	}
	return dst, nil
}

// lombValue finishes P(w) from the five sums, with tau from
// tan(2 w tau) = 2 cs / (cc - ss).
func lombValue(w, xc, xs, cc, ss, cs float64) float64 {
	tau := math.Atan2(2*cs, cc-ss) / (2 * w)
	st, ct := math.Sincos(w * tau)
	ct2, st2, cst := ct*ct, st*st, 2*ct*st
	num1 := ct*xc + st*xs
	num2 := ct*xs - st*xc
	den1 := ct2*cc + cst*cs + st2*ss
	den2 := ct2*ss - cst*cs + st2*cc
	var p float64
	if den1 > 0 {
		p += num1 * num1 / den1
	}
	if den2 > 0 {
		p += num2 * num2 / den2
	}
	return 0.5 * p
}
