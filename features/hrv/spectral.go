package hrv

import (
	"fmt"
	"math"
	"sync"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"gonum.org/v1/gonum/dsp/fourier"
)

// Estimator selects the power spectral density estimator.
type Estimator int

const (
	// Welch: cubic-spline resampling of the tachogram, detrending, Welch's
	// averaged periodogram (the default; common practice).
	Welch Estimator = iota
	// Lomb: Lomb-Scargle periodogram of the uneven NN series, no resampling
	// (Moody 1993; Laguna, Moody and Mark 1998).
	Lomb
	// Burg: autoregressive spectrum of the resampled, detrended series by
	// Burg's method (order 16 by default, Boardman et al. 2002).
	Burg
	// LombFast: the Lomb-Scargle periodogram by the fast O(N log N)
	// approximation of Press and Rybicki (Astrophys J 338:277, 1989; journal
	// details from memory), on the same grid and scaling as Lomb. Measured
	// relative band-power error about 1e-4 against the direct form with the
	// defaults (internal/dsp lomb_test.go); LombOrder and LombOversample
	// trade speed for accuracy.
	LombFast
	// LombAuto: Lomb when the direct form fits the work bound (3e8 samples
	// x frequencies), otherwise LombFast, e.g. for day-long windows. The
	// PSD's Estimator and Method say which was used and why.
	LombAuto
)

// String returns "welch", "lomb", "burg", "lomb-fast" or "lomb-auto".
func (e Estimator) String() string {
	switch e {
	case Welch:
		return "welch"
	case Lomb:
		return "lomb"
	case Burg:
		return "burg"
	case LombFast:
		return "lomb-fast"
	case LombAuto:
		return "lomb-auto"
	}
	return fmt.Sprintf("Estimator(%d)", int(e))
}

// Detrending selects how the NN series is detrended before estimation.
type Detrending int

const (
	// SmoothnessPriors removes the smoothness-priors trend (Tarvainen,
	// Ranta-aho and Karjalainen 2002), the default.
	SmoothnessPriors Detrending = iota
	// Linear removes the least-squares line.
	Linear
	// MeanOnly removes only the mean.
	MeanOnly
)

// Band is a frequency band lo < f <= hi in Hz.
type Band struct{ Lo, Hi float64 }

// Bands holds the four Task Force bands.
type Bands struct{ ULF, VLF, LF, HF Band }

// TaskForceBands are the Task Force 1996 band edges: ULF <= 0.003 Hz, VLF
// 0.003-0.04 Hz, LF 0.04-0.15 Hz, HF 0.15-0.4 Hz.
var TaskForceBands = Bands{
	ULF: Band{0, 0.003},
	VLF: Band{0.003, 0.04},
	LF:  Band{0.04, 0.15},
	HF:  Band{0.15, 0.4},
}

func (b Bands) orDefault() Bands {
	if b == (Bands{}) {
		return TaskForceBands
	}
	return b
}

func (b Bands) validate() error {
	prev := 0.0
	for i, x := range []Band{b.ULF, b.VLF, b.LF, b.HF} {
		if math.IsNaN(x.Lo) || math.IsNaN(x.Hi) || x.Lo < prev || !(x.Hi > x.Lo) || math.IsInf(x.Hi, 0) {
			return fmt.Errorf("hrv: band %d [%v, %v] Hz must be increasing and contiguous-or-ascending: %w", i, x.Lo, x.Hi, ErrInput)
		}
		prev = x.Hi
	}
	return nil
}

