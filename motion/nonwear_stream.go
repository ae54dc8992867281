package motion

import (
	"fmt"
	"math"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// NonWearStream detects non-wear periods (the rule of NonWear) from
// acceleration fed in chunks, in bounded memory. It lays out the same two
// grids of the window engine as NonWear (step-long blocks and the long
// windows, both from the first sample), keeps per-block per-axis count,
// shifted sums, minimum and maximum, and judges each long window from the
// blocks that tile it once the engine releases it. It holds the samples of
// at most one block plus one chunk, and WindowS/StepS + 1 block summaries.
//
// For the same samples it gives the same periods as NonWear for any
// chunking, when WindowS is a whole multiple of StepS (NewNonWearStream
// rejects other lengths, which would need the raw samples of a whole
// window).
//
// Latency: a long window is judged once the sample after its end has been
// pushed (or at Close), so the non-wear status of time t is final once
// Final() > t, that is about WindowS (60 min by default) after t. It is not
// safe for concurrent use.
type NonWearStream struct {
	o       NonWearOptions
	conv    float64
	rate    float64
	ws, bs  *window.Stream[struct{}]
	ref     [3]float64
	refSet  [3]bool
	buf     [3][]float64
	bufBase int // global index of buf[k][0]
	pushed  int
	blocks  []nwBlock
	periods []window.Interval // merged, in order
	marks   []nwMark          // every judged window's end and verdict, in order
	next    float64           // end of the next window to be judged (lower bound)
	final   float64
	closed  bool
	err     error
}

// nwMark is one judged long window: its end (s) and whether it met the
// non-wear rule (an invalid window does not).
type nwMark struct {
	end float64
	off bool
}

type nwBlock struct {
	lo, hi int
	st     [3]axisStats
}

// NewNonWearStream starts a non-wear stream for samples at rateHz in unit u,
// the first sample at time 0.
func NewNonWearStream(rateHz float64, u Unit, opts NonWearOptions) (*NonWearStream, error) {
	o := opts.withDefaults()
	if !finite(rateHz) || rateHz < MinRateHz || rateHz > MaxRateHz {
		return nil, fmt.Errorf("motion: non-wear stream: rate %v Hz: %w", rateHz, ErrInput)
	}
	if !(o.WindowS > 0) || !(o.StepS > 0) || !(o.SDmg > 0) || !(o.RangeMg > 0) || o.MinAxes < 1 || o.MinAxes > 3 {
		return nil, fmt.Errorf("motion: non-wear stream options %+v: %w", o, ErrOptions)
	}
	if k := o.WindowS / o.StepS; k != math.Trunc(k) || k > 1e6 {
		return nil, fmt.Errorf("motion: non-wear stream: window %v s is not a whole multiple of the step %v s: %w", o.WindowS, o.StepS, ErrOptions)
	}
	conv := 1.0
	if u == UnitMS2 {
		conv = 1 / StandardGravity
	}
	spec := window.Spec{Length: time.Duration(o.WindowS * 1e9), Step: time.Duration(o.StepS * 1e9), Anchor: window.AnchorStart}
	g, err := window.NewGrid(spec, time.Unix(0, 0))
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear stream: %w", err)
	}
	bg, err := window.NewGrid(window.Spec{Length: spec.Step, Step: spec.Step, Anchor: window.AnchorStart}, time.Unix(0, 0))
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear stream: %w", err)
	}
	ws, err := window.NewSampleStream[struct{}](g, rateHz, 0)
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear stream: %w", err)
	}
	bs, err := window.NewSampleStream[struct{}](bg, rateHz, 0)
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear stream: %w", err)
	}
	return &NonWearStream{o: o, conv: conv, rate: rateHz, ws: ws, bs: bs, next: o.StepS}, nil
}

func (s *NonWearStream) fail(err error) error {
	if s.err == nil {
		s.err = fmt.Errorf("motion: non-wear stream: %w", err)
	}
	return s.err
}

