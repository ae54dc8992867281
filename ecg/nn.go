package ecg

import (
	"fmt"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"github.com/tidalbeat/tidalbeat/window"
)

// NNMethod selects how RR intervals are screened for artefacts and ectopic
// beats.
type NNMethod int

const (
	// NNTimeVarying is the time-varying threshold classification of
	// Lipponen and Tarvainen 2019 (the default).
	NNTimeVarying NNMethod = iota
	// NNPercent removes an interval that differs from the reference interval
	// by more than PercentLimit (the simple percentage rule). The first
	// interval of each gap-free run is the initial reference and is kept.
	NNPercent
	// NNLimitsOnly applies only the physiological limits.
	NNLimitsOnly
)

// Fix says what was done to one NN interval.
type Fix uint8

const (
	FixNone    Fix = iota // kept as measured
	FixEctopic            // adjacent to an ectopic beat: replaced by interpolation
	FixLong               // too long, not a missed beat: replaced by interpolation
	FixShort              // too short, not an extra beat: replaced by interpolation
	FixMissed             // half of an interval split at a missed beat
	FixExtra              // two intervals merged across an extra detection
)

// String returns a short name for the fix.
func (f Fix) String() string {
	switch f {
	case FixNone:
		return "none"
	case FixEctopic:
		return "ectopic"
	case FixLong:
		return "long"
	case FixShort:
		return "short"
	case FixMissed:
		return "missed"
	case FixExtra:
		return "extra"
	}
	return fmt.Sprintf("Fix(%d)", int(f))
}

// NNOptions configures CleanRR. Zero values mean the documented defaults.
//
// The Lipponen-Tarvainen constants are as recalled in the methods reference
// section 4.1, which marks them "from memory, unverified": they are options
// so they can be set to the published values once confirmed against
// Lipponen and Tarvainen, J Med Eng Technol 43(3):173-181, 2019.
type NNOptions struct {
	Method NNMethod
	// Alpha scales the quartile deviation into the thresholds Th1 and Th2;
	// 5.2 when zero (from memory, unverified).
	Alpha float64
	// C1 and C2 shape the ectopic region of the (S11, S12) plane; 0.13 and
	// 0.17 when zero (from memory, unverified).
	C1, C2 float64
	// QDBeats is the length of the centred window for the quartile
	// deviations; 91 when zero (from memory, unverified).
	QDBeats int
	// MedianBeats is the length of the centred median window; 11 when zero
	// (from memory, unverified).
	MedianBeats int
	// MinThresholdms floors Th1 and Th2 so a perfectly regular series does
	// not divide by zero; 1 ms when zero (common practice, no source).
	MinThresholdms float64
	// PercentLimit is the relative change allowed by NNPercent; 0.20 when
	// zero (customarily attributed to Malik; from memory, unverified).
	PercentLimit float64
	// PercentVsPrevious compares each interval with the raw previous
	// interval instead of the last accepted one (the default), the choice
	// the methods reference 4.2 says to expose.
	PercentVsPrevious bool
	// MinRRms and MaxRRms are the physiological limits applied after
	// correction; intervals outside them are removed. 250 ms (240
	// beats/min) and 2000 ms (30 beats/min) when zero (common practice, no
	// source; wide enough for exercise up to 200+ beats/min and sleep).
	MinRRms, MaxRRms float64
}

func (o NNOptions) withDefaults() (NNOptions, error) {
	if o.Alpha == 0 {
		o.Alpha = 5.2
	}
	if o.C1 == 0 {
		o.C1 = 0.13
	}
	if o.C2 == 0 {
		o.C2 = 0.17
	}
	if o.QDBeats == 0 {
		o.QDBeats = 91
	}
	if o.MedianBeats == 0 {
		o.MedianBeats = 11
	}
	if o.MinThresholdms == 0 {
		o.MinThresholdms = 1
	}
	if o.PercentLimit == 0 {
		o.PercentLimit = 0.20
	}
	if o.MinRRms == 0 {
		o.MinRRms = 250
	}
	if o.MaxRRms == 0 {
		o.MaxRRms = 2000
	}
	switch {
	case o.Method < NNTimeVarying || o.Method > NNLimitsOnly:
		return o, fmt.Errorf("ecg: NN method %d: %w", o.Method, ErrOptions)
	case !(o.Alpha > 0) || !(o.C1 >= 0) || !(o.C2 >= 0) || !(o.MinThresholdms > 0) || math.IsInf(o.Alpha, 0):
		return o, fmt.Errorf("ecg: NN constants alpha %v c1 %v c2 %v floor %v: %w", o.Alpha, o.C1, o.C2, o.MinThresholdms, ErrOptions)
	case o.QDBeats < 3 || o.MedianBeats < 1 || o.QDBeats > 100000 || o.MedianBeats > 100000:
		return o, fmt.Errorf("ecg: NN windows %d/%d beats: %w", o.QDBeats, o.MedianBeats, ErrOptions)
	case !(o.PercentLimit > 0) || o.PercentLimit > 10:
		return o, fmt.Errorf("ecg: percentage limit %v: %w", o.PercentLimit, ErrOptions)
	case !(o.MinRRms > 0) || !(o.MaxRRms > o.MinRRms) || math.IsInf(o.MaxRRms, 0):
		return o, fmt.Errorf("ecg: RR limits %v..%v ms: %w", o.MinRRms, o.MaxRRms, ErrOptions)
	}
	return o, nil
}

