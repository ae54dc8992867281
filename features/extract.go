package features

import (
	"fmt"
	"math"
	"sort"
	"sync"
	"time"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

// plan is what Extract and NewStream derive from a recording header and a
// configuration: the families with their channels, the schema and the label
// set. Both drivers build it with the same function.
type plan struct {
	cfg      Config
	origin   time.Time
	families []*family
	offs     []int // column offset of each family's bookkeeping pair
	labels   *labelSet
	labelOff int
	cols     []Column
}

// originOf returns the recording's UTC start, or the Unix epoch when the
// file gives none (row times are then elapsed time since the start, and
// Table/sidecar say so).
func originOf(rec *recording.Recording) time.Time {
	if rec.Start.IsZero() {
		return time.Unix(0, 0).UTC()
	}
	return rec.Start.UTC()
}

// roleOf returns the channel's role after Config.Roles overrides.
func (c Config) roleOf(ch *recording.Channel) recording.Role {
	if r, ok := c.Roles[ch.Name]; ok {
		return r
	}
	return ch.Role
}

// findRole returns the first channel with role r after overrides, or nil.
func (c Config) findRole(rec *recording.Recording, r recording.Role) *recording.Channel {
	for i := range rec.Channels {
		if c.roleOf(&rec.Channels[i]) == r {
			return &rec.Channels[i]
		}
	}
	return nil
}

// newPlan resolves channels and columns. withData says whether channel
// samples are attached (batch) or only described (stream).
func newPlan(rec *recording.Recording, cfg Config, withData bool) (*plan, error) {
	if rec == nil {
		return nil, fmt.Errorf("features: nil recording: %w", ErrInput)
	}
	cfg, err := cfg.withDefaults()
	if err != nil {
		return nil, err
	}
	for name := range cfg.Roles {
		if _, ok := rec.ChannelByName(name); !ok {
			return nil, fmt.Errorf("features: role override for channel %q: no such channel in %s: %w", name, rec.Name, ErrConfig)
		}
	}
	p := &plan{cfg: cfg, origin: originOf(rec)}
	sh := &shared{}
	builders := []struct {
		name string
		mk   func(*recording.Recording, Config, bool, *shared) *family
	}{
		{FamilyHRV, newHRVFamily},
		{FamilyECGQuality, newECGQualityFamily},
		{FamilyBreathing, newBreathingFamily},
		{FamilyActivity, newActivityFamily},
	}
	for _, b := range builders {
		if b.name != FamilyECGQuality && !cfg.wants(b.name) {
			continue
		}
		f := b.mk(rec, cfg, withData, sh)
		if f == nil {
			continue
		}
		for _, in := range f.inputs {
			if !(in.rate > 0) || math.IsInf(in.rate, 0) || in.rate > 1e7 {
				return nil, fmt.Errorf("features: %s: channel %q rate %v Hz: %w", f.name, in.name, in.rate, ErrInput)
			}
		}
		p.offs = append(p.offs, len(p.cols))
		p.cols = append(p.cols,
			Column{Name: f.name + "_coverage_frac", Kind: Float, Family: f.name, Doc: "fraction of the " + f.name + " window holding valid data (minimum over its channels)"},
			Column{Name: f.name + "_reason", Kind: Text, Family: f.name, Doc: "why some " + f.name + " values are empty; empty when all are computed"})
		for _, c := range f.cols {
			c.Family = f.name
			p.cols = append(p.cols, c)
		}
		p.families = append(p.families, f)
	}
	p.labels, err = newLabelSet(rec, cfg, p.origin)
	if err != nil {
		return nil, err
	}
	p.labelOff = len(p.cols)
	p.cols = append(p.cols, p.labels.columns()...)
	seen := map[string]bool{"record": true, "time_utc": true, "t_s": true, "seq": true}
	for _, c := range p.cols {
		if seen[c.Name] {
			return nil, fmt.Errorf("features: duplicate column %q: %w", c.Name, ErrConfig)
		}
		seen[c.Name] = true
	}
	return p, nil
}

// grid returns family f's grid on the plan's origin.
func (p *plan) grid(length time.Duration) (window.Grid, error) {
	return window.NewGrid(p.cfg.spec(length), p.origin)
}

// rowGrid is the grid of row times: windows one step long, so a row exists
// for every step whose span overlaps the recording.
func (p *plan) rowGrid() (window.Grid, error) {
	return window.NewGrid(window.Spec{Length: p.cfg.Step, Step: p.cfg.Step, Anchor: p.cfg.Anchor, MinCoverage: 1}, p.origin)
}

// newRow returns the empty row for row-grid window w: every available
// family's coverage 0 and reason "no data in window" until its result
// arrives; unavailable families carry their reason.
func (p *plan) newRow(w window.Window) Row {
	r := newRow(len(p.cols))
	r.Seq, r.Time, r.Offset = w.Seq, w.EndUTC, w.End
	for i, f := range p.families {
		o := p.offs[i]
		if f.missing != "" {
			r.Texts[o+1] = f.missing
			continue
		}
		r.Values[o] = 0
		r.Texts[o+1] = ReasonNoData
	}
	p.labels.fill(w.End, r.Values[p.labelOff:])
	return r
}

// put copies family i's result into row r.
func (p *plan) put(r *Row, i int, res famResult) {
	o := p.offs[i]
	r.Values[o] = res.coverage
	r.Texts[o+1] = res.reason
	copy(r.Values[o+2:], res.v)
	copy(r.Texts[o+2:], res.t)
}

// Extract computes the feature table of a whole recording: one row per grid
// time from the first after the start to the first at or after the end,
// each family over its own window ending at the row time. A family whose
// channels are missing keeps empty columns with its reason; labels come
// from the recording's annotations and Config.Labels.
//
// Extract and Stream share one core (family.runWindow and the families'
// cores): for the same data they return identical rows.
func Extract(rec *recording.Recording, cfg Config) (*Table, error) {
	p, err := newPlan(rec, cfg, true)
	if err != nil {
		return nil, err
	}
	rg, err := p.rowGrid()
	if err != nil {
		return nil, err
	}
	it, err := rg.Events(nil, dataEnd(rec, p), nil)
	if err != nil {
		return nil, fmt.Errorf("features: %s: %w", rec.Name, err)
	}
	t := &Table{Record: rec.Name, Columns: p.cols, StartKnown: rec.StartKnown && !rec.Start.IsZero()}
	index := map[int64]int{}
	if dataEnd(rec, p) <= 0 {
		return t, nil // no samples, no annotations: no rows
	}
	for w := range it {
		index[w.Seq] = len(t.Rows)
		t.Rows = append(t.Rows, p.newRow(w))
	}
	// Families are independent: compute them concurrently (each family's
	// own windows may run in parallel too), then fill the rows in order.
	results := make([][]famResult, len(p.families))
	errs := make([]error, len(p.families))
	var wg sync.WaitGroup
	for i, f := range p.families {
		if f.missing != "" {
			continue
		}
		g, err := p.grid(f.length)
		if err != nil {
			return nil, err
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			results[i], errs[i] = f.batch(g)
		}()
	}
	wg.Wait()
	for i := range p.families {
		if errs[i] != nil {
			return nil, fmt.Errorf("features: %s: %w", rec.Name, errs[i])
		}
		for _, r := range results[i] {
			if k, ok := index[r.seq]; ok {
				p.put(&t.Rows[k], i, r)
			}
		}
	}
	return t, nil
}

// dataEnd is the recording extent in seconds: the longest channel, or for
// records without signals the last annotation's end.
func dataEnd(rec *recording.Recording, p *plan) float64 {
	d := 0.0
	for _, c := range rec.Channels {
		if c.RateHz > 0 {
			d = math.Max(d, float64(len(c.Samples))/c.RateHz)
		}
	}
	if len(rec.Channels) == 0 {
		for _, a := range rec.Annotations {
			d = math.Max(d, a.Time+a.Duration)
		}
	}
	return d
}

// channelInput turns a recording channel into a family input with its gaps
// (declared gaps plus runs of invalid samples).
func channelInput(ch *recording.Channel, role recording.Role, withData bool) input {
	in := input{role: role, name: ch.Name, unit: ch.Unit, rate: ch.RateHz}
	if withData {
		in.x = ch.Samples
		in.gaps = append(append([]window.Interval(nil), ch.Gaps...), invalidRuns(nil, ch.Samples, 0, ch.RateHz)...)
		sort.Slice(in.gaps, func(i, j int) bool { return in.gaps[i].Start < in.gaps[j].Start })
	}
	return in
}

// shared holds batch work that several families need, done once per
// Extract: beat detection on the ECG channel (HRV and ECG quality).
type shared struct {
	once sync.Once
	res  ecg.Result
	err  error
}

// detect returns ecg.Detect(x, rate) with default options, computed once.
func (s *shared) detect(x []float64, rate float64) (ecg.Result, error) {
	s.once.Do(func() { s.res, s.err = ecg.Detect(x, rate, ecg.Options{}) })
	return s.res, s.err
}
