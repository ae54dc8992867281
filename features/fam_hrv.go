package features

import (
	"fmt"
	"math"
	"runtime"
	"sort"
	"strings"
	"sync"
	"time"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/hrv"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

// NN cleaning runs once per row step ("block"), on the beats from at least
// nnMarginS before the block to as long after it (a whole number of steps),
// and keeps the intervals ending inside the block. Cleaning a short block in
// its context rather than every 5-min window saves the tenfold overlap of
// the windows, and the context lets the centred rules of ecg.CleanRR
// (91-beat quartile deviation, 11-beat median) see both sides of every
// interval; the result depends only on the block's context, never on how the
// data were chunked. At the default 30-s step the context is 150 s.
const nnMarginS = 60

// marginSteps is the cleaning margin in steps: nnMarginS rounded up.
func marginSteps(step time.Duration) int {
	return max(1, int((nnMarginS*time.Second+step-1)/step))
}

// hrvCols are the HRV family's columns: its counts, then the hrv package's
// own Columns verbatim (hrv_n_nn first).
func hrvCols() []Column {
	cols := []Column{
		{Name: "hrv_n_beats", Kind: Int, Doc: "beats (R-peaks or beat annotations) inside the window"},
		{Name: "hrv_n_ectopic", Kind: Int, Doc: "NN intervals interpolated next to an ectopic beat by NN cleaning (ecg.FixEctopic); empty for annotated beats"},
		{Name: "hrv_n_missed", Kind: Int, Doc: "NN intervals split at a missed beat by NN cleaning (ecg.FixMissed); empty for annotated beats"},
		{Name: "hrv_n_extra", Kind: Int, Doc: "NN intervals merged across an extra detection by NN cleaning (ecg.FixExtra); empty for annotated beats"},
		{Name: "hrv_n_removed", Kind: Int, Doc: "intervals removed by NN cleaning (physiological limits, percentage rule); empty for annotated beats"},
	}
	for _, c := range hrv.ColumnInfo() {
		k := Float
		if c.Count {
			k = Int
		}
		cols = append(cols, Column{Name: c.Name, Kind: k, Doc: c.Doc + " (" + c.Unit + ")"})
	}
	return cols
}

// hrvExtra is the number of count columns before hrv.Columns.
const hrvExtra = 5

// beat is one heart beat: its time (s from the start) and whether it is a
// normal beat (always true for detected beats).
type beat struct {
	t      float64
	normal bool
}

// nnKind says what an nnItem is.
type nnKind uint8

const (
	itemBeat     nnKind = iota // a beat (counted in hrv_n_beats)
	itemInterval               // an NN interval ending at t
	itemRemoved                // an interval removed by cleaning, ending at t
)

// nnItem is one entry of the cleaned series the HRV windows are laid over.
type nnItem struct {
	t    float64 // s from the start: the beat, or the interval's end
	ms   float64 // interval length (intervals only)
	fix  ecg.Fix
	kind nnKind
}

// hrvSetup is what both HRV drivers share.
type hrvSetup struct {
	detected bool    // beats from the detector (cleaned) or annotations (N-N pairs)
	length   float64 // HRV window, s
	step     float64 // row step, s
	margin   int     // cleaning margin, steps
}

// cleanBlock is the first per-window core: w is a window of the cleaning
// grid (length step*(1+2m), m = marginSteps), beats and gaps its contents.
// It returns the items of the block [w.End-(1+m)step, w.End-m*step), sorted.
func (h hrvSetup) cleanBlock(w window.Window, beats []beat, gaps []window.Interval) []nnItem {
	be := w.End - float64(h.margin)*h.step
	bs := be - h.step
	in := func(t float64) bool { return t >= bs && t < be }
	var out []nnItem
	for _, b := range beats {
		if in(b.t) {
			out = append(out, nnItem{t: b.t, kind: itemBeat})
		}
	}
	if h.detected {
		times := make([]float64, len(beats))
		for i, b := range beats {
			times[i] = b.t
		}
		c, err := ecg.CleanRR(times, gaps, ecg.NNOptions{})
		if err == nil {
			for i, t := range c.TimeS {
				if in(t) {
					out = append(out, nnItem{t: t, ms: c.Ms[i], fix: c.Fix[i], kind: itemInterval})
				}
			}
			for _, t := range c.RemovedS {
				if in(t) {
					out = append(out, nnItem{t: t, kind: itemRemoved})
				}
			}
		}
	} else {
		gi := 0
		for i := 1; i < len(beats); i++ {
			a, b := beats[i-1], beats[i]
			if !in(b.t) || !a.normal || !b.normal {
				continue
			}
			for gi < len(gaps) && gaps[gi].End <= a.t {
				gi++
			}
			if gi < len(gaps) && gaps[gi].Start < b.t {
				continue // an interval across lost data is not an RR interval
			}
			out = append(out, nnItem{t: b.t, ms: (b.t - a.t) * 1000, kind: itemInterval})
		}
	}
	sort.SliceStable(out, func(i, j int) bool {
		if out[i].t != out[j].t {
			return out[i].t < out[j].t
		}
		return out[i].kind < out[j].kind
	})
	return out
}

// hrvCore is the second per-window core: the items of one HRV window. An
// interval belongs to the window when both its beats do (methods reference
// 7): its end is inside (the engine's range) and its start, end minus its
// length, is not before the window start (within hrv.ContiguousTolS).
func (h hrvSetup) hrvCore(w window.Window, items []nnItem, valid bool, out cells) string {
	var nb, ect, mis, ext, rem float64
	var nn, end []float64
	var corrected []bool
	for _, it := range items {
		switch it.kind {
		case itemBeat:
			nb++
		case itemRemoved:
			rem++
		case itemInterval:
			if it.t-it.ms/1000 < w.Start-hrv.ContiguousTolS {
				continue
			}
			switch it.fix {
			case ecg.FixEctopic:
				ect++
			case ecg.FixMissed:
				mis++
			case ecg.FixExtra:
				ext++
			}
			nn = append(nn, it.ms)
			end = append(end, it.t-w.Start)
			corrected = append(corrected, it.fix != ecg.FixNone)
		}
	}
	out.v[0] = nb
	if h.detected {
		out.v[1], out.v[2], out.v[3], out.v[4] = ect, mis, ext, rem
	}
	if !valid {
		return ""
	}
	if !h.detected {
		corrected = nil
	}
	m := hrv.Compute(nn, end, hrv.Options{WindowS: h.length, Corrected: corrected})
	m.AppendValues(out.v[:hrvExtra])
	return hrvReason(m)
}

// hrvReason summarises the hrv package's per-column reasons: each distinct
// reason once, with the columns it applies to.
func hrvReason(m hrv.Metrics) string {
	if m.Err != nil {
		return strings.TrimPrefix(m.Err.Error(), "hrv: ")
	}
	return joinReasons(hrv.Columns(), m.ReasonList())
}

// newHRVFamily builds the HRV family: beats detected on the ECG channel
// (ecg.Detect in batch, ecg.Detector when streaming: one detector core) or
// taken from annotations when Config.BeatsAnnotator is set; NN cleaning per
// block (cleanBlock); hrv.Compute per window (hrvCore).
func newHRVFamily(rec *recording.Recording, cfg Config, withData bool, sh *shared) *family {
	f := &family{name: FamilyHRV, length: cfg.HRVWindow, cols: hrvCols()}
	h := hrvSetup{length: cfg.HRVWindow.Seconds(), step: cfg.Step.Seconds(), margin: marginSteps(cfg.Step)}
	if cfg.BeatsAnnotator != "" {
		var beats []beat
		for _, a := range rec.Annotations {
			if a.Annotator == cfg.BeatsAnnotator && a.IsBeat() {
				beats = append(beats, beat{t: a.Time, normal: sinusBeat(a.Code)})
			}
		}
		if len(beats) == 0 {
			f.missing = fmt.Sprintf("no beat annotations from annotator %q", cfg.BeatsAnnotator)
			return f
		}
		sort.SliceStable(beats, func(i, j int) bool { return beats[i].t < beats[j].t })
		end := dataEnd(rec, nil)
		f.batchFn = func(g window.Grid) ([]famResult, error) {
			return h.batch(f, g, cfg, beats, end, nil)
		}
		return f
	}
	h.detected = true
	ch := cfg.findRole(rec, recording.RoleECG)
	if ch == nil {
		f.missing = "no ECG channel"
		return f
	}
	if ch.RateHz < ecg.MinRateHz || ch.RateHz > ecg.MaxRateHz {
		f.missing = fmt.Sprintf("ECG rate %v Hz outside %d..%d Hz", ch.RateHz, ecg.MinRateHz, ecg.MaxRateHz)
		return f
	}
	in := channelInput(ch, recording.RoleECG, withData)
	f.inputs = []input{in}
	rate := ch.RateHz
	f.batchFn = func(g window.Grid) ([]famResult, error) {
		if len(in.x) == 0 {
			return nil, nil
		}
		res, err := sh.detect(in.x, rate)
		if err != nil {
			return nil, err
		}
		beats := make([]beat, len(res.Beats))
		for i, b := range res.Beats {
			beats[i] = beat{t: b.Time, normal: true}
		}
		gaps, err := window.NormalizeGaps(append(append([]window.Interval(nil), res.Gaps...), in.gaps...))
		if err != nil {
			return nil, err
		}
		return h.batch(f, g, cfg, beats, float64(len(in.x))/rate, gaps)
	}
	f.newDriver = func(g window.Grid) (driver, error) {
		det, err := ecg.NewDetector(rate, ecg.Options{})
		if err != nil {
			return nil, err
		}
		cg, err := cleanGrid(cfg, g)
		if err != nil {
			return nil, err
		}
		es1, err := window.NewEventStream(cg, func(b beat) float64 { return b.t })
		if err != nil {
			return nil, err
		}
		es2, err := window.NewEventStream(g, func(it nnItem) float64 { return it.t })
		if err != nil {
			return nil, err
		}
		return &hrvDriver{f: f, h: h, det: det, es1: es1, es2: es2, rate: rate, last: math.MinInt64, runStart: -1}, nil
	}
	return f
}

// sinusBeat reports whether an annotated beat is normally conducted from
// the sinus node and so forms NN intervals: WFDB codes N (normal) and L, R
// (left and right bundle branch block beats, sinus beats with a slow
// ventricular conduction). Premature, escape, paced and fusion beats are
// not (WFDB annotation code table, from memory; common HRV practice).
func sinusBeat(code string) bool { return code == "N" || code == "L" || code == "R" }

// cleanGrid is the grid of cleaning blocks with their context.
func cleanGrid(cfg Config, g window.Grid) (window.Grid, error) {
	sp := g.Spec()
	sp.Length = cfg.Step * time.Duration(1+2*marginSteps(cfg.Step))
	return window.NewGrid(sp, g.Origin())
}

// batch runs both stages over whole series: the cleaning grid over the
// beats, then the HRV grid over the cleaned items. Windows are computed in
// parallel (each is a pure function of its contents).
func (h hrvSetup) batch(f *family, g window.Grid, cfg Config, beats []beat, end float64, gaps []window.Interval) ([]famResult, error) {
	times := make([]float64, len(beats))
	for i, b := range beats {
		times[i] = b.t
	}
	end = math.Max(end, lastTime(times))
	cg, err := cleanGrid(cfg, g)
	if err != nil {
		return nil, err
	}
	it, err := cg.Events(times, end, gaps)
	if err != nil {
		return nil, err
	}
	var cws []window.Window
	for w := range it {
		cws = append(cws, w)
	}
	blocks := make([][]nnItem, len(cws))
	parallel(len(cws), func(i int) {
		w := cws[i]
		blocks[i] = h.cleanBlock(w, beats[w.Lo:w.Hi], gapsIn(gaps, w.Start, w.End))
	})
	var items []nnItem
	for _, b := range blocks {
		items = append(items, b...)
	}
	itimes := make([]float64, len(items))
	for i := range items {
		itimes[i] = items[i].t
	}
	it2, err := g.Events(itimes, end, gaps)
	if err != nil {
		return nil, err
	}
	var ws []window.Window
	for w := range it2 {
		ws = append(ws, w)
	}
	out := make([]famResult, len(ws))
	parallel(len(ws), func(i int) {
		w := ws[i]
		out[i] = f.runItems(h, w, items[w.Lo:w.Hi])
	})
	return out, nil
}

// gapsIn returns the gaps overlapping [lo, hi), from a sorted list.
func gapsIn(gaps []window.Interval, lo, hi float64) []window.Interval {
	i := sort.Search(len(gaps), func(i int) bool { return gaps[i].End > lo })
	j := i
	for j < len(gaps) && gaps[j].Start < hi {
		j++
	}
	return gaps[i:j]
}

// parallel calls fn(0..n-1) on up to GOMAXPROCS goroutines.
func parallel(n int, fn func(i int)) {
	workers := min(runtime.GOMAXPROCS(0), n)
	if workers <= 1 {
		for i := range n {
			fn(i)
		}
		return
	}
	var wg sync.WaitGroup
	var mu sync.Mutex
	next := 0
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				mu.Lock()
				i := next
				next++
				mu.Unlock()
				if i >= n {
					return
				}
				fn(i)
			}
		}()
	}
	wg.Wait()
}