// NNCounts says what the cleaning did, by type. Beat counts (Ectopic,
// Missed, Extra) count beats; the others count intervals.
type NNCounts struct {
	Intervals  int // RR intervals formed (not across gaps)
	AcrossGap  int // beat pairs not joined because a gap lies between them
	Ectopic    int // ectopic beats; their two adjacent intervals interpolated
	Long       int // long intervals interpolated
	Short      int // short intervals interpolated
	Missed     int // missed beats inserted (interval split in two)
	Extra      int // extra detections removed (two intervals merged)
	OutOfRange int // intervals removed by the physiological limits
	Percent    int // intervals removed by the percentage rule
}

// NN is a cleaned NN series. TimeS, Ms and Fix are parallel: interval i ends
// at the beat at TimeS[i] and lasts Ms[i] milliseconds.
type NN struct {
	TimeS []float64
	Ms    []float64
	Fix   []Fix
	// RemovedS holds the end times (s) of intervals removed outright (limits,
	// percentage rule), so a window can count them too.
	RemovedS []float64
	Counts   NNCounts
}

// CorrectedFraction returns the fraction of intervals lo <= i < hi that
// were corrected (Fix != FixNone), NaN for an empty range.
func (nn NN) CorrectedFraction(lo, hi int) float64 {
	lo, hi = max(lo, 0), min(hi, len(nn.Fix))
	if hi <= lo {
		return math.NaN()
	}
	c := 0
	for _, f := range nn.Fix[lo:hi] {
		if f != FixNone {
			c++
		}
	}
	return float64(c) / float64(hi-lo)
}

// BeatTimes returns the R-peak times of beats in seconds.
func BeatTimes(beats []Beat) []float64 {
	out := make([]float64, len(beats))
	for i, b := range beats {
		out[i] = b.Time
	}
	return out
}

// CleanRR turns R-peak times (s, strictly increasing) into an NN series:
// intervals are formed between consecutive beats not separated by a gap,
// screened by opt.Method, corrected, and finally limited to
// [MinRRms, MaxRRms]. Every change is counted and flagged.
func CleanRR(beatS []float64, gaps []window.Interval, opt NNOptions) (NN, error) {
	o, err := opt.withDefaults()
	if err != nil {
		return NN{}, err
	}
	for i, t := range beatS {
		if math.IsNaN(t) || math.IsInf(t, 0) {
			return NN{}, fmt.Errorf("ecg: NN: beat %d time %v: %w", i, t, ErrInput)
		}
		if i > 0 && !(t > beatS[i-1]) {
			return NN{}, fmt.Errorf("ecg: NN: beat %d at %v s not after %v s: %w", i, t, beatS[i-1], ErrInput)
		}
	}
	g, err := window.NormalizeGaps(gaps)
	if err != nil {
		return NN{}, fmt.Errorf("ecg: NN: %w", err)
	}
	var nn NN
	gi := 0
	start := 0
	for i := 1; i <= len(beatS); i++ {
		split := i == len(beatS)
		if !split {
			for gi < len(g) && g[gi].End <= beatS[i-1] {
				gi++
			}
			if gi < len(g) && g[gi].Start < beatS[i] {
				split = true
				nn.Counts.AcrossGap++
			}
		}
		if split {
			cleanSegment(&nn, beatS[start:i], o)
			start = i
		}
	}
	return nn, nil
}