// Push feeds the next samples of the three axes (equal lengths; NaN or
// infinite samples are invalid and count against a window's coverage, as in
// NonWear).
func (s *NonWearStream) Push(x, y, z []float64) error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return fmt.Errorf("motion: non-wear stream: push after close: %w", window.ErrClosed)
	}
	if len(x) != len(y) || len(x) != len(z) {
		return fmt.Errorf("motion: non-wear stream: axis lengths %d, %d, %d differ: %w", len(x), len(y), len(z), ErrInput)
	}
	// Pieces of at most one block keep the sample buffer within about two
	// blocks whatever the chunk size (a whole record pushed at once is not
	// copied).
	piece := max(1, int(s.o.StepS*s.rate))
	for i := 0; i < len(x); i += piece {
		j := min(len(x), i+piece)
		if err := s.push(x[i:j], y[i:j], z[i:j]); err != nil {
			return err
		}
	}
	return nil
}

func (s *NonWearStream) push(x, y, z []float64) error {
	for k, a := range [3][]float64{x, y, z} {
		if !s.refSet[k] {
			for _, v := range a {
				if finite(v) {
					s.ref[k], s.refSet[k] = v, true
					break
				}
			}
		}
		s.buf[k] = append(s.buf[k], a...)
	}
	// Invalid runs become gaps of the long-window stream (coverage), as
	// invalidRuns3 does for NonWear; the block stream sees no gaps.
	for i := 0; i < len(x); {
		if finite(x[i]) && finite(y[i]) && finite(z[i]) {
			i++
			continue
		}
		j := i
		for j < len(x) && !(finite(x[j]) && finite(y[j]) && finite(z[j])) {
			j++
		}
		iv := window.Interval{Start: sampleTime(s.rate, s.pushed+i), End: sampleTime(s.rate, s.pushed+j)}
		if err := s.ws.Gap(iv); err != nil {
			return s.fail(err)
		}
		i = j
	}
	ph := make([]struct{}, len(x))
	if err := s.bs.Push(ph...); err != nil {
		return s.fail(err)
	}
	if err := s.ws.Push(ph...); err != nil {
		return s.fail(err)
	}
	s.pushed += len(x)
	return s.collect()
}

// Close ends the stream: the last, partial windows are judged.
func (s *NonWearStream) Close() error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return fmt.Errorf("motion: non-wear stream: closed twice: %w", window.ErrClosed)
	}
	s.closed = true
	if err := s.bs.Close(); err != nil {
		return s.fail(err)
	}
	if err := s.ws.Close(); err != nil {
		return s.fail(err)
	}
	if err := s.collect(); err != nil {
		return err
	}
	s.final = math.Inf(1)
	s.next = math.Inf(1)
	return nil
}

func (s *NonWearStream) collect() error {
	for b := range s.bs.Ready() {
		lo, hi := b.Lo-s.bufBase, b.Hi-s.bufBase
		s.blocks = append(s.blocks, nwBlock{lo: b.Lo, hi: b.Hi, st: statsOf(s.buf[0][lo:hi], s.buf[1][lo:hi], s.buf[2][lo:hi], s.ref)})
		// Blocks do not overlap: samples before this block's end are done.
		for k := range s.buf {
			s.buf[k] = s.buf[k][:copy(s.buf[k], s.buf[k][hi:])]
		}
		s.bufBase = b.Hi
	}
	end := sampleTime(s.rate, s.pushed)
	for w := range s.ws.Ready() {
		s.final = w.Start + s.o.StepS
		bi := 0
		for bi < len(s.blocks) && s.blocks[bi].lo < w.Lo {
			bi++
		}
		s.blocks = s.blocks[:copy(s.blocks, s.blocks[bi:])]
		s.next = w.End + s.o.StepS
		if !w.Valid {
			s.marks = append(s.marks, nwMark{end: w.End})
			continue
		}
		var st [3]axisStats
		at := w.Lo
		for j := 0; j < len(s.blocks) && s.blocks[j].hi <= w.Hi && s.blocks[j].lo == at; j++ {
			for k := range st {
				st[k].merge(s.blocks[j].st[k])
			}
			at = s.blocks[j].hi
		}
		if at != w.Hi {
			return s.fail(fmt.Errorf("window [%d,%d) not tiled by blocks (reached %d): %w", w.Lo, w.Hi, at, ErrInput))
		}
		off := decide(&st, s.conv, s.o)
		s.marks = append(s.marks, nwMark{end: w.End, off: off})
		if off {
			iv := window.Interval{Start: math.Max(w.Start, 0), End: math.Min(w.End, end)}
			if n := len(s.periods); n > 0 && iv.Start <= s.periods[n-1].End {
				s.periods[n-1].End = math.Max(s.periods[n-1].End, iv.End)
			} else {
				s.periods = append(s.periods, iv)
			}
		}
	}
	return nil
}

