// Package window is Tidalbeat's one moving-window engine: it lays a grid of
// windows (length, step, anchor) over sorted event times or uniformly sampled
// series, in batch or as a stream, and reports for each window its bounds, the
// index range of what falls inside and its coverage by valid data.
// It knows nothing about physiology and computes no features; package features
// and the modality packages call it.
//
// Times inside the engine are float64 seconds from the recording origin (its
// UTC start); window boundaries are computed in integer nanoseconds from the
// anchor so that recordings started at different times share boundaries
// exactly. An item at time t belongs to window w when w.Start <= t < w.End.
package window

import (
	"errors"
	"fmt"
	"math"
	"time"
)

// Anchor says where the grid of window boundaries is counted from.
type Anchor int

const (
	// AnchorEpoch places window ends at whole multiples of the step since the
	// Unix epoch (1970-01-01T00:00:00Z), so rows from different recordings and
	// modalities join on time. It is the default (common practice: methods
	// reference section 7, "align windows to absolute time").
	AnchorEpoch Anchor = iota
	// AnchorStart places window ends at whole multiples of the step after the
	// recording origin.
	AnchorStart
)

// String returns "epoch" or "start".
func (a Anchor) String() string {
	switch a {
	case AnchorEpoch:
		return "epoch"
	case AnchorStart:
		return "start"
	}
	return fmt.Sprintf("Anchor(%d)", int(a))
}

// DefaultMinCoverage is the coverage below which a window is marked invalid
// when Spec.MinCoverage is zero: 80 % of the window must hold valid data
// (common practice for short-term HRV, methods reference section 7).
const DefaultMinCoverage = 0.8

// MaxLength is the longest window or step the engine accepts (400 days);
// anything longer is taken to be a unit mistake.
const MaxLength = 400 * 24 * time.Hour

// MinStep is the shortest step the engine accepts (1 ms).
const MinStep = time.Millisecond

// Errors returned by the engine; test with errors.Is.
var (
	ErrSpec       = errors.New("invalid window spec")
	ErrOrder      = errors.New("input out of time order")
	ErrInput      = errors.New("invalid input")
	ErrClosed     = errors.New("stream closed")
	ErrNotStarted = errors.New("grid not initialised")
)

// Spec describes a grid of moving windows. Zero values mean the documented
// defaults, except Length and Step, which must be set.
type Spec struct {
	Length time.Duration // window length; > 0 and <= MaxLength
	Step   time.Duration // distance between consecutive window ends; >= MinStep and <= MaxLength
	Anchor Anchor        // AnchorEpoch when zero
	// MinCoverage is the fraction of Length that must hold valid data for a
	// window to be valid, in (0, 1]; DefaultMinCoverage (0.8) when zero.
	MinCoverage float64
}

// Validate reports whether the spec is usable, wrapping ErrSpec.
func (s Spec) Validate() error {
	switch {
	case s.Length <= 0:
		return fmt.Errorf("window: length %v must be positive: %w", s.Length, ErrSpec)
	case s.Length > MaxLength:
		return fmt.Errorf("window: length %v exceeds %v: %w", s.Length, MaxLength, ErrSpec)
	case s.Step < MinStep:
		return fmt.Errorf("window: step %v must be at least %v: %w", s.Step, MinStep, ErrSpec)
	case s.Step > MaxLength:
		return fmt.Errorf("window: step %v exceeds %v: %w", s.Step, MaxLength, ErrSpec)
	case s.Anchor != AnchorEpoch && s.Anchor != AnchorStart:
		return fmt.Errorf("window: unknown anchor %d: %w", int(s.Anchor), ErrSpec)
	case math.IsNaN(s.MinCoverage) || s.MinCoverage < 0 || s.MinCoverage > 1:
		return fmt.Errorf("window: min coverage %v outside [0, 1]: %w", s.MinCoverage, ErrSpec)
	}
	return nil
}

func (s Spec) minCoverage() float64 {
	if s.MinCoverage == 0 {
		return DefaultMinCoverage
	}
	return s.MinCoverage
}

// Interval is a half-open span [Start, End) in seconds from the origin, used
// for known gaps (lead off, device swap, discontinuities, invalid samples).
type Interval struct {
	Start, End float64
}

// Window is one window of the grid and what falls inside it.
type Window struct {
	// Seq numbers the window on the grid: its end is the anchor plus Seq
	// steps. With AnchorEpoch, equal Seq means equal UTC end across
	// recordings that share the step.
	Seq        int64
	Start, End float64   // bounds in seconds from the origin; End - Start = Length
	StartUTC   time.Time // absolute start
	EndUTC     time.Time // absolute end
	// Lo and Hi bound the items inside: indices Lo <= i < Hi of the event
	// slice or sample series given to the engine (global indices when
	// streaming).
	Lo, Hi int
	// Coverage is the fraction of the window length covered by valid data:
	// inside the data extent and outside every gap.
	Coverage float64
	// Valid is false when Coverage is below the spec's minimum; Reason says
	// why in words. Invalid windows are still emitted, never dropped.
	Valid  bool
	Reason string
}

