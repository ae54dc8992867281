package window

import (
	"fmt"
	"iter"
	"math"
)

// Stream is the streaming driver of the engine. Items are pushed in time
// order; each window is released as soon as no later item can fall inside it.
// It shares Grid.bounds, the item cursor and validTime with the batch
// iterators, so for the same data it yields the same windows, bit for bit,
// for any chunking.
//
// A Stream keeps only the items that can still fall in an unreleased window:
// memory is bounded by the window length (plus whatever the caller leaves
// unread in Ready). It is not safe for concurrent use.
type Stream[T any] struct {
	g       Grid
	sampled bool
	rate    float64
	t0      float64
	timeOf  func(T) float64

	buf   []T
	times []float64 // event streams: times of buf
	base  int       // global index of buf[0]
	n     int       // items pushed so far
	last  float64   // event streams: time of the last item
	known float64   // data extent known so far (exclusive end)
	floor float64   // gaps may not start before this: the end of data pushed so far

	cur    eventCursor // event streams: cursor over times, kept between windows
	gaps   []Interval  // merged gaps that may still touch an unreleased window
	gi     int         // validTime cursor into gaps
	k      int64       // next window to release
	closed bool
	err    error
}

// NewEventStream returns a stream over events whose time in seconds from the
// origin is given by timeOf. The data extent starts at 0.
func NewEventStream[T any](g Grid, timeOf func(T) float64) (*Stream[T], error) {
	if g.stepNs == 0 {
		return nil, ErrNotStarted
	}
	if timeOf == nil {
		return nil, fmt.Errorf("window: nil time function: %w", ErrInput)
	}
	return &Stream[T]{g: g, timeOf: timeOf, k: g.firstK(0), last: math.Inf(-1), known: math.Inf(-1), floor: math.Inf(-1)}, nil
}

// NewSampleStream returns a stream over a uniformly sampled series whose
// sample i is at t0 + i/rateHz seconds from the origin.
func NewSampleStream[T any](g Grid, rateHz, t0 float64) (*Stream[T], error) {
	if g.stepNs == 0 {
		return nil, ErrNotStarted
	}
	if !finite(rateHz) || rateHz <= 0 || rateHz > 1e7 {
		return nil, fmt.Errorf("window: sampling rate %v Hz: %w", rateHz, ErrInput)
	}
	if !finite(t0) {
		return nil, fmt.Errorf("window: series start %v s: %w", t0, ErrInput)
	}
	return &Stream[T]{g: g, sampled: true, rate: rateHz, t0: t0, known: t0, k: g.firstK(t0), floor: math.Inf(-1)}, nil
}

// Push appends items in time order. For event streams each item's time must
// be finite and no earlier than the previous item's; an error leaves the
// stream unusable (every later call returns it).
func (s *Stream[T]) Push(items ...T) error {
	if err := s.usable(); err != nil {
		return err
	}
	s.compact()
	if !s.sampled {
		for i, it := range items {
			t := s.timeOf(it)
			if !finite(t) {
				return s.fail(fmt.Errorf("window: event %d time %v not finite: %w", s.n+i, t, ErrInput))
			}
			if t < s.known || t < s.last {
				return s.fail(fmt.Errorf("window: event %d at %v s before data already declared up to %v s: %w", s.n+i, t, math.Max(s.known, s.last), ErrOrder))
			}
			s.last = t
			s.known = t
			s.times = append(s.times, t)
		}
	}
	s.buf = append(s.buf, items...)
	s.n += len(items)
	if s.sampled {
		s.known = sampleTime(s.t0, s.rate, s.n)
	}
	if len(items) > 0 {
		s.floor = s.known
	}
	return nil
}

// Gap declares a span with no valid data. Gaps must arrive in order of start
// and may not start before data already pushed (that data's windows may have
// been released); overlapping gaps are merged.
func (s *Stream[T]) Gap(iv Interval) error {
	if err := s.usable(); err != nil {
		return err
	}
	if !finite(iv.Start) || !finite(iv.End) || iv.End < iv.Start {
		return s.fail(fmt.Errorf("window: gap [%v, %v): %w", iv.Start, iv.End, ErrInput))
	}
	if iv.Start < s.floor {
		return s.fail(fmt.Errorf("window: gap starting %v s declared after data up to %v s: %w", iv.Start, s.floor, ErrOrder))
	}
	if n := len(s.gaps); n > 0 && iv.Start < s.gaps[n-1].Start {
		return s.fail(fmt.Errorf("window: gap starting %v s after gap starting %v s: %w", iv.Start, s.gaps[n-1].Start, ErrOrder))
	}
	if iv.End == iv.Start {
		return nil
	}
	if n := len(s.gaps); n > 0 && iv.Start <= s.gaps[n-1].End {
		s.gaps[n-1].End = math.Max(s.gaps[n-1].End, iv.End)
		return nil
	}
	s.gaps = append(s.gaps, iv)
	return nil
}

