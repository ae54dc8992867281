package resp

import (
	"fmt"
	"math"
	"sort"
)

// EventKind is apnea or hypopnea.
type EventKind int

// Event kinds.
const (
	EventApnea EventKind = iota
	EventHypopnea
)

// String returns "apnea" or "hypopnea".
func (k EventKind) String() string {
	switch k {
	case EventApnea:
		return "apnea"
	case EventHypopnea:
		return "hypopnea"
	}
	return fmt.Sprintf("EventKind(%d)", int(k))
}

// EventClass is the effort classification of an event.
type EventClass int

// Event classes.
const (
	ClassUnclassified EventClass = iota // effort neither clearly present nor absent
	ClassObstructive                    // effort continues (apnea) or paradox (hypopnea)
	ClassCentral                        // effort absent (apnea) or no paradox (hypopnea)
	ClassMixed                          // apnea: effort absent at first, resuming later
)

// String returns "unclassified", "obstructive", "central" or "mixed".
func (c EventClass) String() string {
	switch c {
	case ClassUnclassified:
		return "unclassified"
	case ClassObstructive:
		return "obstructive"
	case ClassCentral:
		return "central"
	case ClassMixed:
		return "mixed"
	}
	return fmt.Sprintf("EventClass(%d)", int(c))
}

// Event is a candidate respiratory event. It is a candidate, not a scored
// event: the amplitude and duration criteria of the AASM rules (Berry et al.
// 2012) are applied to the calibrated band sum, but AASM hypopnea scoring also
// needs an oxygen desaturation or an arousal, which the bands alone do not
// give. With an SpO2 channel, Rule1A and Rule1B say whether the desaturation
// criterion of each rule is met; arousals are never available here.
type Event struct {
	Kind       EventKind
	Class      EventClass
	Start, End float64 // s from the recording start
	DurationS  float64
	// BaselineAU is the pre-event baseline excursion of the sum (median of
	// the stable breaths in the preceding EventOptions.BaselineS).
	BaselineAU float64
	// DropPct is the time-weighted mean drop of the excursion below the
	// baseline during the event (percent).
	DropPct float64
	// ApneaFrac is the fraction of the event's time meeting the apnea
	// amplitude criterion.
	ApneaFrac float64
	// EffortFrac is the fraction of the event's time in which either band
	// moved by at least EventOptions.EffortFrac of its baseline excursion.
	EffortFrac float64
	// DesatPct is the SpO2 fall from the pre-event baseline to the nadir
	// during the event or up to EventOptions.DesatLagS after it (percentage
	// points); NaN without SpO2.
	DesatPct float64
	// Rule1A and Rule1B: hypopnea with >= 3 % (1A; an arousal would also do
	// but is not available) or >= 4 % (1B) desaturation (Berry et al. 2012).
	// Always false without SpO2 and for apneas.
	Rule1A, Rule1B bool
}

// EventOptions configures event detection. Zero values mean the defaults,
// which are the AASM adult rules (Berry et al. 2012) where they exist.
type EventOptions struct {
	ApneaDrop     float64 // excursion drop for an apnea: 0.9 (Berry et al. 2012)
	HypopneaDrop  float64 // excursion drop for a hypopnea: 0.3 (Berry et al. 2012, rule 1A)
	MinDurationS  float64 // 10 s (Berry et al. 2012, adults)
	ApneaTimeFrac float64 // share of the event that must meet the apnea drop: 0.9 (AASM, via a secondary study guide)
	// BaselineS is the span before an event whose stable breaths form the
	// baseline: 120 s (common practice, from memory: "the preceding two
	// minutes").
	BaselineS float64
	// MinBaselineBreaths: fewer stable breaths in the baseline span and no
	// event is scored there: 3 when zero.
	MinBaselineBreaths int
	// RecoveryFrac: an event must end in breathing that recovers: the
	// median excursion of the (up to three) usable breaths in the
	// RecoveryS after it must reach RecoveryFrac of the baseline. This keeps
	// a lasting step down of ventilation (the end of exercise) from being
	// scored. 0.85 when zero (our choice).
	RecoveryFrac float64
	// RecoveryS: 30 s when zero.
	RecoveryS float64
	// EffortFrac: a band moving by at least this fraction of its baseline
	// excursion counts as effort: 0.2 when zero (our choice).
	EffortFrac float64
	// SpO2 is an optional oxygen-saturation series (percent) sampled at
	// SpO2RateHz from SpO2StartS (s from the recording start). NaN samples
	// are ignored.
	SpO2       []float64
	SpO2RateHz float64
	SpO2StartS float64
	// DesatBaselineS is how far before the event the SpO2 baseline (highest
	// valid reading) is sought: 30 s when zero (from memory; AASM takes the
	// closest stable reading before the event).
	DesatBaselineS float64
	// DesatLagS is how long after the event the nadir is sought: 30 s when
	// zero (circulation delay; common practice, from memory).
	DesatLagS float64
}