// SpectrumOptions configures Spectrum. Zero values mean the defaults.
type SpectrumOptions struct {
	Estimator Estimator  // Welch when zero
	Detrend   Detrending // SmoothnessPriors when zero
	// Lambda is the smoothness-priors parameter; 500 when zero (with 4 Hz
	// resampling its high-pass |H| = 0.707 lies near 0.035 Hz, methods.md
	// 2.6, computed; the pairing is commonly used, from memory), scaled by
	// (ResampleHz/4)^2 at other rates to keep that corner. For Lomb
	// the series is detrended by beat index, and the default is scaled to
	// the same corner frequency: 500 (1/(4 T))^2 with T the mean interval
	// in s (the response depends on lambda^2 sin^4(pi f/fs), so equal
	// corners need lambda proportional to fs^2; derived).
	Lambda float64
	// ResampleHz is the cubic-spline resampling rate for Welch and Burg; 4
	// when zero (common practice).
	ResampleHz float64
	// Segment, Overlap and NFFT configure Welch (in resampled samples):
	// 256 (64 s at 4 Hz), 128 and 1024 when zero (common practice; the
	// zero padding only refines the frequency grid).
	Segment, Overlap, NFFT int
	// Order is the Burg model order; 16 when zero (Boardman, Schlindwein,
	// Rocha and Leite, Physiol Meas 23:325-336, 2002: at least 16).
	Order int
	// MaxHz is the highest frequency of the Lomb and Burg grids; 0.5 when
	// zero. StepHz is their grid step: 1/(4 T) for Lomb (T the series span,
	// four-fold oversampling; Lomb refuses more than 3e8 samples x
	// frequencies, e.g. day-long windows: use LombAuto, LombFast or Welch
	// there) and 0.0005 Hz for Burg when zero (AR peaks can
	// be much narrower than the Welch resolution; band powers are sums over
	// the grid, so the grid must resolve them).
	MaxHz, StepHz float64
	// LombOrder and LombOversample configure LombFast (and LombAuto when it
	// falls back): Lagrange extirpolation order and grid oversampling, 4
	// and 4 when zero (Press and Rybicki 1989, from memory; measured band
	// error about 1e-4, 2e-6 at order 6).
	LombOrder, LombOversample int
}

// maxLombWork bounds samples x frequencies of one Lomb-Scargle evaluation
// (about a second of work).
const maxLombWork = 3e8

// PSD is a one-sided power spectral density of an NN series on a uniform
// frequency grid FreqHz[k] = k * StepHz (k from 0 for Welch and Burg, from 1
// for Lomb); Power is in ms^2/Hz, so band powers are sums of Power * StepHz.
type PSD struct {
	FreqHz    []float64
	Power     []float64 // ms^2/Hz
	StepHz    float64
	Estimator Estimator
	// ResolutionHz is the finest frequency detail the estimate carries:
	// ResampleHz/Segment for Welch (zero padding refines the grid, not
	// the resolution), 1/T for Lomb and Burg (T the series span). Compute
	// reports a band whose upper edge is not above it as undefined.
	ResolutionHz float64
	// Method describes the Lomb-Scargle evaluation ("direct" or the fast
	// approximation with its parameters, and for LombAuto why it was
	// chosen); empty for Welch and Burg.
	Method string
}

// BandPower returns the power in lo < f <= hi (ms^2): the sum of
// Power * StepHz over the grid frequencies in the band (rectangle rule,
// consistent with Parseval on the grid).
func (p PSD) BandPower(b Band) float64 {
	var s float64
	for k, f := range p.FreqHz {
		if f > b.Lo && f <= b.Hi {
			s += p.Power[k]
		}
	}
	return s * p.StepHz
}

// Peak returns the frequency of the largest PSD value in the band (Hz), or
// NaN when the band holds no grid point or no power.
func (p PSD) Peak(b Band) float64 {
	best, bf := 0.0, math.NaN()
	for k, f := range p.FreqHz {
		if f > b.Lo && f <= b.Hi && p.Power[k] > best {
			best, bf = p.Power[k], f
		}
	}
	return bf
}

// Spectrum estimates the PSD of the NN series nnMs whose interval i ends at
// endS[i] seconds (nil: cumulative sums of nnMs from 0). The tachogram point
// of each interval sits at its ending beat. Welch and Burg resample it by the
// not-a-knot cubic spline at ResampleHz over [endS[0], endS[last]], detrend,
// then estimate; Lomb detrends the uneven values by index and evaluates the
// Lomb-Scargle periodogram scaled to a one-sided density 2 T P(2 pi f), T the
// mean interval between samples (methods.md 2.6, derived; Parseval holds on
// the grid). Holes in a non-contiguous series (removed ectopic beats) are
// bridged by the spline for Welch and Burg and simply absent for Lomb;
// Compute's NN-coverage rule keeps such holes small. It needs at least 4
// intervals and a non-degenerate span.
func Spectrum(nnMs, endS []float64, opt SpectrumOptions) (PSD, error) {
	var w spectrumWork
	return w.spectrum(nnMs, endS, opt)
}

