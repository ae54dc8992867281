package dsp

import (
	"errors"
	"fmt"
	"math"
)

// ErrSeries reports a series a DSP helper cannot use: too few points, NaN or
// infinite values, times out of order, mismatched lengths.
var ErrSeries = errors.New("invalid series")

// Spline is a cubic interpolating spline with the not-a-knot end condition
// (the third derivative is continuous at the second and the next-to-last
// knots), the default boundary of scipy.interpolate.CubicSpline. With two
// knots it is the straight line through them and with three the parabola,
// as in scipy. Outside the knots it extrapolates the end pieces.
//
// The representation stores the second derivative M_i at each knot (de Boor,
// A Practical Guide to Splines, chapter IV); a Spline is immutable after
// construction and safe for concurrent use.
type Spline struct {
	x, y, m []float64
}

// NewSpline fits the not-a-knot cubic spline through (x[i], y[i]). x must be
// strictly increasing and both slices finite, of equal length >= 2. The
// slices are copied. Cost O(n) time and memory (one tridiagonal solve).
func NewSpline(x, y []float64) (*Spline, error) {
	n := len(x)
	if n != len(y) {
		return nil, fmt.Errorf("dsp: spline: %d knots but %d values: %w", n, len(y), ErrSeries)
	}
	if n < 2 {
		return nil, fmt.Errorf("dsp: spline: %d knots, need at least 2: %w", n, ErrSeries)
	}
	for i := range x {
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return nil, fmt.Errorf("dsp: spline: knot %d (%v, %v) not finite: %w", i, x[i], y[i], ErrSeries)
		}
		if i > 0 && !(x[i] > x[i-1]) {
			return nil, fmt.Errorf("dsp: spline: knot %d at %v not after knot %d at %v: %w", i, x[i], i-1, x[i-1], ErrSeries)
		}
	}
	s := &Spline{x: append([]float64(nil), x...), y: append([]float64(nil), y...), m: make([]float64, n)}
	switch n {
	case 2:
		// straight line: all second derivatives zero
	case 3:
		// Not-a-knot on three points is the single parabola through them:
		// constant second derivative 2 * (second divided difference).
		h0, h1 := x[1]-x[0], x[2]-x[1]
		d0, d1 := (y[1]-y[0])/h0, (y[2]-y[1])/h1
		c := 2 * (d1 - d0) / (h0 + h1)
		s.m[0], s.m[1], s.m[2] = c, c, c
	default:
		s.solve()
	}
	return s, nil
}

// solve computes the knot second derivatives for n >= 4. The interior
// equations are h[i-1] M[i-1] + 2 (h[i-1]+h[i]) M[i] + h[i] M[i+1] =
// 6 (d[i] - d[i-1]) for i = 1..n-2, with d the divided differences. The
// not-a-knot conditions (M1-M0)/h0 = (M2-M1)/h1 and the mirror one at the
// end are eliminated into the first and last rows, which stay diagonally
// dominant, so the Thomas algorithm is stable without pivoting.
func (s *Spline) solve() {
	x, y, m := s.x, s.y, s.m
	n := len(x)
	k := n - 2 // unknowns M[1..n-2]
	sub := make([]float64, k)
	diag := make([]float64, k)
	sup := make([]float64, k)
	rhs := make([]float64, k)
	h := func(i int) float64 { return x[i+1] - x[i] }
	d := func(i int) float64 { return (y[i+1] - y[i]) / h(i) }
	for j := 0; j < k; j++ {
		i := j + 1
		sub[j] = h(i - 1)
		diag[j] = 2 * (h(i-1) + h(i))
		sup[j] = h(i)
		rhs[j] = 6 * (d(i) - d(i-1))
	}
	// M0 = (1 + h0/h1) M1 - (h0/h1) M2
	h0, h1 := h(0), h(1)
	diag[0] += h0 * (1 + h0/h1)
	sup[0] -= h0 * h0 / h1
	// M[n-1] = (1 + hl/hp) M[n-2] - (hl/hp) M[n-3], hl = h[n-2], hp = h[n-3]
	hl, hp := h(n-2), h(n-3)
	diag[k-1] += hl * (1 + hl/hp)
	sub[k-1] -= hl * hl / hp
	// Thomas algorithm.
	for j := 1; j < k; j++ {
		w := sub[j] / diag[j-1]
		diag[j] -= w * sup[j-1]
		rhs[j] -= w * rhs[j-1]
	}
	m[k] = rhs[k-1] / diag[k-1]
	for j := k - 2; j >= 0; j-- {
		m[j+1] = (rhs[j] - sup[j]*m[j+2]) / diag[j]
	}
	m[0] = (1+h0/h1)*m[1] - (h0/h1)*m[2]
	m[n-1] = (1+hl/hp)*m[n-2] - (hl/hp)*m[n-3]
}

// At evaluates the spline at t (extrapolating the end pieces outside the
// knots). Cost O(log n).
func (s *Spline) At(t float64) float64 {
	// index of the piece: largest i with x[i] <= t, clamped to [0, n-2]
	lo, hi := 0, len(s.x)-1
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if s.x[mid] <= t {
			lo = mid
		} else {
			hi = mid
		}
	}
	return s.piece(lo, t)
}

func (s *Spline) piece(i int, t float64) float64 {
	x0, x1 := s.x[i], s.x[i+1]
	hh := x1 - x0
	a, b := x1-t, t-x0
	return (s.m[i]*a*a*a+s.m[i+1]*b*b*b)/(6*hh) +
		(s.y[i]/hh-s.m[i]*hh/6)*a + (s.y[i+1]/hh-s.m[i+1]*hh/6)*b
}

// Sample evaluates the spline on the uniform grid t0 + k/rateHz, k = 0..n-1,
// appending to dst and returning it. The grid is walked together with the
// knots, so the cost is O(n + knots).
func (s *Spline) Sample(dst []float64, t0, rateHz float64, n int) []float64 {
	i := 0
	last := len(s.x) - 2
	for k := 0; k < n; k++ {
		t := t0 + float64(k)/rateHz
		for i < last && s.x[i+1] <= t {
			i++
		}
		dst = append(dst, s.piece(i, t))
	}
	return dst
}

// Knots returns the number of knots.
func (s *Spline) Knots() int { return len(s.x) }
