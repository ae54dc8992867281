package resp

import (
	"fmt"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
)

// EDROptions configures ECG-derived respiration. Zero values mean the
// documented defaults.
type EDROptions struct {
	// ResampleHz is the rate of the evenly resampled amplitude series: 4 Hz
	// when zero (common practice, methods reference 5.6).
	ResampleHz float64
	// LowHz and HighHz bound the breathing band: 0.083 and 0.417 Hz
	// (5-25 cycles/min, the band of Babaeizadeh et al. 2011) when zero.
	LowHz, HighHz float64
	// OutlierMADs: amplitudes further than this many scaled median absolute
	// deviations from the median are dropped before interpolation: 5 when
	// zero (common practice, our choice of width).
	OutlierMADs float64
	// MinDurationS is the shortest beat span analysed: 30 s when zero
	// (about 4 cycles of the slowest breathing in the band).
	MinDurationS float64
}

// EDRResult is a breathing-rate estimate from QRS amplitudes.
type EDRResult struct {
	// RatePerMin is the breathing rate at the spectral peak of the
	// band-passed amplitude series (breaths per minute); PeakHz the same in
	// Hz.
	RatePerMin, PeakHz float64
	// PeakFrac is the share of the band's power within +-0.02 Hz of the
	// peak: near 1 for a clear breathing modulation, low for noise.
	PeakFrac float64
	Beats    int // beats offered
	Dropped  int // beats dropped (non-finite or outlying amplitude)
	// Signal is the band-passed EDR series at ResampleHz from StartS.
	Signal []float64
	StartS float64
}

// EDR estimates the breathing rate from per-beat QRS amplitudes, after Moody
// et al. 1985 (details from memory): breathing rotates the heart's electrical
// axis and changes thoracic impedance, so the R (or R-S) amplitude follows
// the breath. times are beat times (s, increasing) and amp the amplitude of
// each beat (for example in mV, the Beat amplitude of package ecg, which this
// package does not import). The amplitudes are cleaned of outliers,
// interpolated linearly to ResampleHz, band-passed (order-2 Butterworth,
// zero phase) to LowHz-HighHz, and the rate is the peak of a Hann-windowed
// periodogram on a 0.001 Hz grid. It is an estimate for when no bands are
// worn; with bands, the breaths are better.
func EDR(times, amp []float64, opt EDROptions) (EDRResult, error) {
	res := EDRResult{RatePerMin: math.NaN(), PeakHz: math.NaN(), PeakFrac: math.NaN(), Beats: len(times)}
	if len(times) != len(amp) {
		return res, fmt.Errorf("resp: EDR: %d beat times and %d amplitudes: %w", len(times), len(amp), ErrInput)
	}
	fs, lo, hi, mads, minD := opt.ResampleHz, opt.LowHz, opt.HighHz, opt.OutlierMADs, opt.MinDurationS
	if fs == 0 {
		fs = 4
	}
	if lo == 0 {
		lo = 5.0 / 60
	}
	if hi == 0 {
		hi = 25.0 / 60
	}
	if mads == 0 {
		mads = 5
	}
	if minD == 0 {
		minD = 30
	}
	if !(fs > 0 && lo > 0 && hi > lo && hi < fs/2 && mads > 0 && minD > 0) || math.IsInf(fs, 0) {
		return res, fmt.Errorf("resp: EDR options %+v: %w", opt, ErrInput)
	}
	var t, a []float64
	for i := range times {
		if !finite(times[i]) {
			return res, fmt.Errorf("resp: EDR: beat %d time %v: %w", i, times[i], ErrInput)
		}
		if i > 0 && times[i] <= times[i-1] {
			return res, fmt.Errorf("resp: EDR: beat %d at %v s not after beat %d at %v s: %w", i, times[i], i-1, times[i-1], ErrInput)
		}
		if finite(amp[i]) {
			t = append(t, times[i])
			a = append(a, amp[i])
		}
	}
	if len(a) > 0 {
		med := median(a)
		dev := make([]float64, len(a))
		for i, v := range a {
			dev[i] = math.Abs(v - med)
		}
		mad := 1.4826 * median(dev)
		k := 0
		for i := range a {
			if mad == 0 || math.Abs(a[i]-med) <= mads*mad {
				t[k], a[k] = t[i], a[i]
				k++
			}
		}
		t, a = t[:k], a[:k]
	}
	res.Dropped = len(times) - len(t)
	if len(t) < 8 || t[len(t)-1]-t[0] < minD {
		return res, fmt.Errorf("resp: EDR: %d usable beats over %.1f s, need %.0f s: %w", len(t), extent(t), minD, ErrTooFew)
	}
	n := int((t[len(t)-1]-t[0])*fs) + 1
	x := make([]float64, n)
	j := 0
	for i := range x {
		ti := t[0] + float64(i)/fs
		for j+1 < len(t)-1 && t[j+1] <= ti {
			j++
		}
		f := (ti - t[j]) / (t[j+1] - t[j])
		x[i] = a[j] + math.Max(0, math.Min(1, f))*(a[j+1]-a[j])
	}
	m, _ := meanSD(x)
	for i := range x {
		x[i] -= m
	}
	bp, err := dsp.ButterBandpass(2, lo, hi, fs)
	if err != nil {
		return res, fmt.Errorf("resp: EDR band-pass: %w", err)
	}
	y := bp.FiltFilt(nil, x)
	res.Signal, res.StartS = y, t[0]
	// Periodogram on a fine grid over the band.
	wy := make([]float64, n)
	for i, v := range y {
		wy[i] = v * (0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(max(n-1, 1)))) // Hann
	}
	var freqs, pows []float64
	var total float64
	for k := 0; ; k++ {
		f := lo + 0.001*float64(k)
		if f > hi+1e-12 {
			break
		}
		// DFT at f by phasor rotation (no trigonometry per sample).
		dc, ds := math.Cos(2*math.Pi*f/fs), math.Sin(2*math.Pi*f/fs)
		c, sn := 1.0, 0.0
		var re, im float64
		for _, v := range wy {
			re += v * c
			im -= v * sn
			c, sn = c*dc-sn*ds, sn*dc+c*ds
		}
		p := re*re + im*im
		freqs = append(freqs, f)
		pows = append(pows, p)
		total += p
	}
	best := 0
	for i := range pows {
		if pows[i] > pows[best] {
			best = i
		}
	}
	if !(total > 0) {
		return res, fmt.Errorf("resp: EDR: amplitudes do not vary: %w", ErrUndefined)
	}
	pk := freqs[best]
	if best > 0 && best < len(pows)-1 {
		if den := pows[best-1] - 2*pows[best] + pows[best+1]; den < 0 {
			pk += 0.5 * (pows[best-1] - pows[best+1]) / den * 0.001
		}
	}
	var near float64
	for i, f := range freqs {
		if math.Abs(f-freqs[best]) <= 0.02 {
			near += pows[i]
		}
	}
	res.PeakHz, res.RatePerMin, res.PeakFrac = pk, 60*pk, near/total
	return res, nil
}