// spectrumWork holds reusable buffers for Compute's hot path.
type spectrumWork struct {
	y, z []float64
}

func (w *spectrumWork) spectrum(nnMs, endS []float64, opt SpectrumOptions) (PSD, error) {
	p, err := w.estimate(nnMs, endS, opt)
	if err == nil && allEqual(nnMs) {
		// A constant series has no variability: every band power is 0
		// (methods.md 2.7, derived), not the rounding residue of detrending.
		for k := range p.Power {
			p.Power[k] = 0
		}
	}
	return p, err
}

func allEqual(x []float64) bool {
	for _, v := range x {
		if v != x[0] {
			return false
		}
	}
	return true
}

func (w *spectrumWork) estimate(nnMs, endS []float64, opt SpectrumOptions) (PSD, error) {
	if err := checkNN(nnMs); err != nil {
		return PSD{}, err
	}
	if endS == nil {
		endS = cumulative(nnMs)
	}
	if err := checkTimes(nnMs, endS); err != nil {
		return PSD{}, err
	}
	if len(nnMs) < 4 {
		return PSD{}, fmt.Errorf("hrv: spectrum of %d intervals, need 4: %w", len(nnMs), ErrTooFew)
	}
	fs := opt.ResampleHz
	if fs == 0 {
		fs = 4
	}
	if !(fs > 0) || math.IsInf(fs, 0) {
		return PSD{}, fmt.Errorf("hrv: resampling rate %v Hz: %w", fs, ErrInput)
	}
	maxHz := opt.MaxHz
	if maxHz == 0 {
		maxHz = 0.5
	}
	if !(maxHz > 0) || math.IsInf(maxHz, 0) {
		return PSD{}, fmt.Errorf("hrv: max frequency %v Hz: %w", maxHz, ErrInput)
	}
	span := endS[len(endS)-1] - endS[0]
	switch opt.Estimator {
	case Welch, Burg:
		sp, err := dsp.NewSpline(endS, nnMs)
		if err != nil {
			return PSD{}, fmt.Errorf("hrv: spectrum: %w", err)
		}
		n := int(math.Floor(span*fs)) + 1
		if n < 4 {
			return PSD{}, fmt.Errorf("hrv: spectrum: span %v s gives %d samples at %v Hz: %w", span, n, fs, ErrTooFew)
		}
		w.y = sp.Sample(w.y[:0], endS[0], fs, n)
		lam := opt.Lambda
		if lam == 0 {
			lam = 500 * (fs / 4) * (fs / 4) // same corner at any rate (see Lambda)
		}
		z, err := w.detrend(w.y, opt.Detrend, lam)
		if err != nil {
			return PSD{}, err
		}
		nfft := opt.NFFT
		if nfft == 0 {
			nfft = 1024
		}
		if opt.Estimator == Welch {
			seg := opt.Segment
			if seg == 0 {
				seg = 256
			}
			if nfft < min(seg, len(z)) {
				nfft = min(seg, len(z))
			}
			f, p, err := welchNoDetrend(z, fs, seg, opt.Overlap, nfft)
			if err != nil {
				return PSD{}, fmt.Errorf("hrv: spectrum: %w", err)
			}
			return PSD{FreqHz: f, Power: p, StepHz: f[1] - f[0], Estimator: Welch, ResolutionHz: fs / float64(min(seg, len(z)))}, nil
		}
		order := opt.Order
		if order == 0 {
			order = 16
		}
		if order < 1 || order >= len(z) {
			return PSD{}, fmt.Errorf("hrv: Burg order %d for %d samples: %w", order, len(z), ErrTooFew)
		}
		step := opt.StepHz
		if step == 0 {
			step = 0.0005
		}
		if !(step > 0) || maxHz/step > 1e6 {
			return PSD{}, fmt.Errorf("hrv: Burg grid step %v Hz up to %v Hz: %w", step, maxHz, ErrInput)
		}
		freqs := grid(0, step, math.Min(maxHz, fs/2))
		if allZero(z) {
			return PSD{FreqHz: freqs, Power: make([]float64, len(freqs)), StepHz: step, Estimator: Burg, ResolutionHz: 1 / span}, nil
		}
		a, v, err := dsp.Burg(z, order)
		if err != nil {
			return PSD{}, fmt.Errorf("hrv: spectrum: %w", err)
		}
		return PSD{FreqHz: freqs, Power: dsp.ARSpectrum(nil, a, v, fs, freqs), StepHz: step, Estimator: Burg, ResolutionHz: 1 / span}, nil
	case Lomb, LombFast, LombAuto:
		if !(span > 0) {
			return PSD{}, fmt.Errorf("hrv: spectrum: span %v s: %w", span, ErrTooFew)
		}
		tbar := span / float64(len(endS)-1)
		lam := opt.Lambda
		if lam == 0 {
			q := 1 / (4 * tbar)
			lam = 500 * q * q
		}
		z, err := w.detrend(nnMs, opt.Detrend, lam)
		if err != nil {
			return PSD{}, err
		}
		step := opt.StepHz
		if step == 0 {
			step = 1 / (4 * span)
		}
		// Bound the work (samples x frequencies) so that day-long windows
		// cannot run for minutes. The grid is not coarsened instead: sums
		// over a grid coarser than 1/T miss or inflate spectral lines.
		if !(step > 0) || maxHz/step > 1e6 {
			return PSD{}, fmt.Errorf("hrv: Lomb-Scargle grid step %.3g Hz up to %v Hz (more than 1e6 frequencies): %w", step, maxHz, ErrInput)
		}
		work := float64(len(endS)) * maxHz / step
		est, method := opt.Estimator, "direct"
		switch {
		case est == Lomb && work > maxLombWork:
			return PSD{}, fmt.Errorf("hrv: Lomb-Scargle of %d samples on a %.3g Hz grid up to %v Hz exceeds %g evaluations (use LombFast, LombAuto, Welch or shorter windows): %w",
				len(endS), step, maxHz, maxLombWork, ErrInput)
		case est == LombAuto && work > maxLombWork:
			est = LombFast
			method = fmt.Sprintf("chosen automatically: the direct form would need %.3g evaluations (> %g); ", work, maxLombWork)
		case est == LombAuto:
			est = Lomb
			method = fmt.Sprintf("direct, chosen automatically: %.3g evaluations (<= %g)", work, maxLombWork)
		case est == LombFast:
			method = ""
		}
		freqs := grid(step, step, maxHz)
		// Times relative to the first sample keep the phases accurate.
		t := make([]float64, len(endS))
		for i, v := range endS {
			t[i] = v - endS[0]
		}
		var p []float64
		if est == LombFast {
			fo := dsp.LombFastOptions{Order: opt.LombOrder, Oversample: opt.LombOversample}
			p, err = dsp.LombScargleFast(nil, t, z, 2*math.Pi*step, len(freqs), fo)
			method += fmt.Sprintf("fast approximation (Press-Rybicki 1989), extirpolation order %d, oversampling %d",
				orDefaultInt(fo.Order, 4), orDefaultInt(fo.Oversample, 4))
		} else {
			p, err = dsp.LombScargleGrid(nil, t, z, 2*math.Pi*step, 2*math.Pi*step, len(freqs))
		}
		if err != nil {
			return PSD{}, fmt.Errorf("hrv: spectrum: %w", err)
		}
		for k := range p {
			p[k] *= 2 * tbar
		}
		return PSD{FreqHz: freqs, Power: p, StepHz: step, Estimator: est, ResolutionHz: 1 / span, Method: "lomb-scargle " + method}, nil
	}
	return PSD{}, fmt.Errorf("hrv: unknown estimator %d: %w", int(opt.Estimator), ErrInput)
}

