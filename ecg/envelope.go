package ecg

import (
	"fmt"
	"math"
	"sort"
	"sync"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"github.com/tidalbeat/tidalbeat/window"
)

// DetectEnvelope is a second QRS detector, independent of Pan-Tompkins by
// design, for cross-checks (the bSQI agreement index of Li, Mark and
// Clifford 2008 needs two detectors that fail differently) and for use on
// its own. It is a batch, zero-phase method of our own:
//
//  1. an order-2 Butterworth band-pass 8-25 Hz run forwards and backwards
//     (no delay), a higher and wider band than Pan-Tompkins' 5-15 Hz;
//  2. an energy envelope: the square root of a centred 100 ms moving mean of
//     the squared band-passed signal;
//  3. peaks: local maxima of the envelope at least 200 ms apart (the larger
//     kept), accepted when above the larger of 40 % of the median of the 8
//     most recent accepted peak heights (seeded with the three largest
//     envelope peaks of the first 4 s) and 5 times the 5th percentile of the
//     run's envelope (a noise floor taken from the quiet stretches between
//     beats, so it stays below the beats from 30 to 220 beats/min, where
//     QRS complexes fill most of the signal); no search-back, no T-wave rule;
//  4. the R time is the extremum of the band-passed signal within 60 ms of
//     the envelope peak, refined on the input with the same polarity.
//
// Non-finite samples split the signal into runs; runs shorter than 1 s give
// no beats. It returns beats like Detect (AmplitudemV is the input's
// peak-to-trough within 60 ms of the R time; SearchBack is always false) and
// the non-finite stretches as gaps.
func DetectEnvelope(x []float64, rateHz float64) (Result, error) {
	if len(x) == 0 {
		return Result{}, fmt.Errorf("ecg: envelope detector: %w", ErrEmpty)
	}
	if !(rateHz >= MinRateHz && rateHz <= MaxRateHz) {
		return Result{}, fmt.Errorf("ecg: envelope detector: rate %v Hz: %w", rateHz, ErrRate)
	}
	bp, err := dsp.ButterBandpass(2, 8, 25, rateHz)
	if err != nil {
		return Result{}, fmt.Errorf("ecg: envelope detector: %w", err)
	}
	var res Result
	res.Gaps = window.InvalidRuns(nil, x, rateHz, 0)
	for i := 0; i < len(x); {
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) {
			i++
			continue
		}
		j := i
		for j < len(x) && !math.IsNaN(x[j]) && !math.IsInf(x[j], 0) {
			j++
		}
		if float64(j-i) >= rateHz {
			res.Beats = append(res.Beats, envelopeRun(x[i:j], i, rateHz, bp)...)
		}
		i = j
	}
	return res, nil
}

// envScratch holds envelopeRun's per-run buffers, reused across calls
// (WindowQuality runs the detector on every window).
type envScratch struct {
	y, ext, env, ps, sel []float64
}

var envPool = sync.Pool{New: func() any { return new(envScratch) }}

// maxPooled is the largest buffer (in elements) kept in the scratch pools:
// windows of a few minutes are reused, a whole-record call is not retained.
const maxPooled = 1 << 20

