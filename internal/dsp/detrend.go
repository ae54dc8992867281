package dsp

import (
	"fmt"
	"math"
)

// SmoothnessTrend returns the smoothness-priors trend of z (Tarvainen,
// Ranta-aho and Karjalainen, "An advanced detrending method with application
// to HRV analysis", IEEE Trans Biomed Eng 49(2):172-175, 2002):
//
//	trend = (I + lambda^2 D2' D2)^-1 z
//
// with D2 the (N-2) x N second-difference matrix with rows (1, -2, 1). The
// detrended (stationary) series is z - trend. The matrix is symmetric,
// positive definite and pentadiagonal; it is factored as L D L' in its band,
// so the cost is O(N) time and memory and the dense inverse is never formed.
// lambda = 0 returns z itself; straight lines are left unchanged as trend for
// every lambda (they span the null space of D2). The result is appended to
// dst. lambda must be finite and >= 0 and z finite.
func SmoothnessTrend(dst, z []float64, lambda float64) ([]float64, error) {
	if math.IsNaN(lambda) || math.IsInf(lambda, 0) || lambda < 0 {
		return dst, fmt.Errorf("dsp: smoothness priors: lambda %v must be finite and >= 0: %w", lambda, ErrSeries)
	}
	for i, v := range z {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return dst, fmt.Errorf("dsp: smoothness priors: sample %d is %v: %w", i, v, ErrSeries)
		}
	}
	n := len(z)
	base := len(dst)
	dst = append(dst, z...)
	if n < 3 || lambda == 0 {
		return dst, nil
	}
	l2 := lambda * lambda
	// Bands of A = I + lambda^2 D2'D2: a0 diagonal, a1[i] = A[i][i+1],
	// a2[i] = A[i][i+2], accumulated row by row of D2.
	a0 := make([]float64, n)
	a1 := make([]float64, n)
	a2 := make([]float64, n)
	for r := 0; r+2 < n; r++ {
		a0[r] += l2
		a0[r+1] += 4 * l2
		a0[r+2] += l2
		a1[r] -= 2 * l2
		a1[r+1] -= 2 * l2
		a2[r] += l2
	}
	for i := range a0 {
		a0[i]++
	}
	// L D L' factorisation: L unit lower triangular with sub-diagonals
	// p1[i] = L[i][i-1] and p2[i] = L[i][i-2]; d holds D (overwrites a0).
	d := a0
	p1 := make([]float64, n)
	p2 := make([]float64, n)
	for i := 1; i < n; i++ {
		if i >= 2 {
			p2[i] = a2[i-2] / d[i-2]
		}
		c := a1[i-1]
		if i >= 2 {
			c -= p2[i] * p1[i-1] * d[i-2]
		}
		p1[i] = c / d[i-1]
		d[i] -= p1[i] * p1[i] * d[i-1]
		if i >= 2 {
			d[i] -= p2[i] * p2[i] * d[i-2]
		}
	}
	x := dst[base:]
	// forward: L y = z
	for i := 0; i < n; i++ {
		if i >= 1 {
			x[i] -= p1[i] * x[i-1]
		}
		if i >= 2 {
			x[i] -= p2[i] * x[i-2]
		}
	}
	for i := range x {
		x[i] /= d[i]
	}
	// backward: L' t = y/D
	for i := n - 1; i >= 0; i-- {
		if i+1 < n {
			x[i] -= p1[i+1] * x[i+1]
		}
		if i+2 < n {
			x[i] -= p2[i+2] * x[i+2]
		}
	}
	return dst, nil
}

// DetrendSmoothness returns z minus its smoothness-priors trend (see
// SmoothnessTrend), appended to dst.
func DetrendSmoothness(dst, z []float64, lambda float64) ([]float64, error) {
	base := len(dst)
	dst, err := SmoothnessTrend(dst, z, lambda)
	if err != nil {
		return dst, err
	}
	for i, v := range z {
		dst[base+i] = v - dst[base+i]
	}
	return dst, nil
}

// DetrendLinear returns z minus its least-squares straight line over the
// sample index, appended to dst. A single sample gives 0.
func DetrendLinear(dst, z []float64) []float64 {
	n := len(z)
	if n == 0 {
		return dst
	}
	// Centre the index so the slope and intercept decouple.
	c := float64(n-1) / 2
	var mean, sxy, sxx float64
	for _, v := range z {
		mean += v
	}
	mean /= float64(n)
	for i, v := range z {
		u := float64(i) - c
		sxy += u * (v - mean)
		sxx += u * u
	}
	slope := 0.0
	if sxx > 0 {
		slope = sxy / sxx
	}
	for i, v := range z {
		dst = append(dst, v-mean-slope*(float64(i)-c))
	}
	return dst
}