func lastTime(t []float64) float64 {
	if len(t) == 0 {
		return 0
	}
	return t[len(t)-1]
}

// runItems is runWindow for the HRV window w: invalid windows keep empty
// values (but their counts) and the engine's reason.
func (f *family) runItems(h hrvSetup, w window.Window, items []nnItem) famResult {
	return f.runWindowWith([]seg{{w: w, ok: true}}, func(out cells, valid bool) string {
		return h.hrvCore(w, items, valid, out)
	})
}

// hrvDriver streams the HRV family: samples go to the streaming detector;
// its beats and gaps go to the cleaning grid's event stream once final;
// each released cleaning window's block goes to the HRV grid's event
// stream; each released HRV window goes to hrvCore, as in batch.
type hrvDriver struct {
	f        *family
	h        hrvSetup
	det      *ecg.Detector
	es1      *window.Stream[beat]
	es2      *window.Stream[nnItem]
	rate     float64
	n        int               // samples pushed
	pending  []beat            // beats not yet passed to es1
	pgaps    []window.Interval // gaps not yet passed to es1
	gaps1    []window.Interval // gaps passed to es1, kept while a cleaning window may need them
	gaps2    []window.Interval // gaps passed to es1, not yet to es2
	known1   float64
	known2   float64
	last     int64
	ended    bool
	runStart int // the current run of identical or invalid samples
	prev     float64
	runs     [][2]int // such runs that ended recently
}

