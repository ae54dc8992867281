package resp

import (
	"fmt"
	"math"
)

// PhaseXcorr returns the thoraco-abdominal phase angle (degrees, in
// [-180, 180]) of one breath from the lag of maximum cross-correlation between
// the rib-cage and abdominal signals, phase = 360*lag/period (Prisk, Hammer
// and Newth 2002). The correlation at each lag is Pearson's r over the
// overlapping samples; lags up to half a period (and half the segment) are
// searched, first on every ~0.1 s, then sample by sample, and the peak is
// refined by a parabola through its neighbours. Positive means the rib cage
// leads. It returns NaN and ErrUndefined for a flat or too short segment.
func PhaseXcorr(rib, abd []float64, rateHz, periodS float64) (float64, error) {
	if len(rib) != len(abd) || !(rateHz > 0) || !(periodS > 0) || !finite(periodS) {
		return math.NaN(), fmt.Errorf("resp: phase: %d and %d samples, rate %v Hz, period %v s: %w", len(rib), len(abd), rateHz, periodS, ErrInput)
	}
	ph := xcorrPhase(rib, abd, rateHz, periodS)
	if math.IsNaN(ph) {
		return ph, fmt.Errorf("resp: phase: segment flat or too short: %w", ErrUndefined)
	}
	return ph, nil
}

// PhaseLissajous returns the phase angle (degrees, in [0, 180]) of one breath
// from the rib-cage (y) against abdomen (x) loop: asin(m/s) with m the width
// of the loop at the mid-level of the rib-cage excursion and s the total
// abdominal excursion. The arcsine alone cannot tell phi from 180-phi; when the
// loop's major axis slopes downwards (negative covariance) the angle is taken
// as 180 - asin(m/s) (methods reference 5.4; the loop index is classically
// attributed to Agostoni and Mognoni 1966, from memory). NaN and ErrUndefined
// when the loop does not cross its mid-level both ways or a band is flat.
func PhaseLissajous(rib, abd []float64) (float64, error) {
	if len(rib) != len(abd) {
		return math.NaN(), fmt.Errorf("resp: phase: %d and %d samples: %w", len(rib), len(abd), ErrInput)
	}
	ph := lissajousPhase(rib, abd)
	if math.IsNaN(ph) {
		return ph, fmt.Errorf("resp: loop phase: no closed loop: %w", ErrUndefined)
	}
	return ph, nil
}

// phaseStride is the decimation of the per-breath phase signals: to about
// 25 Hz, ample for a band low-passed at 2 Hz, and it keeps the per-breath
// cost small.
func (c *core) phaseStride() int { return max(1, int(c.fs/25)) }

func (c *core) segment(dst, x []float64, i, j, stride int) []float64 {
	dst = dst[:0]
	for k := i; k <= j; k += stride {
		dst = append(dst, x[k&c.mask])
	}
	return dst
}

// phases returns the cross-correlation and Lissajous phase of samples i..j.
func (c *core) phases(i, j int) (xc, lis float64) {
	st := c.phaseStride()
	c.bufR = c.segment(c.bufR, c.rf, i, j, st)
	c.bufA = c.segment(c.bufA, c.af, i, j, st)
	fs := c.fs / float64(st)
	return xcorrPhase(c.bufR, c.bufA, fs, float64(j-i)/c.fs), lissajousPhase(c.bufR, c.bufA)
}

// pearsonLag is Pearson's r between x[i] and y[i+k] over the overlap,
// sampling every step-th pair; NaN when either part is flat.
func pearsonLag(x, y []float64, k, step int) float64 {
	lo, hi := 0, len(x)
	if k >= 0 {
		hi = len(x) - k
	} else {
		lo = -k
	}
	var n, sx, sy, sxx, syy, sxy float64
	for i := lo; i < hi; i += step {
		a, b := x[i], y[i+k]
		sx += a
		sy += b
		sxx += a * a
		syy += b * b
		sxy += a * b
		n++
	}
	if n < 3 {
		return math.NaN()
	}
	vx := sxx - sx*sx/n
	vy := syy - sy*sy/n
	if !(vx > 0 && vy > 0) {
		return math.NaN()
	}
	return (sxy - sx*sy/n) / math.Sqrt(vx*vy)
}