func (o EventOptions) withDefaults() (EventOptions, error) {
	def := func(p *float64, v float64, name string, max float64) error {
		if math.IsNaN(*p) || *p < 0 || *p > max {
			return fmt.Errorf("resp: event option %s = %v: %w", name, *p, ErrInput)
		}
		if *p == 0 {
			*p = v
		}
		return nil
	}
	for _, d := range []struct {
		p    *float64
		v    float64
		name string
		max  float64
	}{
		{&o.ApneaDrop, 0.9, "ApneaDrop", 1}, {&o.HypopneaDrop, 0.3, "HypopneaDrop", 1},
		{&o.MinDurationS, 10, "MinDurationS", 3600}, {&o.ApneaTimeFrac, 0.9, "ApneaTimeFrac", 1},
		{&o.BaselineS, 120, "BaselineS", 3600}, {&o.EffortFrac, 0.2, "EffortFrac", 10},
		{&o.RecoveryFrac, 0.85, "RecoveryFrac", 10}, {&o.RecoveryS, 30, "RecoveryS", 3600},
		{&o.DesatBaselineS, 30, "DesatBaselineS", 3600}, {&o.DesatLagS, 30, "DesatLagS", 3600},
	} {
		if err := def(d.p, d.v, d.name, d.max); err != nil {
			return o, err
		}
	}
	if o.HypopneaDrop > o.ApneaDrop {
		return o, fmt.Errorf("resp: hypopnea drop %v above apnea drop %v: %w", o.HypopneaDrop, o.ApneaDrop, ErrInput)
	}
	if o.MinBaselineBreaths == 0 {
		o.MinBaselineBreaths = 3
	}
	if len(o.SpO2) > 0 && (!(o.SpO2RateHz > 0) || math.IsInf(o.SpO2RateHz, 0) || !finite(o.SpO2StartS)) {
		return o, fmt.Errorf("resp: SpO2 rate %v Hz, start %v s: %w", o.SpO2RateHz, o.SpO2StartS, ErrInput)
	}
	return o, nil
}

// span is one piece of the amplitude timeline.
type span struct {
	start, end    float64
	exc, rib, abd float64
	breath        int // index into breaths, -1 for a pause span
	paradox       bool
	unusable      bool // motion or clipping: neither reduced nor baseline
}

// DetectEvents finds candidate apneas and hypopneas in a detection result:
// the breaths and the pause spans between them form a timeline of the sum's
// excursion; a run of at least MinDurationS in which every piece is at least
// HypopneaDrop below the pre-event baseline is an event, an apnea when
// ApneaTimeFrac of it is at least ApneaDrop below (the AASM amplitude and
// duration criteria, Berry et al. 2012), or when its mean drop reaches
// ApneaDrop with most of it at apnea level (our allowance for noisy span
// estimates). Apneas are classified from the
// bands' effort: continued throughout -> obstructive, absent -> central,
// absent then resuming -> mixed. Hypopneas are obstructive when most of their
// time shows paradox (paradoxical breaths, or pause spans in which the bands
// move but cancel in the sum) and central otherwise (after the AASM optional
// rule, from memory; snoring and flow flattening are not available from
// bands). Breaths flagged for motion or clipping break a run.
//
// These are candidates: see Event.
func DetectEvents(r Result, opt EventOptions) ([]Event, error) {
	c, err := newEventCore(opt)
	if err != nil {
		return nil, err
	}
	for _, s := range timeline(r) {
		c.push(s)
	}
	c.close()
	return c.out, nil
}