func (d *hrvDriver) push(_ int, x []float64, gaps []window.Interval) ([]famResult, error) {
	b, err := d.det.Push(x)
	if err != nil {
		return nil, err
	}
	d.track(x)
	d.n += len(x)
	d.add(b, gaps)
	return d.feed(d.safe(), math.Inf(1))
}

// track follows runs of identical or non-finite samples: the detector
// reports a gap (invalid samples, flat line) only when it has ended.
func (d *hrvDriver) track(x []float64) {
	for i, v := range x {
		j := d.n + i
		same := j > 0 && (v == d.prev || (!isFinite(v) && !isFinite(d.prev)))
		if !same {
			if d.runStart >= 0 && j-d.runStart >= 2 {
				d.runs = append(d.runs, [2]int{d.runStart, j})
			}
			d.runStart = j
		}
		d.prev = v
	}
}

// safe returns the time before which beats and gaps are final: the
// detector's latency bound (plus 1 s) before the end of the data, and no
// later than the start of a run of identical or invalid samples that is
// ongoing or ended less than that long ago.
func (d *hrvDriver) safe() float64 {
	hold := d.det.Latency() + 1
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
	if d.runStart >= 0 && d.n-d.runStart >= 2 {
		t = math.Min(t, float64(d.runStart)/d.rate)
	}
	return t
}