// Grid is a Spec placed on a recording origin. It is a small value, safe to
// copy and to share between goroutines.
type Grid struct {
	spec    Spec
	origin  time.Time
	lenNs   int64
	stepNs  int64
	phaseNs int64 // offset of the first window end at or after the origin, in [0, step)
	seq0    int64 // Seq of the window whose end is at phaseNs
}

// NewGrid validates spec and places it on the recording origin (UTC start).
func NewGrid(spec Spec, origin time.Time) (Grid, error) {
	if err := spec.Validate(); err != nil {
		return Grid{}, err
	}
	g := Grid{spec: spec, origin: origin, lenNs: int64(spec.Length), stepNs: int64(spec.Step)}
	if spec.Anchor == AnchorEpoch {
		// UnixNano is exact for 1678..2262; outside that the anchor cannot be
		// computed in int64 nanoseconds, which we report instead of guessing.
		if origin.Year() < 1700 || origin.Year() > 2250 {
			return Grid{}, fmt.Errorf("window: origin %v outside years 1700..2250: %w", origin, ErrSpec)
		}
		o := origin.UnixNano()
		m := o % g.stepNs
		if m < 0 {
			m += g.stepNs
		}
		if m != 0 {
			g.phaseNs = g.stepNs - m
		}
		g.seq0 = (o + g.phaseNs) / g.stepNs // exact: o+phase is a whole number of steps
	}
	return g, nil
}

// Spec returns the grid's spec.
func (g Grid) Spec() Spec { return g.spec }

// Origin returns the recording origin the grid was placed on.
func (g Grid) Origin() time.Time { return g.origin }

// endNs returns the end of window k (k counted from the first end at or after
// the origin) in nanoseconds from the origin.
func (g Grid) endNs(k int64) int64 { return g.phaseNs + k*g.stepNs }

// bounds returns window k's start and end in seconds from the origin. Both
// drivers call this one function, so their bounds are identical bit for bit.
func (g Grid) bounds(k int64) (start, end float64) {
	e := g.endNs(k)
	return float64(e-g.lenNs) / 1e9, float64(e) / 1e9
}

// firstK is the index of the first window whose end lies after from.
func (g Grid) firstK(from float64) int64 {
	k := int64(math.Floor((from*1e9 - float64(g.phaseNs)) / float64(g.stepNs)))
	for k > math.MinInt64/4 {
		if _, e := g.bounds(k); e > from {
			k--
			continue
		}
		break
	}
	for {
		if _, e := g.bounds(k); e > from {
			return k
		}
		k++
	}
}

// window builds the Window for grid index k with item range [lo, hi) and the
// valid time inside it.
func (g Grid) window(k int64, lo, hi int, valid float64) Window {
	start, end := g.bounds(k)
	cov := valid / (end - start)
	if cov > 1 {
		cov = 1
	}
	if cov < 0 {
		cov = 0
	}
	w := Window{
		Seq:      g.seq0 + k,
		Start:    start,
		End:      end,
		StartUTC: g.origin.Add(time.Duration(g.endNs(k) - g.lenNs)),
		EndUTC:   g.origin.Add(time.Duration(g.endNs(k))),
		Lo:       lo,
		Hi:       hi,
		Coverage: cov,
		Valid:    true,
	}
	if min := g.spec.minCoverage(); cov < min {
		w.Valid = false
		w.Reason = fmt.Sprintf("coverage %.3f below minimum %.3f", cov, min)
	}
	return w
}

// validTime returns the length of [start, end) that lies inside the data
// extent [dataStart, dataEnd) and outside the gaps, which must be sorted and
// disjoint. gi is a cursor into gaps that callers keep between consecutive
// windows (starts never decrease), so the cost over a grid is O(W + G).
func validTime(start, end, dataStart, dataEnd float64, gaps []Interval, gi *int) float64 {
	lo, hi := math.Max(start, dataStart), math.Min(end, dataEnd)
	if hi <= lo {
		return 0
	}
	v := hi - lo
	for *gi < len(gaps) && gaps[*gi].End <= lo {
		*gi++
	}
	for j := *gi; j < len(gaps) && gaps[j].Start < hi; j++ {
		a, b := math.Max(gaps[j].Start, lo), math.Min(gaps[j].End, hi)
		if b > a {
			v -= b - a
		}
	}
	if v < 0 {
		v = 0
	}
	return v
}