// cleanSegment cleans the intervals between consecutive beats of one
// gap-free run and appends them to nn.
func cleanSegment(nn *NN, t []float64, o NNOptions) {
	if len(t) < 2 {
		return
	}
	n := len(t) - 1
	rr := make([]float64, n)
	for i := range rr {
		rr[i] = 1000 * (t[i+1] - t[i])
	}
	nn.Counts.Intervals += n
	fix := make([]Fix, n)
	var outT, outMs []float64
	var outFix []Fix
	switch o.Method {
	case NNTimeVarying:
		outT, outMs, outFix = timeVarying(nn, t, rr, fix, o)
	case NNPercent:
		ref := rr[0]
		for i := range rr {
			if i > 0 {
				if o.PercentVsPrevious {
					ref = rr[i-1]
				}
				if math.Abs(rr[i]-ref) > o.PercentLimit*ref {
					nn.Counts.Percent++
					nn.RemovedS = append(nn.RemovedS, t[i+1])
					continue
				}
			}
			ref = rr[i]
			outT, outMs, outFix = append(outT, t[i+1]), append(outMs, rr[i]), append(outFix, FixNone)
		}
	default:
		outT, outMs, outFix = t[1:], rr, fix
	}
	for i := range outMs {
		if outMs[i] < o.MinRRms || outMs[i] > o.MaxRRms {
			nn.Counts.OutOfRange++
			nn.RemovedS = append(nn.RemovedS, outT[i])
			continue
		}
		nn.TimeS = append(nn.TimeS, outT[i])
		nn.Ms = append(nn.Ms, outMs[i])
		nn.Fix = append(nn.Fix, outFix[i])
	}
}

// timeVarying classifies and corrects one run with the Lipponen-Tarvainen
// 2019 scheme (methods reference 4.1, from memory): interval i is
// RR_i = t[i+1] - t[i] and dRR_i = RR_i - RR_{i-1} (dRR_0 = 0).
func timeVarying(nn *NN, t, rr []float64, fix []Fix, o NNOptions) ([]float64, []float64, []Fix) {
	n := len(rr)
	drr := make([]float64, n)
	for i := 1; i < n; i++ {
		drr[i] = rr[i] - rr[i-1]
	}
	abs := make([]float64, n)
	for i, v := range drr {
		abs[i] = math.Abs(v)
	}
	th1 := rollingQD(abs, o.QDBeats)
	med := rollingMedian(rr, o.MedianBeats)
	mrr := make([]float64, n)
	for i := range rr {
		mrr[i] = rr[i] - med[i]
		if mrr[i] < 0 {
			mrr[i] *= 2 // short intervals weigh double (Lipponen and Tarvainen 2019)
		}
		abs[i] = math.Abs(mrr[i])
	}
	th2 := rollingQD(abs, o.QDBeats)
	drrs := make([]float64, n)
	mrrs := make([]float64, n)
	for i := range rr {
		th1[i] = math.Max(o.Alpha*th1[i], o.MinThresholdms)
		th2[i] = math.Max(o.Alpha*th2[i], o.MinThresholdms)
		drrs[i] = drr[i] / th1[i]
		mrrs[i] = mrr[i] / th2[i]
	}
	at := func(i int) float64 {
		if i < 0 || i >= n {
			return 0
		}
		return drrs[i]
	}
	// Pass 1: ectopic beats. A hit at dRR index j marks beat t[j] (between
	// RR_{j-1} and RR_j), and both its intervals are interpolated.
	for j := 1; j < n; j++ {
		s11 := drrs[j]
		var s12 float64
		if s11 > 0 {
			s12 = math.Max(at(j-1), at(j+1))
		} else {
			s12 = math.Min(at(j-1), at(j+1))
		}
		if (s11 > 1 && s12 < -o.C1*s11-o.C2) || (s11 < -1 && s12 > -o.C1*s11+o.C2) {
			if fix[j-1] == FixNone && fix[j] == FixNone {
				fix[j-1], fix[j] = FixEctopic, FixEctopic
				nn.Counts.Ectopic++
			}
		}
	}
	// Pass 2: long and short intervals; missed and extra beats.
	type op struct {
		kind Fix
		i    int
	}
	var ops []op
	for i := 0; i < n; i++ {
		if fix[i] != FixNone {
			continue
		}
		if !(math.Abs(drrs[i]) > 1 || math.Abs(mrrs[i]) > 3) {
			continue
		}
		s21 := drrs[i]
		var s22 float64
		if s21 >= 0 {
			s22 = math.Min(at(i+1), at(i+2))
		} else {
			s22 = math.Max(at(i+1), at(i+2))
		}
		long := (s21 > 1 && s22 < -1) || (math.Abs(mrrs[i]) > 3 && mrr[i] > 0)
		short := (s21 < -1 && s22 > 1) || (math.Abs(mrrs[i]) > 3 && mrr[i] < 0)
		switch {
		case long:
			if math.Abs(rr[i]/2-med[i]) < th2[i] {
				fix[i] = FixMissed
				nn.Counts.Missed++
			} else {
				fix[i] = FixLong
				nn.Counts.Long++
			}
			ops = append(ops, op{fix[i], i})
		case short:
			if i+1 < n && fix[i+1] == FixNone && math.Abs(rr[i]+rr[i+1]-med[i]) < th2[i] {
				fix[i], fix[i+1] = FixExtra, FixExtra
				nn.Counts.Extra++
				ops = append(ops, op{FixExtra, i})
				i++
			} else {
				fix[i] = FixShort
				nn.Counts.Short++
				ops = append(ops, op{FixShort, i})
			}
		}
	}
	// Interpolation from the accepted intervals (cubic spline, not-a-knot,
	// over interval end times).
	var kx, ky []float64
	for i := range rr {
		if fix[i] == FixNone {
			kx, ky = append(kx, t[i+1]), append(ky, rr[i])
		}
	}
	var sp *dsp.Spline
	if len(kx) >= 2 {
		sp, _ = dsp.NewSpline(kx, ky)
	}
	val := func(x float64) float64 {
		if sp == nil {
			if len(ky) == 1 {
				return ky[0]
			}
			return math.NaN() // nothing accepted to interpolate from
		}
		// Hold the end values outside the knots rather than extrapolate.
		x = math.Max(kx[0], math.Min(kx[len(kx)-1], x))
		return sp.At(x)
	}
	outT := make([]float64, 0, n+len(ops))
	outMs := make([]float64, 0, n+len(ops))
	outFix := make([]Fix, 0, n+len(ops))
	for i := 0; i < n; i++ {
		switch fix[i] {
		case FixNone:
			outT, outMs, outFix = append(outT, t[i+1]), append(outMs, rr[i]), append(outFix, FixNone)
		case FixEctopic, FixLong, FixShort:
			v := val(t[i+1])
			if math.IsNaN(v) {
				nn.RemovedS = append(nn.RemovedS, t[i+1])
				continue
			}
			outT, outMs, outFix = append(outT, t[i+1]), append(outMs, v), append(outFix, fix[i])
		case FixMissed:
			mid := (t[i] + t[i+1]) / 2
			outT = append(outT, mid, t[i+1])
			outMs = append(outMs, rr[i]/2, rr[i]/2)
			outFix = append(outFix, FixMissed, FixMissed)
		case FixExtra:
			outT, outMs, outFix = append(outT, t[i+2]), append(outMs, rr[i]+rr[i+1]), append(outFix, FixExtra)
			i++
		}
	}
	return outT, outMs, outFix
}

