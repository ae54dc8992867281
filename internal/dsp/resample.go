package dsp

import (
	"fmt"
	"math"
)

// Resample converts x sampled at fromHz to toHz: when the rate falls it first
// removes content above 0.45 toHz with an order-8 Butterworth low-pass run
// forwards and backwards (zero phase), then it evaluates a cubic Hermite
// (Catmull-Rom) interpolant at the new sample times k/toHz, k = 0, 1, ...
// while k/toHz <= (len(x)-1)/fromHz. The samples must be finite.
//
// This is a test and tooling helper (e.g. to exercise a detector at other
// rates), not a band-limited reconstruction: the Catmull-Rom kernel
// attenuates content near the old Nyquist frequency (Keys 1981, "Cubic
// convolution interpolation for digital image processing", with a = -0.5).
func Resample(x []float64, fromHz, toHz float64) ([]float64, error) {
	if !(fromHz > 0) || !(toHz > 0) || math.IsInf(fromHz, 0) || math.IsInf(toHz, 0) {
		return nil, fmt.Errorf("dsp: resample %v Hz to %v Hz: %w", fromHz, toHz, ErrDesign)
	}
	if len(x) < 2 {
		return nil, fmt.Errorf("dsp: resample: %d samples, need at least 2: %w", len(x), ErrSeries)
	}
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("dsp: resample: sample %d is %v: %w", i, v, ErrSeries)
		}
	}
	src := x
	if toHz < fromHz {
		lp, err := ButterLowpass(8, 0.45*toHz, fromHz)
		if err != nil {
			return nil, err
		}
		src = lp.FiltFilt(nil, x)
	}
	dur := float64(len(x)-1) / fromHz
	n := int(math.Floor(dur*toHz+1e-9)) + 1
	out := make([]float64, n)
	last := len(src) - 1
	at := func(i int) float64 {
		if i < 0 {
			return src[0]
		}
		if i > last {
			return src[last]
		}
		return src[i]
	}
	for k := range out {
		p := float64(k) * fromHz / toHz
		i := int(math.Floor(p))
		t := p - float64(i)
		y0, y1, y2, y3 := at(i-1), at(i), at(i+1), at(i+2)
		// Catmull-Rom: Hermite with tangents (y2-y0)/2 and (y3-y1)/2.
		out[k] = y1 + 0.5*t*(y2-y0+t*(2*y0-5*y1+4*y2-y3+t*(3*(y1-y2)+y3-y0)))
	}
	return out, nil
}