// EventStream is the streaming driver of event detection: push the breaths
// and pause excursions drained from a Stream, in time order, and collect the
// events as they are decided. It feeds the same core as DetectEvents, so the
// events are identical for any chunking. An event is decided once the
// breathing after it has recovered (three usable breaths, or RecoveryS after
// it); memory is bounded by BaselineS of breaths plus the open event.
type EventStream struct {
	c      *eventCore
	last   float64
	closed bool
}

// NewEventStream returns an event stream with the given options.
func NewEventStream(opt EventOptions) (*EventStream, error) {
	c, err := newEventCore(opt)
	if err != nil {
		return nil, err
	}
	return &EventStream{c: c, last: math.Inf(-1)}, nil
}

// Push adds breaths and pause excursions, which must not start before
// anything pushed earlier (Stream.Drain output in drain order satisfies
// this).
func (e *EventStream) Push(breaths []Breath, pauses []Excursion) error {
	if e.closed {
		return ErrClosed
	}
	tl := timeline(Result{Breaths: breaths, Pauses: pauses})
	for _, s := range tl {
		if s.start < e.last || !finite(s.start) {
			return fmt.Errorf("resp: event stream: span at %v s after one at %v s: %w", s.start, e.last, ErrInput)
		}
		e.last = s.start
		e.c.push(s)
	}
	return nil
}

// Close ends the stream, deciding the events still waiting for recovery.
func (e *EventStream) Close() error {
	if e.closed {
		return ErrClosed
	}
	e.closed = true
	e.c.close()
	return nil
}

// Drain returns the events decided since the last Drain, appended to dst.
func (e *EventStream) Drain(dst []Event) []Event {
	dst = append(dst, e.c.out...)
	e.c.out = e.c.out[:0]
	return dst
}

// eventCore is the one implementation behind DetectEvents and EventStream:
// spans arrive in time order; each is judged against the baseline of the
// stable breaths before it, runs of reduced spans are collected, and a run
// is scored once the breathing after it shows whether it recovered.
type eventCore struct {
	o       EventOptions
	base    *baseline
	inRun   bool
	run     []span
	runBase float64
	runBand float64
	lastEnd float64
	pend    []pendingRun
	out     []Event
}

// pendingRun is a closed run waiting for its recovery verdict: the usable
// breaths among the spans from the one that closed it, while they start
// within RecoveryS of it, up to three.
type pendingRun struct {
	run        []span
	base, band float64
	from       float64
	ex         []float64
	done, ok   bool
}

func newEventCore(opt EventOptions) (*eventCore, error) {
	o, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	return &eventCore{o: o, base: newBaseline(o.BaselineS)}, nil
}

func (p *pendingRun) offer(s span, o EventOptions) {
	if p.done {
		return
	}
	if s.start >= p.from+o.RecoveryS {
		p.decide(o)
		return
	}
	if s.breath >= 0 && !s.unusable {
		p.ex = append(p.ex, s.exc)
		if len(p.ex) == 3 {
			p.decide(o)
		}
	}
}

// decide: the run recovered when the median of the collected breaths
// reaches RecoveryFrac of its baseline; no breath at all means it did not.
func (p *pendingRun) decide(o EventOptions) {
	p.done = true
	if len(p.ex) == 0 {
		return
	}
	sort.Float64s(p.ex)
	p.ok = mid(p.ex) >= o.RecoveryFrac*p.base
}

func (c *eventCore) push(s span) {
	o := c.o
	b, bb, nb := c.base.at(s.start)
	red := !s.unusable && nb >= o.MinBaselineBreaths && s.exc <= (1-o.HypopneaDrop)*b
	if s.breath >= 0 && !s.unusable && !red {
		c.base.add(s.start, s.exc, math.Max(s.rib, s.abd))
	}
	for i := range c.pend {
		c.pend[i].offer(s, o)
	}
	if c.inRun {
		if red && s.start-c.lastEnd < 0.5 {
			c.run = append(c.run, s)
			c.lastEnd = s.end
			c.emit()
			return
		}
		// s closes the run: its recovery is judged from s on.
		p := pendingRun{run: c.run, base: c.runBase, band: c.runBand, from: s.start}
		p.offer(s, o)
		c.pend = append(c.pend, p)
		c.inRun, c.run = false, nil
	}
	if red {
		c.inRun, c.run = true, []span{s}
		c.runBase, c.runBand, c.lastEnd = b, bb, s.end
	}
	c.emit()
}

