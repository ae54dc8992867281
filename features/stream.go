package features

import (
	"fmt"
	"iter"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

// Stream computes the feature table live: channels are pushed in chunks in
// time order, and each row is released as soon as every family's window
// ending at the row time has closed. It drives the same per-window cores as
// Extract through the window engine's streaming driver (and the modality
// packages' own streaming types, which share their batch cores), so for the
// same samples its rows equal Extract's exactly, whatever the chunking.
//
// Latency: a row is released on the Push that completes the last of its
// families' windows, measured in data pushed after the row time: activity
// waits for motion's undecided step run (about a second), ECG quality for
// the beat detector's decision delay (ecg.Detector.Latency plus 1 s), HRV
// for that delay and the NN-cleaning context (60 s), breathing for resp's 120-s
// breath buffer plus 2 s and its 90-s event context, about 212 s in all.
// BenchmarkStreamHour reports the lag (row_lag_s) and the cost of a Push
// (push_us, tens of microseconds). Restrict Config.Families to get activity
// or HRV rows sooner.
//
// Memory: each family keeps only the samples or events of its open windows
// and their context (at most 5 min of ECG for quality and beats, 6 min of
// breaths) plus the copies of windows waiting for a slower channel of the
// same family; rows wait only until all families reach them. The heap is
// therefore flat over any recording length (under 1 MB after a GC in
// BenchmarkStreamDay) as long as every channel is pushed (push NaN for lost
// samples).
//
// A Stream is not safe for concurrent use.
type Stream struct {
	p      *plan
	chans  []*streamChan
	drv    []driver // per plan family; nil when the family is missing
	rows   *window.Stream[struct{}]
	rowWin map[int64]window.Window
	res    map[int64][]*famResult // per seq, per family index
	out    []Row
	extent float64
	closed bool
	err    error
}

type streamChan struct {
	rate float64
	n    int
	gaps []window.Interval // declared, not yet passed on
	subs []sub
}

// sub routes a channel to one input of one family's driver.
type sub struct {
	fam int
	in  int
}

// NewStream prepares a stream for recordings shaped like hdr: its Start,
// channels (name, unit, rate, role; samples, if any, are ignored) and
// annotations (used for label columns). Families that need beat annotations
// (Config.BeatsAnnotator) are batch-only and give an error here.
func NewStream(hdr *recording.Recording, cfg Config) (*Stream, error) {
	p, err := newPlan(hdr, cfg, false)
	if err != nil {
		return nil, err
	}
	if p.cfg.BeatsAnnotator != "" && p.cfg.wants(FamilyHRV) {
		return nil, fmt.Errorf("features: stream: beats from annotations are a batch option: %w", ErrConfig)
	}
	s := &Stream{p: p, rowWin: map[int64]window.Window{}, res: map[int64][]*famResult{}, drv: make([]driver, len(p.families))}
	for _, ch := range hdr.Channels {
		if !(ch.RateHz > 0) || math.IsInf(ch.RateHz, 0) {
			return nil, fmt.Errorf("features: stream: channel %q rate %v Hz: %w", ch.Name, ch.RateHz, ErrInput)
		}
		s.chans = append(s.chans, &streamChan{rate: ch.RateHz})
	}
	rg, err := p.rowGrid()
	if err != nil {
		return nil, err
	}
	if s.rows, err = window.NewEventStream(rg, func(struct{}) float64 { return 0 }); err != nil {
		return nil, err
	}
	for fi, f := range p.families {
		if f.missing != "" {
			continue
		}
		g, err := p.grid(f.length)
		if err != nil {
			return nil, err
		}
		if f.newDriver != nil {
			s.drv[fi], err = f.newDriver(g)
		} else {
			s.drv[fi], err = newSampleDriver(f, g)
		}
		if err != nil {
			return nil, fmt.Errorf("features: stream: %s: %w", f.name, err)
		}
		for in := range f.inputs {
			ci := channelIndex(hdr, f.inputs[in].name)
			s.chans[ci].subs = append(s.chans[ci].subs, sub{fam: fi, in: in})
		}
	}
	return s, nil
}

func channelIndex(rec *recording.Recording, name string) int {
	for i := range rec.Channels {
		if rec.Channels[i].Name == name {
			return i
		}
	}
	return -1
}

// Columns returns the table columns of the rows the stream emits.
func (s *Stream) Columns() []Column { return s.p.cols }

// Err returns the error that made the stream unusable, if any.
func (s *Stream) Err() error { return s.err }

func (s *Stream) fail(err error) error {
	s.err = err
	return err
}

func (s *Stream) usable(ch int) error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return fmt.Errorf("features: stream closed: %w", ErrInput)
	}
	if ch < 0 || ch >= len(s.chans) {
		return fmt.Errorf("features: stream: no channel %d (have %d): %w", ch, len(s.chans), ErrInput)
	}
	return nil
}