// Advance declares that no event earlier than t will be pushed (for example
// when a detector has processed signal up to t without finding a beat), so
// windows ending at or before t can be released. For sample streams the
// extent follows the samples and Advance is an error.
func (s *Stream[T]) Advance(t float64) error {
	if err := s.usable(); err != nil {
		return err
	}
	if s.sampled {
		return s.fail(fmt.Errorf("window: Advance on a sample stream: %w", ErrInput))
	}
	if !finite(t) || t < s.known {
		return s.fail(fmt.Errorf("window: advance to %v s, already at %v s: %w", t, s.known, ErrOrder))
	}
	s.known = t
	s.floor = t
	return nil
}

// Close ends the stream: the data extent ends at the last sample's period
// (sample streams) or at the latest of the last event and the last Advance
// (event streams). The windows it completes are then available from Ready.
func (s *Stream[T]) Close() error {
	if err := s.usable(); err != nil {
		return err
	}
	s.closed = true
	if !s.sampled && s.known < 0 {
		s.known = 0 // the extent of an event stream starts at the origin
	}
	return nil
}

// Err returns the error that made the stream unusable, if any.
func (s *Stream[T]) Err() error { return s.err }

func (s *Stream[T]) usable() error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return ErrClosed
	}
	return nil
}

func (s *Stream[T]) fail(err error) error {
	s.err = err
	return err
}

// Ready yields the windows released so far with the items inside each. The
// item slice aliases the stream's buffer: it is valid until the next Push, so
// copy what must outlive it. Drain Ready after every Push to keep memory
// bounded by the window length.
func (s *Stream[T]) Ready() iter.Seq2[Window, []T] {
	return func(yield func(Window, []T) bool) {
		for {
			w, items, ok := s.next()
			if !ok || !yield(w, items) {
				return
			}
		}
	}
}

// next releases window s.k if it is complete.
func (s *Stream[T]) next() (Window, []T, bool) {
	if s.err != nil {
		return Window{}, nil, false
	}
	st, e := s.g.bounds(s.k)
	end := s.known
	if s.closed {
		if st >= end || (s.sampled && s.n == 0) {
			return Window{}, nil, false
		}
	} else if e > s.known {
		return Window{}, nil, false
	}
	var lo, hi int
	dataStart := 0.0
	if s.sampled {
		dataStart = s.t0
		lo = min(firstSampleAtOrAfter(st, s.t0, s.rate), s.n)
		hi = min(firstSampleAtOrAfter(e, s.t0, s.rate), s.n)
	} else {
		s.cur.times = s.times
		lo, hi = s.cur.rangeOf(st, e)
	}
	w := s.g.window(s.k, lo, hi, validTime(st, e, dataStart, end, s.gaps, &s.gi))
	items := s.buf[lo-s.base : hi-s.base]
	s.k++
	s.trim()
	return w, items, true
}

// trim drops the gaps that can no longer touch window s.k or later and
// moves the event cursor to its start. Items are dropped later, by compact.
func (s *Stream[T]) trim() {
	if !s.sampled {
		st, _ := s.g.bounds(s.k)
		s.cur.times = s.times
		s.cur.rangeOf(st, st)
	}
	if s.gi > 0 {
		s.gaps = append(s.gaps[:0], s.gaps[s.gi:]...)
		s.gi = 0
	}
}

// compact drops, in place, the items that can no longer fall in window s.k
// or later. It runs at the start of Push (slices handed out by Ready are
// documented as valid only until then) and only when at least half the
// buffer is dead, so the cost is amortised O(1) per item and the steady state
// allocates nothing.
func (s *Stream[T]) compact() {
	st, _ := s.g.bounds(s.k)
	var keep int
	if s.sampled {
		keep = min(firstSampleAtOrAfter(st, s.t0, s.rate), s.n)
	} else {
		keep = s.base + s.cur.lo
	}
	dead := keep - s.base
	if dead <= 0 || dead*2 < len(s.buf) {
		return
	}
	m := copy(s.buf, s.buf[dead:])
	clear(s.buf[m:]) // release references held by dropped items
	s.buf = s.buf[:m]
	if !s.sampled {
		s.times = s.times[:copy(s.times, s.times[dead:])]
		s.cur = eventCursor{times: s.times, base: keep, lo: s.cur.lo - dead, hi: s.cur.hi - dead}
	}
	s.base = keep
}
