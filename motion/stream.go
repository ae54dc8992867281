package motion

import (
	"fmt"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// Stream computes epochs from acceleration fed in chunks, for live use. It
// runs the same per-sample core as Derive and the same Summarize, through the
// window engine's streaming driver, so for the same samples it yields the
// same epochs as Epochs for any chunking. Samples are held back only while a
// step candidate is undecided (at most MinRun step intervals), so memory is
// bounded by that plus one window. It is not safe for concurrent use.
type Stream struct {
	p        *processor
	ws       *window.Stream[struct{}]
	opts     Options
	rate     float64
	pushed   int // samples handed to the window stream
	keepFrom int // Lo of the last released window: samples before it are dead
	ready    []Epoch
	steps    []float64
	closed   bool
	err      error
}

// NewStream starts a stream whose first sample is at origin (UTC), sampled
// at rateHz, summarised on the grid of spec.
func NewStream(origin time.Time, spec window.Spec, rateHz float64, opts Options) (*Stream, error) {
	p, err := newProcessor(rateHz, opts)
	if err != nil {
		return nil, err
	}
	g, err := window.NewGrid(spec, origin)
	if err != nil {
		return nil, err
	}
	ws, err := window.NewSampleStream[struct{}](g, rateHz, 0)
	if err != nil {
		return nil, err
	}
	return &Stream{p: p, ws: ws, opts: opts, rate: rateHz}, nil
}

// Push feeds the next samples of the three axes (equal lengths, opts.Unit).
func (s *Stream) Push(x, y, z []float64) error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return fmt.Errorf("motion stream: push after close: %w", window.ErrClosed)
	}
	if err := s.p.push(x, y, z); err != nil {
		return err
	}
	return s.release(max(s.p.releasable(), s.pushed))
}

// Close ends the stream; the last, partial windows become ready.
func (s *Stream) Close() error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return fmt.Errorf("motion stream: closed twice: %w", window.ErrClosed)
	}
	s.closed = true
	if err := s.release(s.p.n); err != nil {
		return err
	}
	if err := s.ws.Close(); err != nil {
		return s.fail(err)
	}
	s.collect()
	return s.err
}

func (s *Stream) fail(err error) error {
	if s.err == nil {
		s.err = fmt.Errorf("motion stream: %w", err)
	}
	return s.err
}

// release hands samples below global index upto to the window stream,
// declaring runs of invalid samples as gaps first. The engine is given
// zero-size placeholders: it needs only their count to lay out windows and
// coverage, and the samples themselves stay in the processor's buffer, which
// Summarize reads through each window's Lo and Hi (one copy fewer per sample
// than handing the samples over).
func (s *Stream) release(upto int) error {
	p := s.p
	out := p.out[s.pushed-p.outBase : upto-p.outBase]
	for i := 0; i < len(out); {
		j := i
		if out[i].Flags&FlagInvalid != 0 {
			for j < len(out) && out[j].Flags&FlagInvalid != 0 {
				j++
			}
			iv := window.Interval{Start: sampleTime(s.rate, s.pushed+i), End: sampleTime(s.rate, s.pushed+j)}
			if err := s.ws.Gap(iv); err != nil {
				return s.fail(err)
			}
		} else {
			for j < len(out) && out[j].Flags&FlagInvalid == 0 {
				j++
			}
		}
		if err := s.ws.Push(make([]struct{}, j-i)...); err != nil {
			return s.fail(err)
		}
		i = j
	}
	s.pushed = upto
	for _, i := range p.steps {
		s.steps = append(s.steps, sampleTime(s.rate, i))
	}
	p.steps = p.steps[:0]
	s.collect()
	// Samples before the last released window's start can never be read
	// again (later windows start no earlier); drop them once they are at
	// least half the buffer, so the cost stays amortised O(1) per sample.
	if dead := s.keepFrom - p.outBase; dead > 0 && 2*dead >= len(p.out) {
		p.out = p.out[:copy(p.out, p.out[dead:])]
		p.outBase = s.keepFrom
	}
	return nil
}

func (s *Stream) collect() {
	p := s.p
	for w := range s.ws.Ready() {
		s.ready = append(s.ready, Summarize(w, p.out[w.Lo-p.outBase:w.Hi-p.outBase], s.rate, s.opts))
		s.keepFrom = w.Lo
	}
}

// Ready returns the epochs completed since the last call, in order.
func (s *Stream) Ready() []Epoch {
	r := s.ready
	s.ready = nil
	return r
}

// Steps returns the step times (s from the origin) counted since the last
// call, in order.
func (s *Stream) Steps() []float64 {
	r := s.steps
	s.steps = nil
	return r
}

// PostureChanges returns the posture changes confirmed since the last call.
func (s *Stream) PostureChanges() []PostureChange {
	r := append([]PostureChange(nil), s.p.changes...)
	s.p.changes = s.p.changes[:0]
	return r
}