// Gap declares that channel ch has no valid data over iv (seconds from the
// start). Declare a gap before pushing the samples it covers; NaN samples
// need no declaration.
func (s *Stream) Gap(ch int, iv window.Interval) error {
	if err := s.usable(ch); err != nil {
		return err
	}
	c := s.chans[ch]
	if !isFinite(iv.Start) || !isFinite(iv.End) || iv.End < iv.Start {
		return s.fail(fmt.Errorf("features: stream: gap [%v, %v): %w", iv.Start, iv.End, ErrInput))
	}
	if iv.Start < float64(c.n)/c.rate {
		return s.fail(fmt.Errorf("features: stream: gap at %v s on channel %d declared after its samples (pushed to %v s): %w", iv.Start, ch, float64(c.n)/c.rate, ErrInput))
	}
	c.gaps = append(c.gaps, iv)
	sort.SliceStable(c.gaps, func(i, j int) bool { return c.gaps[i].Start < c.gaps[j].Start })
	return nil
}

// Push appends samples (physical units, NaN for invalid) to channel ch,
// the index of the channel in the header given to NewStream. Rows completed
// by the push are then available from Ready.
func (s *Stream) Push(ch int, samples []float64) error {
	if err := s.usable(ch); err != nil {
		return err
	}
	c := s.chans[ch]
	end := float64(c.n+len(samples)) / c.rate
	gaps := invalidRuns(nil, samples, c.n, c.rate)
	k := 0
	for k < len(c.gaps) && c.gaps[k].Start < end {
		k++
	}
	gaps = append(gaps, c.gaps[:k]...)
	c.gaps = c.gaps[k:]
	sort.SliceStable(gaps, func(i, j int) bool { return gaps[i].Start < gaps[j].Start })
	for _, sb := range c.subs {
		res, err := s.drv[sb.fam].push(sb.in, samples, gaps)
		if err != nil {
			return s.fail(fmt.Errorf("features: stream: %s: %w", s.p.families[sb.fam].name, err))
		}
		s.collect(sb.fam, res)
	}
	c.n += len(samples)
	s.extent = math.Max(s.extent, end)
	if err := s.rows.Advance(s.extent); err != nil {
		return s.fail(err)
	}
	s.release()
	return nil
}

func (s *Stream) collect(fam int, res []famResult) {
	for i := range res {
		q := res[i].seq
		rs := s.res[q]
		if rs == nil {
			rs = make([]*famResult, len(s.p.families))
			s.res[q] = rs
		}
		rs[fam] = &res[i]
	}
}

// release moves rows whose families have all passed them to the output.
func (s *Stream) release() {
	for w := range s.rows.Ready() {
		if s.extent > 0 {
			s.rowWin[w.Seq] = w
		}
	}
	for len(s.rowWin) > 0 {
		q := int64(math.MaxInt64)
		for k := range s.rowWin {
			q = min(q, k)
		}
		if !s.closed {
			for _, d := range s.drv {
				if d != nil && d.done() < q {
					return
				}
			}
		}
		row := s.p.newRow(s.rowWin[q])
		delete(s.rowWin, q)
		for fi, r := range s.res[q] {
			if r != nil {
				s.p.put(&row, fi, *r)
			}
		}
		delete(s.res, q)
		s.out = append(s.out, row)
	}
}

// Close ends every channel: the windows the last samples complete are
// computed and the remaining rows become available from Ready.
func (s *Stream) Close() error {
	if s.err != nil {
		return s.err
	}
	if s.closed {
		return nil
	}
	for fi, d := range s.drv {
		if d == nil {
			continue
		}
		res, err := d.close()
		if err != nil {
			return s.fail(fmt.Errorf("features: stream: %s: %w", s.p.families[fi].name, err))
		}
		s.collect(fi, res)
	}
	if err := s.rows.Close(); err != nil {
		return s.fail(err)
	}
	s.closed = true
	s.release()
	s.res = nil // results past the last row belong to no row
	return nil
}

// Ready yields the rows released so far, in time order, and forgets them.
func (s *Stream) Ready() iter.Seq[Row] {
	return func(yield func(Row) bool) {
		for len(s.out) > 0 {
			r := s.out[0]
			s.out = s.out[1:]
			if !yield(r) {
				return
			}
		}
		s.out = nil
	}
}
