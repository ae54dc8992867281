package hrv

import (
	"errors"
	"fmt"
	"math"
)

// Errors returned by the metric functions; test with errors.Is.
var (
	// ErrTooFew: fewer values than the measure needs.
	ErrTooFew = errors.New("too few intervals")
	// ErrInput: NaN, infinite, non-positive intervals, mismatched lengths,
	// times out of order or bad parameters.
	ErrInput = errors.New("invalid input")
	// ErrUndefined: the measure is not defined for this data (zero
	// variance, no template matches, zero power).
	ErrUndefined = errors.New("undefined for the data")
)

// Norm selects the normalisation of standard deviations.
type Norm int

const (
	// Sample divides by N-1 (the default; the Task Force does not fix it,
	// common practice).
	Sample Norm = iota
	// Population divides by N.
	Population
)

// Denominator selects the denominator of pNNx.
type Denominator int

const (
	// PerInterval divides the count by the number of NN intervals, the
	// Task Force wording (the default).
	PerInterval Denominator = iota
	// PerDifference divides by the number of successive differences
	// (N-1 for a contiguous series), as many tools do.
	PerDifference
)

// PairRule selects which successive differences count toward NNx.
type PairRule int

const (
	// AnyPair counts every |NN[i+1]-NN[i]| > x (the default).
	AnyPair PairRule = iota
	// FirstLonger counts NN[i] - NN[i+1] > x only (the first interval of
	// the pair is the longer), one of the Task Force variants.
	FirstLonger
	// SecondLonger counts NN[i+1] - NN[i] > x only.
	SecondLonger
)

// HistBinMs is the NN histogram bin width for the geometric measures:
// 1/128 s = 7.8125 ms (Task Force 1996, HRV triangular index).
const HistBinMs = 1000.0 / 128

func checkNN(nn []float64) error {
	for i, v := range nn {
		if math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
			return fmt.Errorf("hrv: NN %d is %v ms, want finite and positive: %w", i, v, ErrInput)
		}
	}
	return nil
}