func extent(t []float64) float64 {
	if len(t) < 2 {
		return 0
	}
	return t[len(t)-1] - t[0]
}

// RSAResult is respiratory sinus arrhythmia by the peak-valley method.
type RSAResult struct {
	// PerBreathMs is, per breath, the longest RR interval ending in the
	// expiration minus the shortest ending in the inspiration (ms), 0 when
	// that difference is negative (no arrhythmia in phase with the breath),
	// NaN when either phase holds no interval.
	PerBreathMs []float64
	MeanMs      float64 // mean over the breaths where it is defined (ms); NaN if none
	Breaths     int     // breaths with a defined value
}

// RSAPeakValley computes respiratory sinus arrhythmia per breath by the
// peak-valley method (Grossman et al. 1990; the exact rule as recalled in
// methods reference 5.6, from memory): for each breath, the longest RR
// interval in expiration minus the shortest in inspiration. beatTimes are
// R-peak times (s, increasing, the same time base as the breaths); an
// interval belongs to the phase in which its ending beat falls. Breaths with
// a quality flag get NaN.
func RSAPeakValley(beatTimes []float64, breaths []Breath) (RSAResult, error) {
	res := RSAResult{MeanMs: math.NaN(), PerBreathMs: make([]float64, len(breaths))}
	for i, t := range beatTimes {
		if !finite(t) || (i > 0 && t <= beatTimes[i-1]) {
			return res, fmt.Errorf("resp: RSA: beat %d time %v not finite and increasing: %w", i, t, ErrInput)
		}
	}
	var sum float64
	for k, b := range breaths {
		res.PerBreathMs[k] = math.NaN()
		if b.Quality&^QualityLongPause != 0 {
			continue
		}
		lo := sort.SearchFloat64s(beatTimes, b.Onset)
		minI, maxE := math.Inf(1), math.Inf(-1)
		for i := max(lo, 1); i < len(beatTimes) && beatTimes[i] < b.EndExp+b.PauseS; i++ {
			rr := 1000 * (beatTimes[i] - beatTimes[i-1])
			if beatTimes[i] < b.EndInsp {
				minI = math.Min(minI, rr)
			} else {
				maxE = math.Max(maxE, rr)
			}
		}
		if math.IsInf(minI, 0) || math.IsInf(maxE, 0) {
			continue
		}
		v := math.Max(0, maxE-minI)
		res.PerBreathMs[k] = v
		sum += v
		res.Breaths++
	}
	if res.Breaths > 0 {
		res.MeanMs = sum / float64(res.Breaths)
	} else if len(breaths) > 0 {
		return res, fmt.Errorf("resp: RSA: no breath holds beats in both phases: %w", ErrTooFew)
	}
	return res, nil
}
