package ecg

import (
	"fmt"
	"math"
	"sync"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"gonum.org/v1/gonum/dsp/fourier"
)

// QualityOptions configures WindowQuality. Zero values mean the defaults.
type QualityOptions struct {
	// FlatS is the shortest run of identical samples counted as flat line;
	// 0.5 s when zero (as Options.FlatS).
	FlatS float64
	// ClipLowmV and ClipHighmV are the saturation rails, used when
	// ClipHighmV > ClipLowmV (as in Options).
	ClipLowmV, ClipHighmV float64
	// MatchS is the bSQI matching tolerance; 0.150 s when zero (Li, Mark and
	// Clifford 2008, as restated in the methods reference 4.3, from memory).
	MatchS float64
}

// Quality holds the signal-quality indices of one window of ECG.
type Quality struct {
	Samples int // samples in the window
	// LeadOffFraction is the fraction of samples that are NaN or infinite
	// (the recording marked them invalid: lead off, dropped data).
	LeadOffFraction float64
	// FlatFraction is the fraction in runs of identical values at least
	// FlatS long; SaturatedFraction the fraction at or beyond the rails.
	FlatFraction, SaturatedFraction float64
	// Kurtosis (kSQI, non-excess: 3 for Gaussian noise) and Skewness (sSQI)
	// of the valid samples (Li, Mark and Clifford 2008); clean ECG is
	// strongly super-Gaussian (kurtosis above 5, from memory).
	Kurtosis, Skewness float64
	// PSQI is the power in 5-15 Hz over the power in 5-40 Hz and BasSQI is
	// 1 minus the power in 0-1 Hz over the power in 0-40 Hz (Li, Mark and
	// Clifford 2008, from memory), from a Welch spectrum of the longest valid
	// run (4 s Hann segments, half overlap); NaN when the run is under 2 s
	// or the rate is below 80 Hz (no 40 Hz band).
	PSQI, BasSQI float64
	// BSQI is the agreement of the caller's beats with DetectEnvelope on the
	// same samples: matched / (n1 + n2 - matched), 150 ms tolerance (Li,
	// Mark and Clifford 2008). NaN when neither found a beat.
	BSQI float64
	// EnvelopeBeats is how many beats the second detector found.
	EnvelopeBeats int
	// Reason explains NaN values, empty when all are defined.
	Reason string
}

// WindowQuality computes the quality indices of one window: x holds the
// window's samples (NaN where invalid) at rateHz, and beatS the Pan-Tompkins
// beat times inside it in seconds from x[0]. It is meant to be called per
// window of the shared moving-window engine.
func WindowQuality(x []float64, rateHz float64, beatS []float64, opt QualityOptions) (Quality, error) {
	if !(rateHz >= MinRateHz && rateHz <= MaxRateHz) {
		return Quality{}, fmt.Errorf("ecg: quality: rate %v Hz: %w", rateHz, ErrRate)
	}
	if opt.FlatS == 0 {
		opt.FlatS = 0.5
	}
	if opt.MatchS == 0 {
		opt.MatchS = MatchWindowS
	}
	if !(opt.FlatS > 0) || !(opt.MatchS > 0) || math.IsNaN(opt.ClipLowmV) || math.IsNaN(opt.ClipHighmV) {
		return Quality{}, fmt.Errorf("ecg: quality options %+v: %w", opt, ErrOptions)
	}
	q := Quality{Samples: len(x)}
	nan := math.NaN()
	q.Kurtosis, q.Skewness, q.PSQI, q.BasSQI, q.BSQI = nan, nan, nan, nan, nan
	if len(x) == 0 {
		q.LeadOffFraction, q.FlatFraction, q.SaturatedFraction = nan, nan, nan
		q.Reason = "empty window"
		return q, nil
	}
	clip := opt.ClipHighmV > opt.ClipLowmV
	flatN := max(2, int(math.Round(opt.FlatS*rateHz)))
	sc := welchPool.Get().(*welchScratch)
	defer func() {
		if cap(sc.bad) <= maxPooled && cap(sc.buf) <= maxPooled {
			welchPool.Put(sc)
		}
	}()
	if cap(sc.bad) < len(x) {
		sc.bad = make([]bool, len(x))
	}
	bad := sc.bad[:len(x)]
	clear(bad)
	var nLead, nFlat, nSat int
	run := 0
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			nLead++
			bad[i] = true
			run = 0
			continue
		}
		if clip && (v >= opt.ClipHighmV || v <= opt.ClipLowmV) {
			nSat++
			bad[i] = true
		}
		if i > 0 && run > 0 && v == x[i-1] {
			run++
		} else {
			run = 1
		}
		if run == flatN {
			for j := i - flatN + 1; j <= i; j++ {
				if !bad[j] {
					bad[j] = true
				}
				nFlat++
			}
		} else if run > flatN {
			bad[i] = true
			nFlat++
		}
	}
	n := float64(len(x))
	q.LeadOffFraction, q.FlatFraction, q.SaturatedFraction = float64(nLead)/n, float64(nFlat)/n, float64(nSat)/n
	var reasons []string
	// Moments of the valid samples.
	var s1 float64
	var cnt int
	for i, v := range x {
		if !bad[i] {
			s1 += v
			cnt++
		}
	}
	if cnt >= 4 {
		mean := s1 / float64(cnt)
		var m2, m3, m4 float64
		for i, v := range x {
			if !bad[i] {
				d := v - mean
				d2 := d * d
				m2 += d2
				m3 += d2 * d
				m4 += d2 * d2
			}
		}
		c := float64(cnt)
		m2, m3, m4 = m2/c, m3/c, m4/c
		if m2 > 0 {
			q.Kurtosis = m4 / (m2 * m2)
			q.Skewness = m3 / math.Pow(m2, 1.5)
		} else {
			reasons = append(reasons, "no variance")
		}
	} else {
		reasons = append(reasons, "fewer than 4 valid samples")
	}
	// Spectral ratios on the longest valid run.
	bs, be, cur := 0, 0, 0
	for i := 0; i <= len(x); i++ {
		if i == len(x) || bad[i] {
			if i-cur > be-bs {
				bs, be = cur, i
			}
			cur = i + 1
		}
	}
	switch {
	case rateHz < 80:
		reasons = append(reasons, "rate below 80 Hz: no 40 Hz band")
	case float64(be-bs) < 2*rateHz:
		reasons = append(reasons, "longest valid run under 2 s: no spectrum")
	default:
		seg := min(be-bs, int(4*rateHz))
		f, p, err := sc.welch(x[bs:be], rateHz, seg)
		if err == nil {
			band := func(lo, hi float64) float64 {
				s := 0.0
				for i, fr := range f {
					if fr >= lo && fr <= hi {
						s += p[i]
					}
				}
				return s
			}
			if d := band(5, 40); d > 0 {
				q.PSQI = band(5, 15) / d
			}
			if d := band(0, 40); d > 0 {
				q.BasSQI = 1 - band(0, 1)/d
			}
		}
	}
	// bSQI against the second detector.
	env, err := DetectEnvelope(x, rateHz)
	if err != nil {
		return q, err
	}
	q.EnvelopeBeats = len(env.Beats)
	if len(beatS)+len(env.Beats) == 0 {
		reasons = append(reasons, "no beats from either detector")
	} else {
		s, err := MatchBeats(beatS, BeatTimes(env.Beats), opt.MatchS)
		if err != nil {
			return q, err
		}
		q.BSQI = BeatAgreement(s)
	}
	for i, r := range reasons {
		if i > 0 {
			q.Reason += "; "
		}
		q.Reason += r
	}
	return q, nil
}

