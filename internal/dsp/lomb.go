package dsp

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
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

// LombFastOptions configures LombScargleFast. Zero values mean the defaults.
type LombFastOptions struct {
	// Order is the number of grid points each sample is spread over by
	// Lagrange extirpolation; 4 when zero (Press and Rybicki 1989 use 4,
	// from memory). Larger orders are more accurate and slower; 2..10.
	Order int
	// Oversample is the ratio of the extirpolation grid's Nyquist frequency
	// to the highest sum frequency 2*omega_max; 4 when zero (Press and
	// Rybicki 1989, from memory). The grid has the next power of two above
	// 2 * Oversample * n points; 1..64.
	Oversample int
}

// maxFastGrid bounds the extirpolation grid of LombScargleFast (2^24
// points, 128 MiB of float64 plus the transforms).
const maxFastGrid = 1 << 24

// LombScargleFast approximates LombScargleGrid on the grid omega_k = k*step,
// k = 1..n (note: the grid starts at step, not at an arbitrary omega0), by
// the algorithm of W. H. Press and G. B. Rybicki, "Fast algorithm for
// spectral analysis of unevenly sampled data", Astrophys J 338:277, 1989
// (journal details from memory): the values y_j and unit weights at the
// phases of 2*t_j are extirpolated onto a regular grid with Lagrange
// weights of opt.Order points, two real FFTs give sum y_j e^{i w t_j} and
// sum e^{2 i w t_j} at every grid frequency, and the usual Lomb formula
// follows (cos^2 and sin^2 sums from the double-angle sums). Cost
// O(len(t) Order + M log M), M the grid size, instead of O(len(t) n).
//
// It is an approximation; its error is measured in lomb_test.go against
// LombScargleGrid (measured relative band-power errors about 1e-4 with the
// defaults, 2e-6 at order 6, 1e-10 at order 8 with oversampling 8, on an
// uneven NN-like series). Same conventions as LombScargle
// (subtract the mean of y first); the periodogram is invariant to a shift
// of t, so t may start anywhere.
func LombScargleFast(dst, t, y []float64, step float64, n int, opt LombFastOptions) ([]float64, error) {
	if len(t) != len(y) {
		return dst, fmt.Errorf("dsp: fast lomb-scargle: %d times but %d values: %w", len(t), len(y), ErrSeries)
	}
	if len(t) < 2 {
		return dst, fmt.Errorf("dsp: fast lomb-scargle: %d samples, need at least 2: %w", len(t), ErrSeries)
	}
	for i := range t {
		if math.IsNaN(t[i]) || math.IsInf(t[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return dst, fmt.Errorf("dsp: fast lomb-scargle: sample %d (%v, %v) not finite: %w", i, t[i], y[i], ErrSeries)
		}
	}
	order, over := opt.Order, opt.Oversample
	if order == 0 {
		order = 4
	}
	if over == 0 {
		over = 4
	}
	if order < 2 || order > 10 || over < 1 || over > 64 {
		return dst, fmt.Errorf("dsp: fast lomb-scargle: order %d (2..10), oversampling %d (1..64): %w", order, over, ErrSeries)
	}
	if !(step > 0) || math.IsInf(step, 0) || n < 1 || n > maxFastGrid/(2*over) {
		return dst, fmt.Errorf("dsp: fast lomb-scargle: grid k*%v, %d points (at most %d at oversampling %d): %w", step, n, maxFastGrid/(2*over), over, ErrSeries)
	}
	m := 1
	for m < 2*over*n || m < 2*order {
		m <<= 1
	}
	tmin := t[0]
	for _, v := range t {
		tmin = math.Min(tmin, v)
	}
	// Grid spacing 2 pi/(m step) in t: w_k t = 2 pi k x/m, x = (t-tmin) m step/(2 pi).
	fac := float64(m) * step / (2 * math.Pi)
	gy := make([]float64, m)
	g2 := make([]float64, m)
	var wts [10]float64
	for j, tj := range t {
		x := math.Mod((tj-tmin)*fac, float64(m))
		extirpolate(gy, y[j], x, order, wts[:order])
		extirpolate(g2, 1, math.Mod(2*x, float64(m)), order, wts[:order])
	}
	fft := fourier.NewFFT(m)
	cy := fft.Coefficients(nil, gy)
	c2 := fft.Coefficients(nil, g2)
	cnt := float64(len(t))
	for k := 1; k <= n; k++ {
		// Coefficients use e^{-i...}: sum cos = Re, sum sin = -Im.
		xc, xs := real(cy[k]), -imag(cy[k])
		c2w, s2w := real(c2[k]), -imag(c2[k])
		cc := 0.5 * (cnt + c2w)
		ss := 0.5 * (cnt - c2w)
		cs := 0.5 * s2w
		dst = append(dst, lombValue(float64(k)*step, xc, xs, cc, ss, cs))
	}
	return dst, nil
}

// extirpolate adds v to the periodic grid g at fractional position x by
// Lagrange weights over the order points nearest x (indices taken modulo
// len(g)), so that sum_i g_i f(i) approximates v f(x) for any smooth f.
func extirpolate(g []float64, v, x float64, order int, w []float64) {
	m := len(g)
	xi := math.Round(x)
	if math.Abs(x-xi) < 1e-12 {
		g[int(xi)%m] += v
		return
	}
	lo := int(math.Floor(x - 0.5*float64(order) + 1))
	for i := range order {
		p := 1.0
		for k := range order {
			if k != i {
				p *= (x - float64(lo+k)) / float64(i-k)
			}
		}
		w[i] = p
	}
	for i := range order {
		g[((lo+i)%m+m)%m] += v * w[i]
	}
}