func envelopeRun(x []float64, off int, fs float64, bp dsp.Cascade) []Beat {
	n := len(x)
	sc := envPool.Get().(*envScratch)
	defer func() {
		if cap(sc.ext) <= maxPooled {
			envPool.Put(sc) // buffers of a long run are left to the GC
		}
	}()
	sc.y, sc.ext = filtFilt(bp, sc.y, sc.ext, x)
	y := sc.y
	half := max(1, int(math.Round(0.05*fs)))
	sc.env = growF(sc.env, n)
	env := sc.env
	// Centred moving mean of y^2 over 2*half+1 samples (prefix sums).
	sc.ps = growF(sc.ps, n+1)
	ps := sc.ps
	ps[0] = 0
	for i, v := range y {
		ps[i+1] = ps[i] + v*v
	}
	for i := range env {
		a, b := max(0, i-half), min(n, i+half+1)
		env[i] = math.Sqrt(math.Max(0, ps[b]-ps[a]) / float64(b-a))
	}
	sc.sel = append(sc.sel[:0], env...)
	// Noise floor from the quiet part of the envelope: a low percentile
	// stays on the baseline between beats even when QRS complexes fill most
	// of the signal (at 220 beats/min the raised envelope covers roughly 80 %
	// of each RR interval, so the median sits on the beats themselves).
	floor := envFloorFactor * orderStat(sc.sel, int(envFloorQuantile*float64(n-1)))
	sep := int(math.Round(envRefractoryS * fs))
	// Local maxima, merged within sep keeping the larger.
	var pk []int
	for i := 1; i+1 < n; i++ {
		if env[i] > env[i-1] && env[i] >= env[i+1] {
			if len(pk) > 0 && i-pk[len(pk)-1] < sep {
				if env[i] > env[pk[len(pk)-1]] {
					pk[len(pk)-1] = i
				}
				continue
			}
			pk = append(pk, i)
		}
	}
	// Seed the recent-peak memory with the largest peaks of the first 4 s.
	var seed []float64
	for _, p := range pk {
		if float64(p) < 4*fs {
			seed = append(seed, env[p])
		}
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(seed)))
	recent := make([]float64, 0, 8)
	for i := 0; i < len(seed) && i < 3; i++ {
		recent = append(recent, seed[i])
	}
	w := max(1, int(math.Round(0.06*fs)))
	var out []Beat
	var mbuf [8]float64
	last := -sep
	for _, p := range pk {
		th := floor
		if len(recent) > 0 {
			m := append(mbuf[:0], recent...)
			sort.Float64s(m)
			th = math.Max(th, 0.4*m[len(m)/2])
		}
		if env[p] <= th || p-last < sep {
			continue
		}
		if len(recent) == 8 {
			copy(recent, recent[1:])
			recent = recent[:7]
		}
		recent = append(recent, env[p])
		last = p
		a, b := max(0, p-w), min(n-1, p+w)
		r := a
		for j := a; j <= b; j++ {
			if math.Abs(y[j]) > math.Abs(y[r]) {
				r = j
			}
		}
		// Refine on the input with the band-passed polarity.
		s := 1.0
		if y[r] < 0 {
			s = -1
		}
		a2, b2 := max(0, r-w/2), min(n-1, r+w/2)
		best := r
		lo, hi := x[a2], x[a2]
		for j := a2; j <= b2; j++ {
			if s*x[j] > s*x[best] {
				best = j
			}
		}
		for j := max(0, best-w); j <= min(n-1, best+w); j++ {
			lo, hi = math.Min(lo, x[j]), math.Max(hi, x[j])
		}
		out = append(out, Beat{Sample: best + off, Time: float64(best+off) / fs, AmplitudemV: hi - lo})
	}
	return out
}

// Threshold constants of envelopeRun (our own choices, tuned on the ECG
// simulator and checked on MIT-BIH record 100; see envelope_test.go).
const (
	// envFloorQuantile is the envelope percentile (5th) taken as the noise
	// level, and envFloorFactor the multiple of it a peak must exceed. On
	// white noise alone the largest envelope peaks exceed 4 times the 5th
	// percentile now and then (measured on 3000 s at 250 Hz: 45 peaks above
	// 4x, none above 5x), so 5x rejects noise-only stretches. Trade-off
	// (measured on the simulator, 1 mV R waves): with 0.15 mV white noise
	// the floor starts to cut beats at 220 beats/min (Se about 93 %); with
	// 0.1 mV or less it does not up to 220.
	envFloorQuantile = 0.05
	envFloorFactor   = 5.0
	// envRefractoryS is the peak separation: 200 ms, the physiological
	// refractory period (common practice), which keeps beats at 220
	// beats/min (RR 273 ms) apart even with RR variability and noise moving
	// the envelope peak.
	envRefractoryS = 0.2
)