// close ends the data: a run still open never recovered within the data and
// is dropped; pending runs are decided on what they collected.
func (c *eventCore) close() {
	c.inRun, c.run = false, nil
	for i := range c.pend {
		if !c.pend[i].done {
			c.pend[i].decide(c.o)
		}
	}
	c.emit()
}

// emit scores the decided runs at the head of the queue, in order.
func (c *eventCore) emit() {
	k := 0
	for k < len(c.pend) && c.pend[k].done {
		p := c.pend[k]
		if p.ok {
			if ev, ok := scoreRun(p.run, p.base, p.band, c.o); ok {
				c.out = append(c.out, ev)
			}
		}
		k++
	}
	if k > 0 {
		c.pend = append(c.pend[:0], c.pend[k:]...)
	}
}

func timeline(r Result) []span {
	tl := make([]span, 0, len(r.Breaths)+len(r.Pauses))
	for i, b := range r.Breaths {
		tl = append(tl, span{start: b.Onset, end: b.EndExp, exc: b.VtAU, rib: b.RibExcAU, abd: b.AbdExcAU, breath: i,
			paradox: b.Paradox, unusable: b.Quality&(QualityMotion|QualityClipping|QualityBandLoss) != 0})
	}
	for _, p := range r.Pauses {
		tl = append(tl, span{start: p.Start, end: p.End, exc: p.SumAU, rib: p.RibExcAU, abd: p.AbdExcAU, breath: -1})
	}
	sort.SliceStable(tl, func(i, j int) bool { return tl[i].start < tl[j].start })
	return tl
}

// baseline keeps the stable breaths of the last span seconds, with their
// excursions also held sorted so a median costs a binary search and a copy.
type baseline struct {
	span          float64
	t, v, band    []float64
	lo            int
	sortV, sortBd []float64
}

func newBaseline(span float64) *baseline { return &baseline{span: span} }

func (b *baseline) add(t, v, band float64) {
	b.t = append(b.t, t)
	b.v = append(b.v, v)
	b.band = append(b.band, band)
	b.sortV = insertSorted(b.sortV, v)
	b.sortBd = insertSorted(b.sortBd, band)
}

func insertSorted(s []float64, v float64) []float64 {
	i := sort.SearchFloat64s(s, v)
	s = append(s, 0)
	copy(s[i+1:], s[i:])
	s[i] = v
	return s
}

func removeSorted(s []float64, v float64) []float64 {
	i := sort.SearchFloat64s(s, v)
	if i < len(s) && s[i] == v {
		s = append(s[:i], s[i+1:]...)
	}
	return s
}

// at returns the median excursion, median band excursion and count of the
// stable breaths in [t-span, t).
func (b *baseline) at(t float64) (float64, float64, int) {
	for b.lo < len(b.t) && b.t[b.lo] < t-b.span {
		b.sortV = removeSorted(b.sortV, b.v[b.lo])
		b.sortBd = removeSorted(b.sortBd, b.band[b.lo])
		b.lo++
	}
	if b.lo > 1024 && 2*b.lo > len(b.t) {
		// Forget breaths that left the span, so memory stays bounded.
		b.t = append(b.t[:0], b.t[b.lo:]...)
		b.v = append(b.v[:0], b.v[b.lo:]...)
		b.band = append(b.band[:0], b.band[b.lo:]...)
		b.lo = 0
	}
	n := len(b.t) - b.lo
	if n == 0 {
		return math.NaN(), math.NaN(), 0
	}
	return mid(b.sortV), mid(b.sortBd), n
}