// BeatAgreement returns the bSQI of a comparison of two detectors' beats:
// matched / (n1 + n2 - matched) = TP / (TP + FN + FP), 1 for identical
// outputs and 0 for disjoint ones (Li, Mark and Clifford 2008), NaN when
// both are empty.
func BeatAgreement(s Score) float64 {
	return ratio(s.TP, s.TP+s.FN+s.FP)
}

// welchScratch is WindowQuality's workspace, reused from window to window:
// the sample flags, the FFT plan and Hann window for the last segment length
// and the segment, coefficient and spectrum buffers.
type welchScratch struct {
	bad       []bool
	seg       int
	fft       *fourier.FFT
	hann      []float64
	wss       float64
	buf, tmp  []float64
	coef      []complex128
	freq, psd []float64
}

var welchPool = sync.Pool{New: func() any { return new(welchScratch) }}

// welch is dsp.Welch(x, fs, dsp.WelchOptions{Segment: seg}) (periodic Hann
// segments, half overlap, NFFT = seg, mean removed per segment, one-sided
// density scaling) with the same operations in the same order, so the same
// numbers to the bit, on reused buffers. x must be finite with len(x) >= seg
// >= 2; the returned slices are valid until the scratch is reused.
func (w *welchScratch) welch(x []float64, fsHz float64, seg int) (freqs, psd []float64, err error) {
	if len(x) < 2 || seg < 2 || seg > len(x) {
		return dsp.Welch(x, fsHz, dsp.WelchOptions{Segment: seg})
	}
	nfft := seg
	if w.seg != seg || w.fft == nil {
		w.seg = seg
		w.hann = dsp.HannPeriodic(seg)
		w.wss = 0
		for _, v := range w.hann {
			w.wss += v * v
		}
		w.fft = fourier.NewFFT(nfft)
		w.buf = make([]float64, nfft)
		w.tmp = make([]float64, seg)
		w.coef = make([]complex128, nfft/2+1)
		w.psd = make([]float64, nfft/2+1)
		w.freq = make([]float64, nfft/2+1)
	}
	ov := seg / 2
	step := seg - ov
	nseg := (len(x)-seg)/step + 1
	psd, buf, tmp, win := w.psd, w.buf, w.tmp, w.hann
	clear(psd)
	for s := 0; s < nseg; s++ {
		part := x[s*step : s*step+seg]
		var m float64
		for _, v := range part {
			m += v
		}
		m /= float64(seg)
		for i, v := range part {
			tmp[i] = v - m
		}
		for i, v := range tmp {
			buf[i] = v * win[i]
		}
		w.coef = w.fft.Coefficients(w.coef, buf)
		for k, c := range w.coef {
			psd[k] += real(c)*real(c) + imag(c)*imag(c)
		}
	}
	norm := fsHz * w.wss * float64(nseg)
	freqs = w.freq
	for k := range psd {
		psd[k] /= norm
		if k > 0 && !(nfft%2 == 0 && k == nfft/2) {
			psd[k] *= 2
		}
		freqs[k] = float64(k) * fsHz / float64(nfft)
	}
	return freqs, psd, nil
}
