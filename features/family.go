package features

import (
	"fmt"
	"math"
	"sort"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

// Reasons written into a family's _reason column.
const (
	// ReasonNotAvailable: the family's code is not part of this build.
	ReasonNotAvailable = "family not available"
	// ReasonNoData: no sample or event of the family falls in the window.
	ReasonNoData = "no data in window"
)

// cells is the part of a row one family fills: its own columns, after its
// two bookkeeping columns (<family>_coverage_frac, <family>_reason).
type cells struct {
	v []float64
	t []string
}

// seg is one channel's share of a window: the window as the engine reported
// it for that channel and the samples inside it.
type seg struct {
	w    window.Window
	ok   bool // the engine produced this window for the channel
	x    []float64
	rate float64
}

// input is one channel a family reads.
type input struct {
	role recording.Role
	name string
	unit string
	rate float64
	x    []float64         // batch only: the whole channel
	gaps []window.Interval // batch only: declared gaps and NaN runs
}

// family is one feature family: its columns, its window length, the channels
// it reads and its one core, called per window by both the batch and the
// streaming driver.
type family struct {
	name   string
	length time.Duration
	cols   []Column // own columns, after the bookkeeping pair
	inputs []input  // channels read, in the order core receives them
	// missing, when not empty, is why the family cannot run on this
	// recording (no channel of the needed role, family not available); every
	// row then carries it as the family's reason.
	missing string
	// core computes the family's values for one valid window into out and
	// returns a reason when some values stay empty ("" otherwise). segs has
	// one entry per input.
	core func(segs []seg, out cells) string
	// batchFn and newDriver, when set, replace the generic sample path: the
	// family drives the window engine itself (event families such as beats,
	// or a modality package's own batch/stream pair). batchFn computes every
	// window of whole channels; newDriver returns the streaming counterpart,
	// which must give the same results for any chunking.
	// alwaysCore makes runWindow call core for invalid windows too (their
	// values are then still computed and the window's reason is kept):
	// quality measures matter most where coverage is poor.
	alwaysCore bool
	batchFn    func(g window.Grid) ([]famResult, error)
	newDriver  func(g window.Grid) (driver, error)
}

// driver is the streaming side of a family: it is fed each input's samples
// in order and returns the windows they complete.
type driver interface {
	// push appends samples of input in (index into family.inputs), after
	// declaring gaps (sorted by start, none before data already pushed).
	push(in int, x []float64, gaps []window.Interval) ([]famResult, error)
	// close ends every input and returns the remaining windows.
	close() ([]famResult, error)
	// done returns the Seq up to which every window has been returned
	// (math.MinInt64 before the first).
	done() int64
}

// famResult is one family window's contribution to a row.
type famResult struct {
	seq      int64
	coverage float64
	reason   string
	v        []float64
	t        []string
}

// runWindow is the one per-window step shared by batch and streaming: it
// combines the channels' coverage (the minimum: a window is only as covered
// as its worst channel), skips the core for invalid windows and records why.
func (f *family) runWindow(segs []seg) famResult {
	return f.runWindowWith(segs, func(out cells, valid bool) string {
		if !valid && !f.alwaysCore {
			return ""
		}
		return f.core(segs, out)
	})
}

// runWindowWith is runWindow with the core given as a closure (event
// families pass their events this way). For an invalid window the core is
// called with valid false and fills only its counts (the counts behind the
// empty values); the window's reason is kept.
func (f *family) runWindowWith(segs []seg, core func(out cells, valid bool) string) famResult {
	r := famResult{seq: segs[0].w.Seq, coverage: math.Inf(1)}
	reason := ""
	for _, s := range segs {
		c := 0.0
		if s.ok {
			c = s.w.Coverage
			if !s.w.Valid && reason == "" {
				reason = s.w.Reason
			}
		} else if reason == "" {
			reason = ReasonNoData
		}
		r.coverage = math.Min(r.coverage, c)
	}
	r.v = make([]float64, len(f.cols))
	r.t = make([]string, len(f.cols))
	for i := range r.v {
		r.v[i] = math.NaN()
	}
	if r.coverage == 0 && reason == "" {
		reason = ReasonNoData
	}
	if reason != "" {
		r.reason = reason
		core(cells{r.v, r.t}, false)
		return r
	}
	r.reason = core(cells{r.v, r.t}, true)
	return r
}

// batch computes every window of the family over whole channels.
func (f *family) batch(g window.Grid) ([]famResult, error) {
	if f.batchFn != nil {
		return f.batchFn(g)
	}
	type chanWin struct {
		w  window.Window
		ch int
	}
	bySeq := map[int64][]seg{}
	var order []int64
	for ci, in := range f.inputs {
		it, err := g.Samples(in.rate, 0, len(in.x), in.gaps)
		if err != nil {
			return nil, fmt.Errorf("features: %s: channel %q: %w", f.name, in.name, err)
		}
		for w := range it {
			s, ok := bySeq[w.Seq]
			if !ok {
				s = make([]seg, len(f.inputs))
				order = append(order, w.Seq)
			}
			s[ci] = seg{w: w, ok: true, x: in.x[w.Lo:w.Hi], rate: in.rate}
			bySeq[w.Seq] = s
		}
	}
	sort.Slice(order, func(i, j int) bool { return order[i] < order[j] })
	out := make([]famResult, len(order))
	parallel(len(order), func(i int) {
		q := order[i]
		out[i] = f.runWindow(fillSegs(bySeq[q], f.inputs, q))
	})
	return out, nil
}

// fillSegs gives channels that produced no window for seq q an empty,
// not-ok segment carrying q, so runWindow sees every channel.
func fillSegs(s []seg, inputs []input, q int64) []seg {
	for i := range s {
		if !s[i].ok {
			s[i] = seg{w: window.Window{Seq: q}, rate: inputs[i].rate}
		}
	}
	return s
}

// invalidRuns appends, as gaps, the runs of non-finite samples of x, whose
// first sample is sample number off of a series at rate Hz starting at 0.
// Both drivers call it with global sample numbers, so the gaps match bit for
// bit whatever the chunking.
func invalidRuns(dst []window.Interval, x []float64, off int, rate float64) []window.Interval {
	for i := 0; i < len(x); {
		if !isFinite(x[i]) {
			j := i
			for j < len(x) && !isFinite(x[j]) {
				j++
			}
			dst = append(dst, window.Interval{Start: float64(off+i) / rate, End: float64(off+j) / rate})
			i = j
			continue
		}
		i++
	}
	return dst
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// sampleDriver streams a generic sample family: one engine stream per input,
// windows joined by Seq, then runWindow, as in family.batch.
type sampleDriver struct {
	f     *family
	eng   []*window.Stream[float64]
	parts map[int64][]seg
	last  []int64
	ended bool
}

func newSampleDriver(f *family, g window.Grid) (*sampleDriver, error) {
	d := &sampleDriver{f: f, parts: map[int64][]seg{}, last: make([]int64, len(f.inputs))}
	for i, in := range f.inputs {
		e, err := window.NewSampleStream[float64](g, in.rate, 0)
		if err != nil {
			return nil, err
		}
		d.eng = append(d.eng, e)
		d.last[i] = math.MinInt64
	}
	return d, nil
}

func (d *sampleDriver) push(in int, x []float64, gaps []window.Interval) ([]famResult, error) {
	e := d.eng[in]
	for _, g := range gaps {
		if err := e.Gap(g); err != nil {
			return nil, err
		}
	}
	if err := e.Push(x...); err != nil {
		return nil, err
	}
	return d.drain(in, nil), nil
}

func (d *sampleDriver) drain(in int, out []famResult) []famResult {
	for w, items := range d.eng[in].Ready() {
		p, ok := d.parts[w.Seq]
		if !ok {
			p = make([]seg, len(d.f.inputs))
			d.parts[w.Seq] = p
		}
		p[in] = seg{w: w, ok: true, x: append([]float64(nil), items...), rate: d.f.inputs[in].rate}
		d.last[in] = w.Seq
		complete := true
		for i := range p {
			complete = complete && p[i].ok
		}
		if complete {
			out = append(out, d.f.runWindow(fillSegs(p, d.f.inputs, w.Seq)))
			delete(d.parts, w.Seq)
		}
	}
	return out
}

func (d *sampleDriver) close() ([]famResult, error) {
	var out []famResult
	for i, e := range d.eng {
		if err := e.Close(); err != nil {
			return nil, err
		}
		out = d.drain(i, out)
	}
	qs := make([]int64, 0, len(d.parts))
	for q := range d.parts {
		qs = append(qs, q)
	}
	sort.Slice(qs, func(i, j int) bool { return qs[i] < qs[j] })
	for _, q := range qs {
		out = append(out, d.f.runWindow(fillSegs(d.parts[q], d.f.inputs, q)))
	}
	d.parts = nil
	d.ended = true
	return out, nil
}

func (d *sampleDriver) done() int64 {
	if d.ended {
		return math.MaxInt64
	}
	m := int64(math.MaxInt64)
	for _, l := range d.last {
		m = min(m, l)
	}
	return m
}
