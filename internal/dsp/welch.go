package dsp

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// SegmentDetrend says what Welch removes from each segment before windowing.
type SegmentDetrend int

const (
	// SegmentMean removes each segment's mean (the default, as in
	// scipy.signal.welch's detrend='constant').
	SegmentMean SegmentDetrend = iota
	// SegmentNone leaves segments as they are.
	SegmentNone
	// SegmentLinear removes each segment's least-squares line.
	SegmentLinear
)

// WelchOptions configures Welch. Zero values mean the defaults.
type WelchOptions struct {
	// Segment is the number of samples per segment; 256 when zero (common
	// practice for 4 Hz tachograms: 64 s). Shorter input uses one segment
	// of the input's length, as scipy does.
	Segment int
	// Overlap is the number of samples shared by consecutive segments;
	// Segment/2 when zero (50 %, common practice); a negative value means
	// no overlap.
	Overlap int
	// NFFT is the FFT length (zero padding of each segment); Segment when
	// zero. It must not be less than Segment.
	NFFT int
	// Detrend is applied per segment; SegmentMean when zero.
	Detrend SegmentDetrend
}

// Welch estimates the one-sided power spectral density of x, sampled at fsHz,
// by Welch's method of averaged modified periodograms: periodic Hann window,
// segment periodograms |sum w_n x_n e^{-i 2 pi f n / fs}|^2 / (fs sum w_n^2),
// doubled for 0 < f < fs/2, averaged over segments. The scaling is that of
// scipy.signal.welch(scaling='density'): sum(psd) * df equals the mean power
// of the windowed segments (Parseval), so band integrals carry the units of
// x squared. Frequencies are k fs / NFFT, k = 0..NFFT/2; psd has the units of
// x^2 per Hz. Cost O(segments * NFFT log NFFT).
func Welch(x []float64, fsHz float64, opt WelchOptions) (freqs, psd []float64, err error) {
	if !(fsHz > 0) || math.IsInf(fsHz, 0) {
		return nil, nil, fmt.Errorf("dsp: welch: sampling rate %v Hz: %w", fsHz, ErrSeries)
	}
	if len(x) < 2 {
		return nil, nil, fmt.Errorf("dsp: welch: %d samples, need at least 2: %w", len(x), ErrSeries)
	}
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nil, fmt.Errorf("dsp: welch: sample %d is %v: %w", i, v, ErrSeries)
		}
	}
	seg := opt.Segment
	if seg == 0 {
		seg = 256
	}
	if seg < 2 {
		return nil, nil, fmt.Errorf("dsp: welch: segment %d samples: %w", seg, ErrSeries)
	}
	nfft := opt.NFFT
	if seg > len(x) {
		seg = len(x)
	}
	if nfft == 0 {
		nfft = seg
	}
	if nfft < seg {
		return nil, nil, fmt.Errorf("dsp: welch: NFFT %d shorter than segment %d: %w", nfft, seg, ErrSeries)
	}
	ov := opt.Overlap
	switch {
	case ov == 0:
		ov = seg / 2
	case ov < 0:
		ov = 0
	}
	if ov >= seg {
		return nil, nil, fmt.Errorf("dsp: welch: overlap %d not below segment %d: %w", ov, seg, ErrSeries)
	}
	step := seg - ov
	nseg := (len(x)-seg)/step + 1

	w := HannPeriodic(seg)
	var wss float64
	for _, v := range w {
		wss += v * v
	}
	fft := fourier.NewFFT(nfft)
	buf := make([]float64, nfft)
	coef := make([]complex128, nfft/2+1)
	psd = make([]float64, nfft/2+1)
	tmp := make([]float64, 0, seg)
	for s := 0; s < nseg; s++ {
		part := x[s*step : s*step+seg]
		switch opt.Detrend {
		case SegmentNone:
			tmp = append(tmp[:0], part...)
		case SegmentLinear:
			tmp = DetrendLinear(tmp[:0], part)
		default:
			var m float64
			for _, v := range part {
				m += v
			}
			m /= float64(seg)
			tmp = tmp[:0]
			for _, v := range part {
				tmp = append(tmp, v-m)
			}
		}
		for i := range buf {
			buf[i] = 0
		}
		for i, v := range tmp {
			buf[i] = v * w[i]
		}
		coef = fft.Coefficients(coef, buf)
		for k, c := range coef {
			psd[k] += real(c)*real(c) + imag(c)*imag(c)
		}
	}
	norm := fsHz * wss * float64(nseg)
	freqs = make([]float64, len(psd))
	for k := range psd {
		psd[k] /= norm
		// one-sided: double all but DC and (for even NFFT) Nyquist
		if k > 0 && !(nfft%2 == 0 && k == nfft/2) {
			psd[k] *= 2
		}
		freqs[k] = float64(k) * fsHz / float64(nfft)
	}
	return freqs, psd, nil
}

// HannPeriodic returns the n-point periodic Hann window
// w[k] = 0.5 - 0.5 cos(2 pi k / n), the DFT-even form used for spectral
// estimation (scipy.signal.get_window('hann', n)).
func HannPeriodic(n int) []float64 {
	w := make([]float64, n)
	for k := range w {
		w[k] = 0.5 - 0.5*math.Cos(2*math.Pi*float64(k)/float64(n))
	}
	return w
}