func xcorrPhase(x, y []float64, fs, period float64) float64 {
	L := len(x)
	if L < 8 {
		return math.NaN()
	}
	maxLag := min(int(math.Round(period*fs/2)), L/2)
	step := max(1, int(math.Round(fs/10)))
	best, bestR := 0, math.Inf(-1)
	for k := -maxLag; k <= maxLag; k += step {
		if r := pearsonLag(x, y, k, step); r > bestR {
			best, bestR = k, r
		}
	}
	if math.IsInf(bestR, -1) {
		return math.NaN()
	}
	if step > 1 {
		// Refine at full resolution by hill-climbing from the coarse peak
		// (the correlation is smooth in the lag), at most step moves.
		bestR = pearsonLag(x, y, best, 1)
		if math.IsNaN(bestR) {
			return math.NaN()
		}
		for dir := -1; dir <= 1; dir += 2 {
			for m := 0; m < step; m++ {
				k := best + dir
				if k < -maxLag || k > maxLag {
					break
				}
				r := pearsonLag(x, y, k, 1)
				if !(r > bestR) {
					break
				}
				best, bestR = k, r
			}
		}
	}
	lag := float64(best)
	if best > -maxLag && best < maxLag {
		r0 := pearsonLag(x, y, best-1, 1)
		r2 := pearsonLag(x, y, best+1, 1)
		if den := r0 - 2*bestR + r2; den < 0 && finite(r0) && finite(r2) {
			lag += 0.5 * (r0 - r2) / den
		}
	}
	ph := 360 * lag / fs / period
	return math.Max(-180, math.Min(180, ph))
}

func lissajousPhase(y, x []float64) float64 {
	if len(x) < 4 {
		return math.NaN()
	}
	ymax, ymin := math.Inf(-1), math.Inf(1)
	xmax, xmin := math.Inf(-1), math.Inf(1)
	var mx, my float64
	for i := range x {
		if y[i] > ymax {
			ymax = y[i]
		}
		if y[i] < ymin {
			ymin = y[i]
		}
		if x[i] > xmax {
			xmax = x[i]
		}
		if x[i] < xmin {
			xmin = x[i]
		}
		mx += x[i]
		my += y[i]
	}
	s := xmax - xmin
	if !(s > 0) || !(ymax > ymin) {
		return math.NaN()
	}
	mx /= float64(len(x))
	my /= float64(len(x))
	mid := (ymax + ymin) / 2
	var up, down, nu, nd, cov float64
	// The breath is one cycle: the pair (last, first) closes the loop.
	for i := 0; i < len(x); i++ {
		cov += (x[i] - mx) * (y[i] - my)
		p := i - 1
		if p < 0 {
			p = len(x) - 1
		}
		a, b := y[p], y[i]
		if (a < mid) == (b < mid) || a == b {
			continue
		}
		f := (mid - a) / (b - a)
		xc := x[p] + f*(x[i]-x[p])
		if b > a {
			up += xc
			nu++
		} else {
			down += xc
			nd++
		}
	}
	if nu == 0 || nd == 0 {
		return math.NaN()
	}
	r := math.Min(1, math.Abs(up/nu-down/nd)/s)
	ph := math.Asin(r) * 180 / math.Pi
	if cov < 0 {
		ph = 180 - ph
	}
	return ph
}

// WindowPhase returns the thoraco-abdominal phase over a stretch of band
// samples holding several breaths (a window), by both methods: the lag of
// maximum cross-correlation over the whole stretch (Prisk et al. 2002) with
// lags up to half of periodS (pass the window's median breath length,
// Breath.TtotS), and the Lissajous loop width averaged over every mid-level
// crossing of the stretch. Each band is first detrended by its
// least-squares line so slow drift does not move the mid-level. NaN samples
// are not allowed (use a stretch inside a gap-free span); the result is NaN
// with ErrUndefined when a band is flat.
func WindowPhase(rib, abd []float64, rateHz, periodS float64) (xcorrDeg, lissajousDeg float64, err error) {
	if len(rib) != len(abd) || !(rateHz > 0) || math.IsInf(rateHz, 0) || !(periodS > 0) || !finite(periodS) {
		return math.NaN(), math.NaN(), fmt.Errorf("resp: window phase: %d and %d samples, rate %v Hz, period %v s: %w", len(rib), len(abd), rateHz, periodS, ErrInput)
	}
	for i := range rib {
		if !finite(rib[i]) || !finite(abd[i]) {
			return math.NaN(), math.NaN(), fmt.Errorf("resp: window phase: sample %d not finite: %w", i, ErrInput)
		}
	}
	r, a := detrend(rib), detrend(abd)
	xcorrDeg = xcorrPhase(r, a, rateHz, periodS)
	lissajousDeg = lissajousPhase(r, a)
	if math.IsNaN(xcorrDeg) && math.IsNaN(lissajousDeg) {
		err = fmt.Errorf("resp: window phase: flat or too short: %w", ErrUndefined)
	}
	return xcorrDeg, lissajousDeg, err
}

// detrend returns x minus its least-squares line.
func detrend(x []float64) []float64 {
	n := float64(len(x))
	var st, sx, stt, stx float64
	for i, v := range x {
		t := float64(i)
		st += t
		sx += v
		stt += t * t
		stx += t * v
	}
	den := n*stt - st*st
	b := 0.0
	if den != 0 {
		b = (n*stx - st*sx) / den
	}
	a := (sx - b*st) / n
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = v - a - b*float64(i)
	}
	return out
}