func growF(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// orderStat returns the k-th smallest value of s (0-based), the value
// sort.Float64s(s) would leave at s[k], reordering s. It selects in
// expected linear time (quickselect, median-of-three pivot); with a NaN in
// s it sorts instead, so NaNs order first exactly as in sort.Float64s.
func orderStat(s []float64, k int) float64 {
	for _, v := range s {
		if math.IsNaN(v) {
			sort.Float64s(s)
			return s[k]
		}
	}
	lo, hi := 0, len(s)-1
	for hi > lo {
		if hi-lo < 16 {
			sort.Float64s(s[lo : hi+1])
			return s[k]
		}
		mid := lo + (hi-lo)/2
		if s[mid] < s[lo] {
			s[mid], s[lo] = s[lo], s[mid]
		}
		if s[hi] < s[lo] {
			s[hi], s[lo] = s[lo], s[hi]
		}
		if s[hi] < s[mid] {
			s[hi], s[mid] = s[mid], s[hi]
		}
		p := s[mid]
		// Hoare partition: s[lo..j] <= p <= s[j+1..hi].
		i, j := lo-1, hi+1
		for {
			i++
			for s[i] < p {
				i++
			}
			j--
			for s[j] > p {
				j--
			}
			if i >= j {
				break
			}
			s[i], s[j] = s[j], s[i]
		}
		if k <= j {
			hi = j
		} else {
			lo = j + 1
		}
	}
	return s[k]
}

// filtFilt is dsp.Cascade.FiltFilt(dst, x) on a reusable extension buffer:
// the same odd reflection of 3*(2*sections+1) samples at each end, the same
// steady-state reset (dsp.Filter.Reset) before each pass, the same
// transposed direct form II updates in the same order, so the same numbers
// to the bit; the biquads run one after the other over the whole buffer
// with their state in registers. x must hold at least 2 samples.
func filtFilt(c dsp.Cascade, dst, ext, x []float64) ([]float64, []float64) {
	n := len(x)
	dst = growF(dst, n)
	pad := min(3*(2*len(c)+1), n-1)
	ext = growF(ext, n+2*pad)
	for i := 0; i < pad; i++ {
		ext[i] = 2*x[0] - x[pad-i]
		ext[n+pad+i] = 2*x[n-1] - x[n-2-i]
	}
	copy(ext[pad:], x)
	pass := func() {
		v := ext[0]
		// Steady state for the constant input v (dsp.Filter.Reset).
		z := make([][2]float64, len(c))
		for k, s := range c {
			g := (s.B0 + s.B1 + s.B2) / (1 + s.A1 + s.A2)
			y := g * v
			z[k][1] = s.B2*v - s.A2*y
			z[k][0] = y - s.B0*v
			v = y
		}
		k := 0
		// Two sections per sweep: their recursions are independent chains
		// the processor overlaps.
		for ; k+1 < len(c); k += 2 {
			s, t := c[k], c[k+1]
			z0, z1, w0, w1 := z[k][0], z[k][1], z[k+1][0], z[k+1][1]
			for i, u := range ext {
				y := s.B0*u + z0
				z0 = s.B1*u - s.A1*y + z1
				z1 = s.B2*u - s.A2*y
				o := t.B0*y + w0
				w0 = t.B1*y - t.A1*o + w1
				w1 = t.B2*y - t.A2*o
				ext[i] = o
			}
		}
		if k < len(c) {
			s := c[k]
			z0, z1 := z[k][0], z[k][1]
			for i, u := range ext {
				y := s.B0*u + z0
				z0 = s.B1*u - s.A1*y + z1
				z1 = s.B2*u - s.A2*y
				ext[i] = y
			}
		}
	}
	pass()
	for i, j := 0, len(ext)-1; i < j; i, j = i+1, j-1 {
		ext[i], ext[j] = ext[j], ext[i]
	}
	pass()
	for i := 0; i < n; i++ {
		dst[i] = ext[len(ext)-1-pad-i]
	}
	return dst, ext
}