func mean(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

// sd is the standard deviation with the given normalisation, two-pass.
func sd(x []float64, norm Norm) float64 {
	m := mean(x)
	var s float64
	for _, v := range x {
		s += (v - m) * (v - m)
	}
	d := float64(len(x))
	if norm == Sample {
		d--
	}
	return math.Sqrt(s / d)
}

func minSD(norm Norm) int {
	if norm == Sample {
		return 2
	}
	return 1
}

// diffs returns the successive differences NN[i+1]-NN[i] of a contiguous
// series, appended to dst.
func diffs(dst, nn []float64) []float64 {
	for i := 1; i < len(nn); i++ {
		dst = append(dst, nn[i]-nn[i-1])
	}
	return dst
}

// MeanNN returns the mean NN interval (ms).
func MeanNN(nn []float64) (float64, error) {
	if err := checkNN(nn); err != nil {
		return math.NaN(), err
	}
	if len(nn) == 0 {
		return math.NaN(), fmt.Errorf("hrv: mean NN of 0 intervals: %w", ErrTooFew)
	}
	return mean(nn), nil
}

// SDNN returns the standard deviation of the NN intervals (ms), Task Force
// 1996 Table 1. It needs two intervals (one with Population).
func SDNN(nn []float64, norm Norm) (float64, error) {
	if err := checkNN(nn); err != nil {
		return math.NaN(), err
	}
	if len(nn) < minSD(norm) {
		return math.NaN(), fmt.Errorf("hrv: SDNN of %d intervals: %w", len(nn), ErrTooFew)
	}
	return sd(nn, norm), nil
}

// RMSSD returns the root mean square of successive differences of nn (ms),
// Task Force 1996 Table 1. nn must be contiguous (each interval starts at
// the beat that ends the previous one). It returns NaN and ErrTooFew when
// fewer than two intervals are given.
func RMSSD(nn []float64) (float64, error) {
	if err := checkNN(nn); err != nil {
		return math.NaN(), err
	}
	if len(nn) < 2 {
		return math.NaN(), fmt.Errorf("hrv: RMSSD of %d intervals: %w", len(nn), ErrTooFew)
	}
	return rmsOf(diffs(nil, nn)), nil
}

func rmsOf(d []float64) float64 {
	var s float64
	for _, v := range d {
		s += v * v
	}
	return math.Sqrt(s / float64(len(d)))
}

// SDSD returns the standard deviation of successive differences (ms), Task
// Force 1996 Table 1. It needs three contiguous intervals (two with
// Population).
func SDSD(nn []float64, norm Norm) (float64, error) {
	if err := checkNN(nn); err != nil {
		return math.NaN(), err
	}
	if len(nn)-1 < minSD(norm) {
		return math.NaN(), fmt.Errorf("hrv: SDSD of %d intervals: %w", len(nn), ErrTooFew)
	}
	return sd(diffs(nil, nn), norm), nil
}

// PNNOptions selects the NNx variant.
type PNNOptions struct {
	Denominator Denominator // PerInterval (Task Force) when zero
	Pairs       PairRule    // AnyPair when zero
}

// PNN returns NNx, the number of successive differences greater than
// thresholdMs (strictly: a difference of exactly 50 ms does not count toward
// NN50, Task Force 1996), and pNNx = 100 NNx / denominator (%). nn must be
// contiguous and hold at least two intervals.
func PNN(nn []float64, thresholdMs float64, opt PNNOptions) (pct float64, count int, err error) {
	if err := checkNN(nn); err != nil {
		return math.NaN(), 0, err
	}
	if len(nn) < 2 {
		return math.NaN(), 0, fmt.Errorf("hrv: pNN%v of %d intervals: %w", thresholdMs, len(nn), ErrTooFew)
	}
	d := diffs(nil, nn)
	count = countOver(d, thresholdMs, opt.Pairs)
	den := len(nn)
	if opt.Denominator == PerDifference {
		den = len(d)
	}
	return 100 * float64(count) / float64(den), count, nil
}

func countOver(d []float64, x float64, rule PairRule) int {
	n := 0
	for _, v := range d {
		switch rule {
		case FirstLonger:
			if -v > x {
				n++
			}
		case SecondLonger:
			if v > x {
				n++
			}
		default:
			if math.Abs(v) > x {
				n++
			}
		}
	}
	return n
}

// histogram counts nn in bins [k*bin, (k+1)*bin) and returns the counts from
// the first to the last non-empty bin and the index of the first.
func histogram(nn []float64, bin float64) (counts []int, first int) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range nn {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	first = int(math.Floor(lo / bin))
	last := int(math.Floor(hi / bin))
	counts = make([]int, last-first+1)
	for _, v := range nn {
		counts[int(math.Floor(v/bin))-first]++
	}
	return counts, first
}

func checkBin(binMs float64) (float64, error) {
	if binMs == 0 {
		return HistBinMs, nil
	}
	if !(binMs > 0) || math.IsInf(binMs, 0) {
		return 0, fmt.Errorf("hrv: histogram bin %v ms: %w", binMs, ErrInput)
	}
	return binMs, nil
}

// maxHistBins bounds the histogram of the geometric measures so that a
// stray huge interval cannot cause an unbounded allocation or TINN's
// quadratic search to run away: 16384 bins of 7.8 ms span 128 s, far beyond
// any NN range.
const maxHistBins = 1 << 14

// TriangularIndex returns the HRV triangular index: the number of NN
// intervals divided by the height of their histogram (the modal bin count),
// with bins of binMs (HistBinMs, 1/128 s, when zero; Task Force 1996).
func TriangularIndex(nn []float64, binMs float64) (float64, error) {
	counts, _, err := histFor(nn, binMs)
	if err != nil {
		return math.NaN(), err
	}
	peak := 0
	for _, c := range counts {
		peak = max(peak, c)
	}
	return float64(len(nn)) / float64(peak), nil
}

func histFor(nn []float64, binMs float64) ([]int, float64, error) {
	if err := checkNN(nn); err != nil {
		return nil, 0, err
	}
	bin, err := checkBin(binMs)
	if err != nil {
		return nil, 0, err
	}
	if len(nn) == 0 {
		return nil, 0, fmt.Errorf("hrv: histogram of 0 intervals: %w", ErrTooFew)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range nn {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if (hi-lo)/bin > maxHistBins {
		return nil, 0, fmt.Errorf("hrv: NN range %v..%v ms needs more than %d histogram bins: %w", lo, hi, maxHistBins, ErrInput)
	}
	counts, _ := histogram(nn, bin)
	return counts, bin, nil
}

// TINN returns the triangular interpolation of the NN histogram (ms): the
// base width M - N of the triangle q that best fits the histogram D in the
// least-squares sense, with q zero outside [N, M], linear on each side and
// apex at the modal bin X with height D(X) (Task Force 1996; construction as
// restated in methods.md section 2.2). N and M range over bin centres below
// and above X (including one empty bin beyond each end). The two sides are
// independent given the apex, so each is minimised on its own. Bins of binMs
// (HistBinMs when zero).
func TINN(nn []float64, binMs float64) (float64, error) {
	counts, bin, err := histFor(nn, binMs)
	if err != nil {
		return math.NaN(), err
	}
	// Pad one empty bin on each side so the triangle may end there.
	d := make([]float64, len(counts)+2)
	for i, c := range counts {
		d[i+1] = float64(c)
	}
	x := 0
	for i, v := range d {
		if v > d[x] {
			x = i
		}
	}
	h := d[x]
	bestN, bestErr := 0, math.Inf(1)
	for n := 0; n < x; n++ {
		var e float64
		for k := 0; k < x; k++ {
			q := 0.0
			if k > n {
				q = h * float64(k-n) / float64(x-n)
			}
			e += (d[k] - q) * (d[k] - q)
		}
		if e < bestErr {
			bestN, bestErr = n, e
		}
	}
	bestM, bestErr := len(d)-1, math.Inf(1)
	for m := len(d) - 1; m > x; m-- {
		var e float64
		for k := x + 1; k < len(d); k++ {
			q := 0.0
			if k < m {
				q = h * float64(m-k) / float64(m-x)
			}
			e += (d[k] - q) * (d[k] - q)
		}
		if e < bestErr {
			bestM, bestErr = m, e
		}
	}
	return float64(bestM-bestN) * bin, nil
}

// Segments returns SDANN, the standard deviation of the mean NN of
// consecutive segments of segmentS seconds, and the SDNN index, the mean of
// the segments' SDNN (ms; Task Force 1996 Table 1, 5-min segments of 24 h
// recordings). endS[i] is the time of the beat ending nn[i]; segments are
// counted from the start of the first interval and only complete segments
// holding at least two intervals are used; nseg is how many. Both need two
// segments.
func Segments(nn, endS []float64, segmentS float64, norm Norm) (sdann, sdnnIndex float64, nseg int, err error) {
	nan := math.NaN()
	if err := checkNN(nn); err != nil {
		return nan, nan, 0, err
	}
	if err := checkTimes(nn, endS); err != nil {
		return nan, nan, 0, err
	}
	if !(segmentS > 0) || math.IsInf(segmentS, 0) {
		return nan, nan, 0, fmt.Errorf("hrv: segment length %v s: %w", segmentS, ErrInput)
	}
	if len(nn) == 0 {
		return nan, nan, 0, fmt.Errorf("hrv: SDANN of 0 intervals: %w", ErrTooFew)
	}
	t0 := endS[0] - nn[0]/1000
	last := endS[len(endS)-1]
	var means, sds []float64
	for i := 0; i < len(nn); {
		k := math.Floor((endS[i] - t0) / segmentS)
		segEnd := t0 + (k+1)*segmentS
		j := i
		for j < len(nn) && endS[j] < segEnd {
			j++
		}
		complete := segEnd <= last+1e-9
		if complete && j-i >= 2 && j-i >= minSD(norm) {
			means = append(means, mean(nn[i:j]))
			sds = append(sds, sd(nn[i:j], norm))
		}
		i = j
	}
	nseg = len(means)
	if nseg < 2 || nseg < minSD(norm) {
		return nan, nan, nseg, fmt.Errorf("hrv: %d complete %v s segments, need 2: %w", nseg, segmentS, ErrTooFew)
	}
	return sd(means, norm), mean(sds), nseg, nil
}

// checkTimes validates interval end times: same length as nn, finite and
// strictly increasing.
func checkTimes(nn, endS []float64) error {
	if len(endS) != len(nn) {
		return fmt.Errorf("hrv: %d times for %d intervals: %w", len(endS), len(nn), ErrInput)
	}
	for i, t := range endS {
		if math.IsNaN(t) || math.IsInf(t, 0) {
			return fmt.Errorf("hrv: time %d is %v: %w", i, t, ErrInput)
		}
		if i > 0 && !(t > endS[i-1]) {
			return fmt.Errorf("hrv: time %d (%v s) not after time %d (%v s): %w", i, t, i-1, endS[i-1], ErrInput)
		}
	}
	return nil
}

// HeartRate returns the mean heart rate 60000 / mean NN (beats per minute
// of NN time) and the minimum and maximum instantaneous rate 60000 / NN_i
// (bpm, unsmoothed; common practice).
func HeartRate(nn []float64) (meanBPM, minBPM, maxBPM float64, err error) {
	m, err := MeanNN(nn)
	if err != nil {
		return math.NaN(), math.NaN(), math.NaN(), err
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range nn {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	return 60000 / m, 60000 / hi, 60000 / lo, nil
}