// Final returns the time (s from the first sample) before which the
// non-wear status is decided: every long window starting before it has been
// judged. It is +Inf after Close.
func (s *NonWearStream) Final() float64 { return s.final }

// Periods returns the non-wear periods found so far (s from the first
// sample, merged, in order; the last one may still grow). The slice is the
// stream's own: do not modify it.
func (s *NonWearStream) Periods() []window.Interval { return s.periods }

// Frac returns the share of [start, end) (s from the first sample) inside a
// non-wear period found so far: final once Final() >= end. It is NaN for an
// empty span.
func (s *NonWearStream) Frac(start, end float64) float64 {
	return NonWearFrac(s.periods, start, end)
}

// Forget drops the periods that end at or before t and the verdicts no
// span starting at or after t needs, to bound memory in a long stream once
// no span before t will be asked for.
func (s *NonWearStream) Forget(t float64) {
	i := 0
	for i < len(s.periods) && s.periods[i].End <= t {
		i++
	}
	s.periods = s.periods[:copy(s.periods, s.periods[i:])]
	j := 0
	for j+1 < len(s.marks) && s.marks[j+1].end <= t {
		j++
	}
	s.marks = s.marks[:copy(s.marks, s.marks[j:])]
}

// Decided returns a time up to which the live (trailing) status is
// decided: every long window ending before it has been judged, so
// TrailingFrac of a span ending at or before it is final. It runs at most
// one step behind the samples pushed, and is +Inf after Close.
func (s *NonWearStream) Decided() float64 { return s.next }

// TrailingFrac returns the share of [start, end) during which the device was
// off the body by the live, causal reading of the rule: an instant t counts
// when the latest long window ending at or before t was judged non-wear (an
// invalid window counts as worn). Unlike the retrospective Periods it needs
// no look-ahead, so it lags the true onset of non-wear by one window plus up
// to one step (60-75 min by default) and its end by up to one step (15 min).
// It is final once Decided() >= end; NaN for an empty or non-finite span.
func (s *NonWearStream) TrailingFrac(start, end float64) float64 {
	if !(end > start) || !finite(start) || !finite(end) {
		return math.NaN()
	}
	in := 0.0
	for i, m := range s.marks {
		if m.end >= end {
			break
		}
		if !m.off {
			continue
		}
		until := end
		if i+1 < len(s.marks) {
			until = math.Min(until, s.marks[i+1].end)
		}
		from := math.Max(m.end, start)
		if until > from {
			in += until - from
		}
	}
	return math.Min(1, in/(end-start))
}

// NonWearFrac returns the share of [start, end) covered by the periods
// (sorted, non-overlapping, as NonWear and NonWearStream give them); NaN for
// an empty or non-finite span.
func NonWearFrac(periods []window.Interval, start, end float64) float64 {
	if !(end > start) || !finite(start) || !finite(end) {
		return math.NaN()
	}
	in := 0.0
	for _, p := range periods {
		if p.End <= start {
			continue
		}
		if p.Start >= end {
			break
		}
		in += math.Min(p.End, end) - math.Max(p.Start, start)
	}
	return math.Min(1, in/(end-start))
}