func mid(s []float64) float64 {
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func scoreRun(run []span, base, bandBase float64, o EventOptions) (Event, bool) {
	start, end := run[0].start, run[len(run)-1].end
	dur := end - start
	if dur < o.MinDurationS {
		return Event{}, false
	}
	apneaLvl := (1 - o.ApneaDrop) * base
	var apneaT float64
	for _, s := range run {
		if s.exc <= apneaLvl {
			apneaT += s.end - s.start
		}
	}
	var excT float64
	for _, s := range run {
		excT += s.exc * (s.end - s.start)
	}
	meanDrop := 1 - excT/dur/base
	kind := EventHypopnea
	// The share-of-duration criterion is judged on span estimates that are
	// noisy near the threshold (a span holding the tail of a breath reads
	// high); a run whose mean drop reaches ApneaDrop and most of whose time
	// is at apnea level is an apnea too (our choice).
	if apneaT >= o.ApneaTimeFrac*dur || (meanDrop >= o.ApneaDrop && apneaT >= 0.5*dur) {
		kind = EventApnea
	} else {
		// The longest stretch at apnea level inside a hypopnea run is an
		// apnea of its own when it is long enough (AASM: an event meeting
		// both criteria is an apnea).
		bi, bj, best := 0, 0, 0.0
		for i := 0; i < len(run); {
			if run[i].exc > apneaLvl {
				i++
				continue
			}
			j := i
			for j < len(run) && run[j].exc <= apneaLvl {
				j++
			}
			if d := run[j-1].end - run[i].start; d > best {
				bi, bj, best = i, j, d
			}
			i = j
		}
		if best >= o.MinDurationS {
			run = run[bi:bj]
			start, end = run[0].start, run[len(run)-1].end
			dur = end - start
			kind = EventApnea
			apneaT = dur
		}
	}
	ev := Event{Kind: kind, Start: start, End: end, DurationS: dur, BaselineAU: base, ApneaFrac: apneaT / dur, DesatPct: math.NaN()}
	excT = 0
	var effT, effFirst, effSecond, parT, brT float64
	half := start + dur/2
	for _, s := range run {
		d := s.end - s.start
		excT += s.exc * d
		if math.Max(s.rib, s.abd) >= o.EffortFrac*bandBase {
			effT += d
			// split the piece at the half-way time
			a := math.Max(0, math.Min(s.end, half)-s.start)
			effFirst += a
			effSecond += d - a
		}
		effort := math.Max(s.rib, s.abd) >= o.EffortFrac*bandBase
		switch {
		case s.breath >= 0:
			brT += d
			if s.paradox {
				parT += d
			}
		case effort:
			// A pause span with effort: the bands cancel in the sum when
			// they move against each other (paradox); in phase, the sum
			// moves with them.
			brT += d
			if s.exc < 0.5*(s.rib+s.abd) {
				parT += d
			}
		}
	}
	ev.DropPct = 100 * (1 - excT/dur/base)
	ev.EffortFrac = effT / dur
	switch kind {
	case EventApnea:
		first, second := effFirst/(dur/2), effSecond/(dur/2)
		switch {
		case ev.EffortFrac >= 0.7:
			ev.Class = ClassObstructive
		case ev.EffortFrac <= 0.3 && second <= 0.5:
			ev.Class = ClassCentral
		case first <= 0.3 && second >= 0.6:
			ev.Class = ClassMixed
		}
	case EventHypopnea:
		if brT > 0 && parT >= 0.5*brT {
			ev.Class = ClassObstructive
		} else if brT > 0 {
			ev.Class = ClassCentral
		}
	}
	if len(o.SpO2) > 0 {
		ev.DesatPct = desaturation(o, start, end)
		if kind == EventHypopnea && !math.IsNaN(ev.DesatPct) {
			ev.Rule1A = ev.DesatPct >= 3-1e-9
			ev.Rule1B = ev.DesatPct >= 4-1e-9
		}
	}
	return ev, true
}

// desaturation returns the SpO2 baseline (highest valid reading in the
// DesatBaselineS before start) minus the nadir in [start, end+DesatLagS].
func desaturation(o EventOptions, start, end float64) float64 {
	idx := func(t float64) int {
		i := int(math.Floor((t - o.SpO2StartS) * o.SpO2RateHz))
		return max(0, min(i, len(o.SpO2)))
	}
	hi := math.Inf(-1)
	for i := idx(start - o.DesatBaselineS); i < idx(start); i++ {
		if v := o.SpO2[i]; finite(v) {
			hi = math.Max(hi, v)
		}
	}
	lo := math.Inf(1)
	for i := idx(start); i < idx(end+o.DesatLagS); i++ {
		if v := o.SpO2[i]; finite(v) {
			lo = math.Min(lo, v)
		}
	}
	if math.IsInf(hi, 0) || math.IsInf(lo, 0) {
		return math.NaN()
	}
	return math.Max(0, hi-lo)
}
