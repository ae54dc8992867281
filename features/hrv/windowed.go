package hrv

import (
	"fmt"
	"iter"
	"math"

	"github.com/tidalbeat/tidalbeat/window"
)

// belongTolS absorbs the rounding of start = end - NN/1000 when deciding
// whether an interval's first beat is inside a window (1 us, far below any
// sampling period).
const belongTolS = 1e-6

// NNFromBeats returns the NN series of beats at times beatS (s, increasing):
// one interval between each pair of consecutive beats that are both normal
// (normal[i]; nil means all normal), in ms, with the time of its ending beat.
// Intervals next to an abnormal beat are left out, not interpolated, so the
// result may be non-contiguous (Compute then pairs only contiguous
// intervals).
func NNFromBeats(beatS []float64, normal []bool) (nnMs, endS []float64, err error) {
	if normal != nil && len(normal) != len(beatS) {
		return nil, nil, fmt.Errorf("hrv: %d normal flags for %d beats: %w", len(normal), len(beatS), ErrInput)
	}
	for i, t := range beatS {
		if math.IsNaN(t) || math.IsInf(t, 0) {
			return nil, nil, fmt.Errorf("hrv: beat %d at %v s: %w", i, t, ErrInput)
		}
		if i > 0 && !(t > beatS[i-1]) {
			return nil, nil, fmt.Errorf("hrv: beat %d at %v s not after beat %d at %v s: %w", i, t, i-1, beatS[i-1], ErrInput)
		}
	}
	for i := 1; i < len(beatS); i++ {
		if normal != nil && !(normal[i] && normal[i-1]) {
			continue
		}
		nnMs = append(nnMs, (beatS[i]-beatS[i-1])*1000)
		endS = append(endS, beatS[i])
	}
	return nnMs, endS, nil
}

// Interval is one NN interval for the streaming driver.
type Interval struct {
	EndS      float64 // time of the beat ending the interval (s from the origin)
	NNms      float64 // interval length (ms)
	Corrected bool    // corrected or interpolated upstream
}

// windowCore is the one per-window step shared by Windowed and Stream: it
// drops the leading intervals whose first beat lies before the window start
// (an interval belongs to a window when both its beats do, methods.md
// section 7), then runs Compute with the window's length and corrected
// flags. Invalid windows report their inputs but no metric.
func (w *work) windowCore(win window.Window, items []Interval, opt Options) Metrics {
	k := 0
	for k < len(items) && items[k].EndS-items[k].NNms/1000 < win.Start-belongTolS {
		k++
	}
	items = items[k:]
	nn := make([]float64, len(items))
	ts := make([]float64, len(items))
	var corr []bool
	for i, it := range items {
		nn[i], ts[i] = it.NNms, it.EndS
		if it.Corrected {
			if corr == nil {
				corr = make([]bool, len(items))
			}
			corr[i] = true
		}
	}
	o := opt
	o.WindowS = win.End - win.Start
	o.Corrected = corr
	o.CorrectedCount = 0
	m := w.compute(nn, ts, o)
	if !win.Valid && m.Err == nil {
		m.allUndefined("window: " + win.Reason)
	}
	return m
}

// Windowed computes Metrics for every window the grid lays over the NN
// series (interval i of nnMs ends at endS[i], s from the grid origin; the
// data extent is [0, end) minus gaps). opt.Corrected, when set, flags the
// intervals of the whole series; opt.WindowS and opt.CorrectedCount are set
// per window. Windows are yielded in order, invalid ones included (with NaN
// metrics and the engine's reason). It is the batch twin of Stream: both run
// the same per-window core and give identical numbers.
func Windowed(grid window.Grid, endS, nnMs []float64, end float64, gaps []window.Interval, opt Options) (iter.Seq2[window.Window, Metrics], error) {
	if len(endS) != len(nnMs) {
		return nil, fmt.Errorf("hrv: %d times for %d intervals: %w", len(endS), len(nnMs), ErrInput)
	}
	if opt.Corrected != nil && len(opt.Corrected) != len(nnMs) {
		return nil, fmt.Errorf("hrv: %d corrected flags for %d intervals: %w", len(opt.Corrected), len(nnMs), ErrInput)
	}
	if err := checkNN(nnMs); err != nil {
		return nil, err
	}
	wins, err := grid.Events(endS, end, gaps)
	if err != nil {
		return nil, fmt.Errorf("hrv: windows: %w", err)
	}
	items := make([]Interval, len(nnMs))
	for i := range nnMs {
		items[i] = Interval{EndS: endS[i], NNms: nnMs[i], Corrected: opt.Corrected != nil && opt.Corrected[i]}
	}
	return func(yield func(window.Window, Metrics) bool) {
		var w work
		for win := range wins {
			if !yield(win, w.windowCore(win, items[win.Lo:win.Hi], opt)) {
				return
			}
		}
	}, nil
}

// Stream computes Metrics live, window by window, as NN intervals arrive:
// it wraps the window engine's event stream and releases each window once
// no later interval can fall inside it. Same core and numbers as Windowed.
// Not safe for concurrent use.
type Stream struct {
	s   *window.Stream[Interval]
	opt Options
	w   work
}

// NewStream returns a stream over grid. opt.Corrected is ignored (each
// Interval carries its own flag).
func NewStream(grid window.Grid, opt Options) (*Stream, error) {
	s, err := window.NewEventStream(grid, func(it Interval) float64 { return it.EndS })
	if err != nil {
		return nil, fmt.Errorf("hrv: stream: %w", err)
	}
	opt.Corrected = nil
	return &Stream{s: s, opt: opt}, nil
}

// Push appends intervals in time order (by EndS). Invalid intervals (NaN,
// non-positive) are an error and leave the stream unusable.
func (s *Stream) Push(items ...Interval) error {
	for i, it := range items {
		if math.IsNaN(it.NNms) || math.IsInf(it.NNms, 0) || it.NNms <= 0 {
			return fmt.Errorf("hrv: stream: interval %d is %v ms: %w", i, it.NNms, ErrInput)
		}
	}
	if err := s.s.Push(items...); err != nil {
		return fmt.Errorf("hrv: stream: %w", err)
	}
	return nil
}

// Gap declares a span without data (lead off, device swap).
func (s *Stream) Gap(iv window.Interval) error { return s.s.Gap(iv) }

// Advance declares that the data extent reaches t seconds even without a
// new interval, releasing the windows that end by then.
func (s *Stream) Advance(t float64) error { return s.s.Advance(t) }

// Close ends the stream; the remaining windows become ready.
func (s *Stream) Close() error { return s.s.Close() }

// Ready yields the windows released so far with their metrics. Drain it
// after every Push.
func (s *Stream) Ready() iter.Seq2[window.Window, Metrics] {
	return func(yield func(window.Window, Metrics) bool) {
		for win, items := range s.s.Ready() {
			if !yield(win, s.w.windowCore(win, items, s.opt)) {
				return
			}
		}
	}
}
