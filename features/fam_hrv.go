package features

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/hrv"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

// hrvCols are the HRV family's columns: the beats in the window, then the
// hrv package's own Columns verbatim (hrv_n_nn first).
func hrvCols() []Column {
	cols := []Column{
		{Name: "hrv_n_beats", Kind: Int, Doc: "beats (R-peaks or beat annotations) inside the window"},
		{Name: "hrv_n_ectopic", Kind: Int, Doc: "detected beats classed ectopic by NN cleaning (adjacent intervals interpolated); empty for annotated beats"},
		{Name: "hrv_n_missed", Kind: Int, Doc: "missed beats inserted by NN cleaning; empty for annotated beats"},
		{Name: "hrv_n_extra", Kind: Int, Doc: "extra detections removed by NN cleaning; empty for annotated beats"},
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

// beat is one heart beat for the HRV core: its time (s from the start) and
// whether it is a normal beat (always true for detected beats).
type beat struct {
	t      float64
	normal bool
}

// hrvExtra is the number of bookkeeping columns before hrv.Columns.
const hrvExtra = 5

// hrvCore turns the beats of one window into the family's values. Both
// drivers call it with the beats inside the window (methods reference 7:
// "an NN interval belongs if both beats do").
//
// Detected beats (all marked normal) are cleaned per window by
// ecg.CleanRR (Lipponen and Tarvainen 2019 by default; intervals across a
// gap are not formed), so every window is treated like a stand-alone
// short-term recording and the result cannot depend on how the data were
// chunked. Annotated beats join consecutive normal beats ("N") not
// separated by a gap, uncorrected (reference annotations).
func hrvCore(w window.Window, beats []beat, gaps []window.Interval, length float64, detected bool, out cells) string {
	out.v[0] = float64(len(beats))
	var nn, end []float64
	var corrected []bool
	if detected {
		times := make([]float64, len(beats))
		for i, b := range beats {
			times[i] = b.t
		}
		c, err := ecg.CleanRR(times, gaps, ecg.NNOptions{})
		if err != nil {
			return "NN cleaning: " + err.Error()
		}
		out.v[1], out.v[2], out.v[3] = float64(c.Counts.Ectopic), float64(c.Counts.Missed), float64(c.Counts.Extra)
		out.v[4] = float64(c.Counts.OutOfRange + c.Counts.Percent)
		nn = c.Ms
		corrected = make([]bool, len(c.Fix))
		end = make([]float64, len(c.TimeS))
		for i := range c.TimeS {
			end[i] = c.TimeS[i] - w.Start
			corrected[i] = c.Fix[i] != ecg.FixNone
		}
	} else {
		gi := 0
		for i := 1; i < len(beats); i++ {
			a, b := beats[i-1], beats[i]
			if !a.normal || !b.normal {
				continue
			}
			for gi < len(gaps) && gaps[gi].End <= a.t {
				gi++
			}
			if gi < len(gaps) && gaps[gi].Start < b.t {
				continue // an interval across lost data is not an RR interval
			}
			nn = append(nn, (b.t-a.t)*1000)
			end = append(end, b.t-w.Start)
		}
	}
	m := hrv.Compute(nn, end, hrv.Options{WindowS: length, Corrected: corrected})
	m.AppendValues(out.v[:hrvExtra])
	return hrvReason(m)
}

// hrvReason summarises the hrv package's per-column reasons: each distinct
// reason once, with the columns it applies to.
func hrvReason(m hrv.Metrics) string {
	if m.Err != nil {
		return strings.TrimPrefix(m.Err.Error(), "hrv: ")
	}
	names := hrv.Columns()
	byReason := map[string][]string{}
	var order []string
	for i, r := range m.ReasonList() {
		if r == "" {
			continue
		}
		if _, ok := byReason[r]; !ok {
			order = append(order, r)
		}
		byReason[r] = append(byReason[r], names[i])
	}
	parts := make([]string, len(order))
	for i, r := range order {
		parts[i] = strings.Join(byReason[r], ",") + ": " + r
	}
	return strings.Join(parts, "; ")
}

// newHRVFamily builds the HRV family: beats detected on the ECG channel
// (ecg.Detect in batch, ecg.Detector when streaming: one detector core) or
// taken from annotations when Config.BeatsAnnotator is set, then hrvCore
// per window.
func newHRVFamily(rec *recording.Recording, cfg Config, withData bool) *family {
	f := &family{name: FamilyHRV, length: cfg.HRVWindow, cols: hrvCols()}
	length := cfg.HRVWindow.Seconds()
	if cfg.BeatsAnnotator != "" {
		var beats []beat
		for _, a := range rec.Annotations {
			if a.Annotator == cfg.BeatsAnnotator && a.IsBeat() {
				beats = append(beats, beat{t: a.Time, normal: a.Code == "N"})
			}
		}
		if len(beats) == 0 {
			f.missing = fmt.Sprintf("no beat annotations from annotator %q", cfg.BeatsAnnotator)
			return f
		}
		sort.SliceStable(beats, func(i, j int) bool { return beats[i].t < beats[j].t })
		end := dataEnd(rec, nil)
		f.batchFn = func(g window.Grid) ([]famResult, error) {
			return hrvBatch(f, g, beats, end, nil, length, false)
		}
		return f
	}
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
		res, err := ecg.Detect(in.x, rate, ecg.Options{})
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
		return hrvBatch(f, g, beats, float64(len(in.x))/rate, gaps, length, true)
	}
	f.newDriver = func(g window.Grid) (driver, error) {
		det, err := ecg.NewDetector(rate, ecg.Options{})
		if err != nil {
			return nil, err
		}
		es, err := window.NewEventStream(g, func(b beat) float64 { return b.t })
		if err != nil {
			return nil, err
		}
		return &hrvDriver{f: f, det: det, es: es, rate: rate, length: length, last: math.MinInt64, runStart: -1}, nil
	}
	return f
}

// hrvBatch lays the grid over the beats (window.Grid.Events) and runs the
// core per window.
func hrvBatch(f *family, g window.Grid, beats []beat, end float64, gaps []window.Interval, length float64, detected bool) ([]famResult, error) {
	times := make([]float64, len(beats))
	for i, b := range beats {
		times[i] = b.t
	}
	end = math.Max(end, lastTime(times))
	it, err := g.Events(times, end, gaps)
	if err != nil {
		return nil, err
	}
	var out []famResult
	for w := range it {
		out = append(out, f.runEvents(w, beats[w.Lo:w.Hi], gaps, length, detected))
	}
	return out, nil
}

func lastTime(t []float64) float64 {
	if len(t) == 0 {
		return 0
	}
	return t[len(t)-1]
}

// runEvents is runWindow for an event family with one input: invalid
// windows keep empty values and the engine's reason.
func (f *family) runEvents(w window.Window, beats []beat, gaps []window.Interval, length float64, detected bool) famResult {
	return f.runWindowWith([]seg{{w: w, ok: true}}, func(out cells, valid bool) string {
		if !valid {
			out.v[0] = float64(len(beats))
			return ""
		}
		return hrvCore(w, beats, gaps, length, detected, out)
	})
}

// hrvDriver streams the HRV family: samples go to the streaming detector,
// its beats and gaps to the engine's event stream once they are final, and
// each released window to hrvCore, as in batch.
type hrvDriver struct {
	f      *family
	det    *ecg.Detector
	es     *window.Stream[beat]
	rate   float64
	length float64

	n       int               // samples pushed
	pending []beat            // beats not yet passed to the engine
	pgaps   []window.Interval // gaps not yet passed to the engine
	gaps    []window.Interval // gaps passed, kept while a window may need them
	known   float64           // the engine has everything before this time
	last    int64
	ended   bool

	// The current run of identical (or invalid) samples and the runs that
	// ended recently: the detector reports a gap only when it has ended, so
	// nothing is passed on past the start of a run that may still become one.
	runStart int
	prev     float64
	runs     [][2]int
}

func (d *hrvDriver) push(_ int, x []float64, gaps []window.Interval) ([]famResult, error) {
	b, err := d.det.Push(x)
	if err != nil {
		return nil, err
	}
	d.track(x)
	d.n += len(x)
	d.add(b, gaps)
	return d.feed(d.safe())
}

// track follows runs of identical or non-finite samples.
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

// feed passes beats and gaps before t to the engine in time order, advances
// it to t and computes the windows it releases.
func (d *hrvDriver) feed(t float64) ([]famResult, error) {
	bi, gi := 0, 0
	for {
		nextB, nextG := math.Inf(1), math.Inf(1)
		if bi < len(d.pending) && d.pending[bi].t < t {
			nextB = d.pending[bi].t
		}
		if gi < len(d.pgaps) && d.pgaps[gi].Start < t {
			nextG = d.pgaps[gi].Start
		}
		if math.IsInf(nextB, 1) && math.IsInf(nextG, 1) {
			break
		}
		if nextG <= nextB {
			g := d.pgaps[gi]
			gi++
			if err := d.es.Gap(g); err != nil {
				return nil, err
			}
			d.gaps = append(d.gaps, g)
			d.known = math.Max(d.known, g.Start)
			continue
		}
		if err := d.es.Push(d.pending[bi]); err != nil {
			return nil, err
		}
		d.known = math.Max(d.known, d.pending[bi].t)
		bi++
	}
	d.pending = d.pending[bi:]
	d.pgaps = d.pgaps[gi:]
	if t > d.known && !math.IsInf(t, 1) {
		if err := d.es.Advance(t); err != nil {
			return nil, err
		}
		d.known = t
	}
	return d.collect(), nil
}

func (d *hrvDriver) collect() []famResult {
	var out []famResult
	for w, items := range d.es.Ready() {
		gs, err := window.NormalizeGaps(d.gaps)
		if err != nil {
			gs = d.gaps
		}
		out = append(out, d.f.runEvents(w, items, gs, d.length, true))
		d.last = w.Seq
		// Gaps ending before the next window's start are no longer needed.
		k := 0
		for k < len(d.gaps) && d.gaps[k].End < w.Start {
			k++
		}
		d.gaps = d.gaps[k:]
	}
	return out
}

func (d *hrvDriver) close() ([]famResult, error) {
	b, err := d.det.Flush()
	if err != nil {
		return nil, err
	}
	d.add(b, nil)
	out, err := d.feed(math.Inf(1))
	if err != nil {
		return nil, err
	}
	ext := float64(d.n) / d.rate
	if ext > d.known {
		if err := d.es.Advance(ext); err != nil {
			return nil, err
		}
	}
	if err := d.es.Close(); err != nil {
		return nil, err
	}
	out = append(out, d.collect()...)
	d.ended = true
	return out, nil
}

func (d *hrvDriver) done() int64 {
	if d.ended {
		return math.MaxInt64
	}
	return d.last
}