// rollingQD returns the quartile deviation (Q3-Q1)/2 of x over a centred
// window of w values, truncated at the ends. Quartiles by linear
// interpolation between order statistics (common practice).
func rollingQD(x []float64, w int) []float64 {
	out := make([]float64, len(x))
	rollingSorted(x, w, func(i int, s []float64) {
		out[i] = (quantile(s, 0.75) - quantile(s, 0.25)) / 2
	})
	return out
}

func rollingMedian(x []float64, w int) []float64 {
	out := make([]float64, len(x))
	rollingSorted(x, w, func(i int, s []float64) {
		out[i] = quantile(s, 0.5)
	})
	return out
}

// rollingSorted calls fn(i, s) for every i with s the values of the centred
// window x[max(0,i-w/2) : min(len(x),i+w/2+1)] in ascending order. The
// window is kept sorted from one i to the next (binary-search insert and
// delete), so each step costs O(w) moves instead of a sort; s is the same
// multiset in the same order as sorting the window afresh. A NaN anywhere
// falls back to sorting each window (sort.Float64s order, NaNs first).
func rollingSorted(x []float64, w int, fn func(i int, s []float64)) {
	h := w / 2
	buf := make([]float64, 0, min(len(x), 2*h+1))
	for _, v := range x {
		if math.IsNaN(v) {
			for i := range x {
				lo, hi := max(0, i-h), min(len(x), i+h+1)
				buf = append(buf[:0], x[lo:hi]...)
				sort.Float64s(buf)
				fn(i, buf)
			}
			return
		}
	}
	insert := func(v float64) {
		k := sort.SearchFloat64s(buf, v) // first index with buf[k] >= v
		buf = append(buf, 0)
		copy(buf[k+1:], buf[k:])
		buf[k] = v
	}
	remove := func(v float64) {
		k := sort.SearchFloat64s(buf, v) // buf[k] == v: v is in the window
		copy(buf[k:], buf[k+1:])
		buf = buf[:len(buf)-1]
	}
	for j := 0; j < min(len(x), h+1); j++ {
		insert(x[j])
	}
	for i := range x {
		if i > 0 {
			if j := i - h - 1; j >= 0 {
				remove(x[j])
			}
			if j := i + h; j < len(x) {
				insert(x[j])
			}
		}
		fn(i, buf)
	}
}

// quantile of sorted s by linear interpolation (position p*(n-1)).
func quantile(s []float64, p float64) float64 {
	if len(s) == 0 {
		return math.NaN()
	}
	pos := p * float64(len(s)-1)
	i := int(math.Floor(pos))
	if i+1 >= len(s) {
		return s[len(s)-1]
	}
	f := pos - float64(i)
	return s[i] + f*(s[i+1]-s[i])
}