func (d *hrvDriver) add(b []ecg.Beat, gaps []window.Interval) {
	for _, x := range b {
		d.pending = append(d.pending, beat{t: x.Time, normal: true})
	}
	d.pgaps = append(d.pgaps, gaps...)
	d.pgaps = append(d.pgaps, d.det.TakeGaps()...)
	sort.SliceStable(d.pgaps, func(i, j int) bool { return d.pgaps[i].Start < d.pgaps[j].Start })
}

// feed passes beats and gaps before t to the cleaning stream in time order,
// advances it to t, and moves released blocks on; ext caps the HRV stream's
// advance (the data end at Close).
func (d *hrvDriver) feed(t, ext float64) ([]famResult, error) {
	bi, gi := 0, 0
	for {
		nb, ng := math.Inf(1), math.Inf(1)
		if bi < len(d.pending) && d.pending[bi].t < t {
			nb = d.pending[bi].t
		}
		if gi < len(d.pgaps) && d.pgaps[gi].Start < t {
			ng = d.pgaps[gi].Start
		}
		if math.IsInf(nb, 1) && math.IsInf(ng, 1) {
			break
		}
		if ng <= nb {
			g := d.pgaps[gi]
			gi++
			if err := d.es1.Gap(g); err != nil {
				return nil, err
			}
			d.gaps1 = append(d.gaps1, g)
			d.gaps2 = append(d.gaps2, g)
			d.known1 = math.Max(d.known1, g.Start)
			continue
		}
		if err := d.es1.Push(d.pending[bi]); err != nil {
			return nil, err
		}
		d.known1 = math.Max(d.known1, nb)
		bi++
	}
	d.pending, d.pgaps = d.pending[bi:], d.pgaps[gi:]
	if !math.IsInf(t, 1) && t > d.known1 {
		if err := d.es1.Advance(t); err != nil {
			return nil, err
		}
		d.known1 = t
	}
	return d.blocks(ext)
}