func (w *spectrumWork) detrend(y []float64, d Detrending, lambda float64) ([]float64, error) {
	var err error
	switch d {
	case SmoothnessPriors:
		w.z, err = dsp.DetrendSmoothness(w.z[:0], y, lambda)
		if err != nil {
			return nil, fmt.Errorf("hrv: detrend: %w", err)
		}
	case Linear:
		w.z = dsp.DetrendLinear(w.z[:0], y)
	case MeanOnly:
		m := mean(y)
		w.z = w.z[:0]
		for _, v := range y {
			w.z = append(w.z, v-m)
		}
	default:
		return nil, fmt.Errorf("hrv: unknown detrending %d: %w", int(d), ErrInput)
	}
	return w.z, nil
}

func grid(from, step, to float64) []float64 {
	var f []float64
	for k := 0; ; k++ {
		v := from + float64(k)*step
		if v > to*(1+1e-12) {
			return f
		}
		f = append(f, v)
	}
}

func allZero(x []float64) bool {
	for _, v := range x {
		if v != 0 {
			return false
		}
	}
	return true
}

// cumulative returns the end times (s) of contiguous intervals starting at 0.
func cumulative(nnMs []float64) []float64 {
	t := make([]float64, len(nnMs))
	var s float64
	for i, v := range nnMs {
		s += v
		t[i] = s / 1000
	}
	return t
}

