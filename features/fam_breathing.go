package features

import (
	"fmt"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// Event context around a breathing window: candidate apneas and hypopneas
// are detected (resp.DetectEvents) on the breaths and pauses from
// breathLookbackS before the window to breathLookaheadS after it, so the
// pre-event baseline (120 s, resp.EventOptions.BaselineS) and the recovery
// after an event (30 s, RecoveryS) are seen the same way by both drivers.
const (
	breathLookbackS  = 150
	breathLookaheadS = 90
)

func breathingCols() []Column {
	var cols []Column
	for _, name := range resp.SummaryColumns() {
		k := Float
		if len(name) > 2 && name[len(name)-2:] == "_n" {
			k = Int
		}
		cols = append(cols, Column{Name: name, Kind: k, Doc: "resp.Summary column " + name})
	}
	return cols
}

// newBreathingFamily builds the breathing family from the rib-cage and
// abdominal bands through package resp: breath detection (resp.Detect in
// batch, resp.Stream live: one core), the engine's grid over breath onsets,
// candidate events in the window's context and resp.Summarize per window.
// Volumes are in arbitrary units of the equally weighted band sum (no
// calibration is applied), so the litre columns stay empty with resp's
// reason.
func newBreathingFamily(rec *recording.Recording, cfg Config, withData bool, _ *shared) *family {
	f := &family{name: FamilyBreathing, length: cfg.BreathingWindow, cols: breathingCols()}
	rc := cfg.findRole(rec, recording.RoleRibCage)
	ab := cfg.findRole(rec, recording.RoleAbdomen)
	switch {
	case rc == nil && ab == nil:
		f.missing = "no respiratory band"
		return f
	case rc == nil || ab == nil:
		f.missing = "needs both the rib-cage and the abdominal band"
		return f
	case rc.RateHz != ab.RateHz:
		f.missing = fmt.Sprintf("bands at different rates (%v, %v Hz)", rc.RateHz, ab.RateHz)
		return f
	case rc.RateHz < 10 || rc.RateHz > 500:
		f.missing = fmt.Sprintf("band rate %v Hz outside 10..500 Hz", rc.RateHz)
		return f
	}
	f.inputs = []input{channelInput(rc, recording.RoleRibCage, withData), channelInput(ab, recording.RoleAbdomen, withData)}
	rate := rc.RateHz
	opt := resp.Options{RateHz: rate}
	f.batchFn = func(g window.Grid) ([]famResult, error) {
		n := min(len(rc.Samples), len(ab.Samples))
		if n == 0 {
			return nil, nil
		}
		r, err := resp.Detect(rc.Samples[:n], ab.Samples[:n], opt)
		if err != nil {
			return nil, err
		}
		on := onsets(r.Breaths)
		it, err := g.Events(on, math.Max(float64(n)/rate, lastTime(on)), r.Gaps)
		if err != nil {
			return nil, err
		}
		var out []famResult
		for w := range it {
			out = append(out, f.breathWindow(w, r.Breaths[w.Lo:w.Hi], r.Breaths, r.Pauses, r.Gaps, r.Calibration))
		}
		return out, nil
	}
	f.newDriver = func(g window.Grid) (driver, error) {
		s, err := resp.NewStream(opt)
		if err != nil {
			return nil, err
		}
		es, err := window.NewEventStream(g, func(b resp.Breath) float64 { return math.Max(b.Onset, 0) })
		if err != nil {
			return nil, err
		}
		return &breathDriver{f: f, rs: s, es: es, rate: rate, last: math.MinInt64}, nil
	}
	return f
}

// onsets returns the breath onsets, clamped at 0 (an onset corrected for the
// filter delay may precede the first sample by a fraction of a second; as
// in resp.Windows it is counted in the first window).
func onsets(b []resp.Breath) []float64 {
	on := make([]float64, len(b))
	for i := range b {
		on[i] = math.Max(b[i].Onset, 0)
	}
	return on
}

// breathWindow is the breathing family's one per-window core: events in the
// window's context (all lists sorted by time, possibly longer than needed),
// then resp.Summarize.
func (f *family) breathWindow(w window.Window, in []resp.Breath, breaths []resp.Breath, pauses []resp.Excursion, gaps []window.Interval, cal resp.Calibration) famResult {
	return f.runWindowWith([]seg{{w: w, ok: true}}, func(out cells, valid bool) string {
		out.v[0] = float64(len(in))
		if !valid {
			return ""
		}
		lo, hi := w.Start-breathLookbackS, w.End+breathLookaheadS
		ctx := resp.Result{Calibration: cal}
		// The lists are in time order: search instead of scanning a day.
		for k := sort.Search(len(breaths), func(k int) bool { return breaths[k].Onset >= lo }); k < len(breaths) && breaths[k].Onset < hi; k++ {
			ctx.Breaths = append(ctx.Breaths, breaths[k])
		}
		// Pauses are at most resp.Options.ExcursionSpanS (4 s) long and in
		// order; start the scan a minute early to catch every overlap.
		for k := sort.Search(len(pauses), func(k int) bool { return pauses[k].Start >= lo-60 }); k < len(pauses) && pauses[k].Start < hi; k++ {
			if pauses[k].End > lo {
				ctx.Pauses = append(ctx.Pauses, pauses[k])
			}
		}
		ctx.Gaps = gapsIn(gaps, lo, hi)
		ev, err := resp.DetectEvents(ctx, resp.EventOptions{})
		if err != nil {
			return "events: " + err.Error()
		}
		s := resp.Summarize(w, in, ev, resp.SummaryOptions{})
		copy(out.v, s.Values())
		return joinReasons(resp.SummaryColumns(), s.Reasons())
	})
}

// joinReasons summarises per-column reasons: each distinct reason once with
// its columns.
func joinReasons(names, reasons []string) string {
	by := map[string][]string{}
	var order []string
	for i, r := range reasons {
		if r == "" {
			continue
		}
		if _, ok := by[r]; !ok {
			order = append(order, r)
		}
		by[r] = append(by[r], names[i])
	}
	s := ""
	for i, r := range order {
		if i > 0 {
			s += "; "
		}
		for j, n := range by[r] {
			if j > 0 {
				s += ","
			}
			s += n
		}
		s += ": " + r
	}
	return s
}

// breathDriver streams the breathing family: both bands go to resp.Stream
// in step; completed breaths and gaps go to the engine's event stream once
// no earlier breath can still complete (resp keeps at most
// resp.Options.BufferS, 120 s, of an unfinished breath), and each released
// window is computed once breathLookaheadS more have passed.
type breathDriver struct {
	f    *family
	rs   *resp.Stream
	es   *window.Stream[resp.Breath]
	rate float64

	buf     [2][]float64
	n       int // samples pushed to resp
	pending []resp.Breath
	pgaps   []window.Interval
	known   float64

	// context kept for event detection
	breaths []resp.Breath
	pauses  []resp.Excursion
	gaps    []window.Interval
	held    []heldWindow

	nanStart int // start of the current run of invalid samples, or -1
	runs     [][2]int
	last     int64
	ended    bool
}

type heldWindow struct {
	w  window.Window
	in []resp.Breath
}

func (d *breathDriver) push(in int, x []float64, _ []window.Interval) ([]famResult, error) {
	// Gaps reach resp as NaN samples (its own gap detection); declared
	// channel gaps are not passed, in batch as in streaming.
	d.buf[in] = append(d.buf[in], x...)
	n := min(len(d.buf[0]), len(d.buf[1]))
	if n == 0 {
		return nil, nil
	}
	if err := d.rs.Push(d.buf[0][:n], d.buf[1][:n]); err != nil {
		return nil, err
	}
	d.track(d.buf[0][:n], d.buf[1][:n])
	d.n += n
	for i := range d.buf {
		d.buf[i] = append(d.buf[i][:0], d.buf[i][n:]...)
	}
	d.drain()
	return d.feed(d.safe(), false)
}

// track follows runs of samples invalid in either band (resp's gaps): a
// gap is reported when it ends, so nothing is passed on past its start
// before then.
func (d *breathDriver) track(a, b []float64) {
	for i := range a {
		j := d.n + i
		bad := !isFinite(a[i]) || !isFinite(b[i])
		if bad && d.nanStart < 0 {
			d.nanStart = j
		}
		if !bad && d.nanStart >= 0 {
			d.runs = append(d.runs, [2]int{d.nanStart, j})
			d.nanStart = -1
		}
	}
}

func (d *breathDriver) safe() float64 {
	hold := 120.0 + 2 // resp.Options.BufferS default plus a margin
	ext := float64(d.n) / d.rate
	t := ext - hold
	k := 0
	for k < len(d.runs) && float64(d.runs[k][1])/d.rate+hold < ext {
		k++
	}
	d.runs = d.runs[k:]
	for _, r := range d.runs {
		t = math.Min(t, float64(r[0])/d.rate)
	}
	if d.nanStart >= 0 {
		t = math.Min(t, float64(d.nanStart)/d.rate)
	}
	return t
}

func (d *breathDriver) drain() {
	var b []resp.Breath
	var p []resp.Excursion
	var g []window.Interval
	b, p, g = d.rs.Drain(b, p, g)
	d.pending = append(d.pending, b...)
	d.breaths = append(d.breaths, b...)
	d.pauses = append(d.pauses, p...)
	d.gaps = append(d.gaps, g...)
	d.pgaps = append(d.pgaps, g...)
	sort.SliceStable(d.pgaps, func(i, j int) bool { return d.pgaps[i].Start < d.pgaps[j].Start })
}

// feed passes breaths and gaps before t to the engine, advances it, and
// computes the released windows whose context is complete (all of them when
// final).
func (d *breathDriver) feed(t float64, final bool) ([]famResult, error) {
	bi, gi := 0, 0
	for {
		nb, ng := math.Inf(1), math.Inf(1)
		if bi < len(d.pending) && math.Max(d.pending[bi].Onset, 0) < t {
			nb = math.Max(d.pending[bi].Onset, 0)
		}
		if gi < len(d.pgaps) && d.pgaps[gi].Start < t {
			ng = d.pgaps[gi].Start
		}
		if math.IsInf(nb, 1) && math.IsInf(ng, 1) {
			break
		}
		if ng <= nb {
			if err := d.es.Gap(d.pgaps[gi]); err != nil {
				return nil, err
			}
			d.known = math.Max(d.known, d.pgaps[gi].Start)
			gi++
			continue
		}
		if err := d.es.Push(d.pending[bi]); err != nil {
			return nil, err
		}
		d.known = math.Max(d.known, nb)
		bi++
	}
	d.pending, d.pgaps = d.pending[bi:], d.pgaps[gi:]
	if !math.IsInf(t, 1) && t > d.known {
		if err := d.es.Advance(t); err != nil {
			return nil, err
		}
		d.known = t
	}
	for w, items := range d.es.Ready() {
		d.held = append(d.held, heldWindow{w: w, in: append([]resp.Breath(nil), items...)})
	}
	var out []famResult
	k := 0
	for ; k < len(d.held); k++ {
		h := d.held[k]
		if !final && h.w.End+breathLookaheadS > t {
			break
		}
		out = append(out, d.f.breathWindow(h.w, h.in, d.breaths, d.pauses, d.gaps, d.rs.Calibration()))
		d.last = h.w.Seq
	}
	d.held = d.held[k:]
	d.trim()
	return out, nil
}

// trim forgets context no remaining window can need.
func (d *breathDriver) trim() {
	var from float64
	if len(d.held) > 0 {
		from = d.held[0].w.Start - breathLookbackS
	} else {
		from = d.known - d.f.length.Seconds() - breathLookbackS
	}
	k := 0
	for k < len(d.breaths) && d.breaths[k].Onset < from-1 {
		k++
	}
	d.breaths = d.breaths[k:]
	k = 0
	for k < len(d.pauses) && d.pauses[k].End < from-1 {
		k++
	}
	d.pauses = d.pauses[k:]
	k = 0
	for k < len(d.gaps) && d.gaps[k].End < from-1 {
		k++
	}
	d.gaps = d.gaps[k:]
}

func (d *breathDriver) close() ([]famResult, error) {
	if err := d.rs.Close(); err != nil {
		return nil, err
	}
	d.drain()
	out, err := d.feed(math.Inf(1), false)
	if err != nil {
		return nil, err
	}
	if ext := float64(d.n) / d.rate; ext > d.known {
		if err := d.es.Advance(ext); err != nil {
			return nil, err
		}
		d.known = ext
	}
	if err := d.es.Close(); err != nil {
		return nil, err
	}
	rest, err := d.feed(math.Inf(1), true)
	if err != nil {
		return nil, err
	}
	d.ended = true
	return append(out, rest...), nil
}

func (d *breathDriver) done() int64 {
	if d.ended {
		return math.MaxInt64
	}
	return d.last
}