// blocks cleans every released cleaning window and passes its block (and
// the gaps starting before the block end) to the HRV stream.
func (d *hrvDriver) blocks(ext float64) ([]famResult, error) {
	for w, beats := range d.es1.Ready() {
		gs, err := window.NormalizeGaps(d.gaps1)
		if err != nil {
			return nil, err
		}
		items := d.h.cleanBlock(w, beats, gapsIn(gs, w.Start, w.End))
		be := math.Min(w.End-float64(d.h.margin)*d.h.step, ext)
		ii, gi := 0, 0
		for ii < len(items) || (gi < len(d.gaps2) && d.gaps2[gi].Start < be) {
			if gi < len(d.gaps2) && d.gaps2[gi].Start < be && (ii == len(items) || d.gaps2[gi].Start <= items[ii].t) {
				if err := d.es2.Gap(d.gaps2[gi]); err != nil {
					return nil, err
				}
				d.known2 = math.Max(d.known2, d.gaps2[gi].Start)
				gi++
				continue
			}
			if err := d.es2.Push(items[ii]); err != nil {
				return nil, err
			}
			d.known2 = math.Max(d.known2, items[ii].t)
			ii++
		}
		d.gaps2 = d.gaps2[gi:]
		if be > d.known2 {
			if err := d.es2.Advance(be); err != nil {
				return nil, err
			}
			d.known2 = be
		}
		k := 0
		for k < len(d.gaps1) && d.gaps1[k].End < w.Start+d.h.step {
			k++
		}
		d.gaps1 = d.gaps1[k:]
	}
	var out []famResult
	for w, items := range d.es2.Ready() {
		out = append(out, d.f.runItems(d.h, w, items))
		d.last = w.Seq
	}
	return out, nil
}

func (d *hrvDriver) close() ([]famResult, error) {
	b, err := d.det.Flush()
	if err != nil {
		return nil, err
	}
	d.add(b, nil)
	ext := float64(d.n) / d.rate
	out, err := d.feed(math.Inf(1), ext)
	if err != nil {
		return nil, err
	}
	if ext > d.known1 {
		if err := d.es1.Advance(ext); err != nil {
			return nil, err
		}
		d.known1 = ext
	}
	if err := d.es1.Close(); err != nil {
		return nil, err
	}
	rest, err := d.blocks(ext)
	if err != nil {
		return nil, err
	}
	out = append(out, rest...)
	for _, g := range d.gaps2 {
		if err := d.es2.Gap(g); err != nil {
			return nil, err
		}
	}
	if ext > d.known2 {
		if err := d.es2.Advance(ext); err != nil {
			return nil, err
		}
	}
	if err := d.es2.Close(); err != nil {
		return nil, err
	}
	for w, items := range d.es2.Ready() {
		out = append(out, d.f.runItems(d.h, w, items))
	}
	d.ended = true
	return out, nil
}

func (d *hrvDriver) done() int64 {
	if d.ended {
		return math.MaxInt64
	}
	return d.last
}
