package window

import (
	"fmt"
	"iter"
	"math"
	"sort"
)

// NormalizeGaps checks gaps, sorts them by start and merges overlapping or
// touching ones. It returns a new slice; the input is not modified. Empty
// intervals are dropped because they cover no time.
func NormalizeGaps(gaps []Interval) ([]Interval, error) {
	out := make([]Interval, 0, len(gaps))
	for i, iv := range gaps {
		if !finite(iv.Start) || !finite(iv.End) {
			return nil, fmt.Errorf("window: gap %d [%v, %v) not finite: %w", i, iv.Start, iv.End, ErrInput)
		}
		if iv.End < iv.Start {
			return nil, fmt.Errorf("window: gap %d ends (%v) before it starts (%v): %w", i, iv.End, iv.Start, ErrInput)
		}
		if iv.End > iv.Start {
			out = append(out, iv)
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Start < out[j].Start })
	merged := out[:0]
	for _, iv := range out {
		if n := len(merged); n > 0 && iv.Start <= merged[n-1].End {
			merged[n-1].End = math.Max(merged[n-1].End, iv.End)
			continue
		}
		merged = append(merged, iv)
	}
	return merged, nil
}

// InvalidRuns returns, as gaps, the runs of samples of x that are NaN or
// infinite, for a series whose sample i is at t0 + i/rateHz. Each run covers
// its samples' sampling periods [t_i, t_i + 1/rate). dst is appended to and
// returned.
func InvalidRuns(dst []Interval, x []float64, rateHz, t0 float64) []Interval {
	for i := 0; i < len(x); {
		if finite(x[i]) {
			i++
			continue
		}
		j := i
		for j < len(x) && !finite(x[j]) {
			j++
		}
		dst = append(dst, Interval{Start: sampleTime(t0, rateHz, i), End: sampleTime(t0, rateHz, j)})
		i = j
	}
	return dst
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// sampleTime is the time of sample i; both drivers use it.
func sampleTime(t0, rate float64, i int) float64 { return t0 + float64(i)/rate }

// firstSampleAtOrAfter returns the smallest i >= 0 with sampleTime(i) >= t.
func firstSampleAtOrAfter(t, t0, rate float64) int {
	if t <= t0 {
		return 0
	}
	i := int(math.Ceil((t - t0) * rate))
	for i > 0 && sampleTime(t0, rate, i-1) >= t {
		i--
	}
	for sampleTime(t0, rate, i) < t {
		i++
	}
	return i
}

// Events lays the grid over sorted event times (seconds from the origin) whose
// data extent is [0, end) minus gaps. It yields, in order, every window that
// overlaps the extent, with Lo/Hi indexing times. Times must be finite and
// non-decreasing; end must be finite and no earlier than the last time.
// Cost: O(len(times) + windows + gaps).
func (g Grid) Events(times []float64, end float64, gaps []Interval) (iter.Seq[Window], error) {
	if g.stepNs == 0 {
		return nil, ErrNotStarted
	}
	for i, t := range times {
		if !finite(t) {
			return nil, fmt.Errorf("window: event %d time %v not finite: %w", i, t, ErrInput)
		}
		if i > 0 && t < times[i-1] {
			return nil, fmt.Errorf("window: event %d at %v s before event %d at %v s: %w", i, t, i-1, times[i-1], ErrOrder)
		}
	}
	if !finite(end) || end < 0 || (len(times) > 0 && end < times[len(times)-1]) {
		return nil, fmt.Errorf("window: extent end %v s invalid for %d events: %w", end, len(times), ErrInput)
	}
	gaps, err := NormalizeGaps(gaps)
	if err != nil {
		return nil, err
	}
	return func(yield func(Window) bool) {
		c := eventCursor{times: times}
		gi := 0
		for k := g.firstK(0); ; k++ {
			s, e := g.bounds(k)
			if s >= end {
				return
			}
			lo, hi := c.rangeOf(s, e)
			if !yield(g.window(k, lo, hi, validTime(s, e, 0, end, gaps, &gi))) {
				return
			}
		}
	}, nil
}

// eventCursor finds [lo, hi) for successive windows whose bounds never
// decrease, in amortised O(1) per window.
type eventCursor struct {
	times  []float64
	base   int // global index of times[0]
	lo, hi int // local cursors
}

func (c *eventCursor) rangeOf(start, end float64) (int, int) {
	for c.lo < len(c.times) && c.times[c.lo] < start {
		c.lo++
	}
	if c.hi < c.lo {
		c.hi = c.lo
	}
	for c.hi < len(c.times) && c.times[c.hi] < end {
		c.hi++
	}
	return c.base + c.lo, c.base + c.hi
}

// Samples lays the grid over a uniformly sampled series of n samples, sample i
// at t0 + i/rateHz seconds from the origin; the data extent is
// [t0, t0 + n/rateHz) minus gaps. It yields every window that overlaps the
// extent, with Lo/Hi indexing samples. Cost: O(windows + gaps).
func (g Grid) Samples(rateHz, t0 float64, n int, gaps []Interval) (iter.Seq[Window], error) {
	if g.stepNs == 0 {
		return nil, ErrNotStarted
	}
	if !finite(rateHz) || rateHz <= 0 || rateHz > 1e7 {
		return nil, fmt.Errorf("window: sampling rate %v Hz: %w", rateHz, ErrInput)
	}
	if !finite(t0) || n < 0 {
		return nil, fmt.Errorf("window: series start %v s, %d samples: %w", t0, n, ErrInput)
	}
	gaps, err := NormalizeGaps(gaps)
	if err != nil {
		return nil, err
	}
	end := sampleTime(t0, rateHz, n)
	return func(yield func(Window) bool) {
		if n == 0 {
			return
		}
		gi := 0
		for k := g.firstK(t0); ; k++ {
			s, e := g.bounds(k)
			if s >= end {
				return
			}
			lo := min(firstSampleAtOrAfter(s, t0, rateHz), n)
			hi := min(firstSampleAtOrAfter(e, t0, rateHz), n)
			if !yield(g.window(k, lo, hi, validTime(s, e, t0, end, gaps, &gi))) {
				return
			}
		}
	}, nil
}