// welchPlan is the reusable part of a Welch estimate for one segment and
// FFT length: the FFT plan, the Hann window and the work buffers.
type welchPlan struct {
	seg, nfft int
	fft       *fourier.FFT
	hann      []float64
	wss       float64
	buf       []float64
	coef      []complex128
}

var welchPlans = sync.Pool{New: func() any { return new(welchPlan) }}

// welchNoDetrend is dsp.Welch(x, fs, dsp.WelchOptions{Segment: seg,
// Overlap: overlap, NFFT: nfft, Detrend: dsp.SegmentNone}) with the FFT
// plan, window and buffers reused across calls (Compute runs once per
// window): the same operations in the same order, so the same numbers to
// the bit. Anything dsp.Welch would reject goes to dsp.Welch for its error.
func welchNoDetrend(x []float64, fs float64, seg0, overlap, nfft0 int) (freqs, psd []float64, err error) {
	seg, nfft := seg0, nfft0
	if seg == 0 {
		seg = 256
	}
	if seg > len(x) {
		seg = len(x)
	}
	if nfft == 0 {
		nfft = seg
	}
	ov := overlap
	switch {
	case ov == 0:
		ov = seg / 2
	case ov < 0:
		ov = 0
	}
	finite := true
	for _, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			finite = false
			break
		}
	}
	if !(fs > 0) || math.IsInf(fs, 0) || len(x) < 2 || seg < 2 || nfft < seg || ov >= seg || !finite {
		return dsp.Welch(x, fs, dsp.WelchOptions{Segment: seg0, Overlap: overlap, NFFT: nfft0, Detrend: dsp.SegmentNone})
	}
	w := welchPlans.Get().(*welchPlan)
	defer func() {
		if cap(w.buf) <= 1<<20 {
			welchPlans.Put(w) // a huge NFFT is left to the GC
		}
	}()
	if w.seg != seg || w.nfft != nfft || w.fft == nil {
		w.seg, w.nfft = seg, nfft
		w.hann = dsp.HannPeriodic(seg)
		w.wss = 0
		for _, v := range w.hann {
			w.wss += v * v
		}
		w.fft = fourier.NewFFT(nfft)
		w.buf = make([]float64, nfft)
		w.coef = make([]complex128, nfft/2+1)
	}
	step := seg - ov
	nseg := (len(x)-seg)/step + 1
	psd = make([]float64, nfft/2+1)
	buf := w.buf
	for s := 0; s < nseg; s++ {
		part := x[s*step : s*step+seg]
		clear(buf)
		for i, v := range part {
			buf[i] = v * w.hann[i]
		}
		w.coef = w.fft.Coefficients(w.coef, buf)
		for k, c := range w.coef {
			psd[k] += real(c)*real(c) + imag(c)*imag(c)
		}
	}
	norm := fs * w.wss * float64(nseg)
	freqs = make([]float64, len(psd))
	for k := range psd {
		psd[k] /= norm
		if k > 0 && !(nfft%2 == 0 && k == nfft/2) {
			psd[k] *= 2
		}
		freqs[k] = float64(k) * fs / float64(nfft)
	}
	return freqs, psd, nil
}

func orDefaultInt(v, d int) int {
	if v == 0 {
		return d
	}
	return v
}
