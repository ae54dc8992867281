package features

import (
	"fmt"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"

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
		if isCountColumn(name) {
			k = Int
		}
		cols = append(cols, Column{Name: name, Kind: k, Doc: "resp.Summary column " + name})
	}
	return cols
}

// isCountColumn reports whether a column holds a count: by the table's
// naming scheme counts are n_<thing>, or <family>_n_<thing> for a family's
// own bookkeeping.
func isCountColumn(name string) bool {
	return strings.HasPrefix(name, "n_") || strings.Contains(name, "_n_")
}

// newBreathingFamily builds the breathing family from the rib-cage and
// abdominal bands through package resp: the band calibration of
// Config.BreathCalibration (resolved once per recording, see
// BreathCalibration), breath detection (resp.Detect in batch, resp.Stream
// live: one core), the engine's grid over breath onsets, candidate events in
// the window's context (with the SpO2 channel, when there is one, for the
// desaturation criterion) and resp.Summarize per window. Volumes are in
// litres only under an absolute calibration; otherwise the litre columns
// stay empty with the reason.
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
	sp := cfg.findRole(rec, recording.RoleSpO2)
	if sp != nil && sp.RateHz > 0 && !math.IsInf(sp.RateHz, 0) {
		f.inputs = append(f.inputs, channelInput(sp, recording.RoleSpO2, withData))
	} else {
		sp = nil
	}
	rate := rc.RateHz
	bc := cfg.BreathCalibration
	refs, refNote := vrefSpans(rec.Annotations, bc)
	f.batchFn = func(g window.Grid) ([]famResult, error) {
		n := min(len(rc.Samples), len(ab.Samples))
		if n == 0 {
			return nil, nil
		}
		cal := resolveCalibration(rc.Samples[:n], ab.Samples[:n], rate, bc, refs, refNote)
		r, err := resp.Detect(rc.Samples[:n], ab.Samples[:n], resp.Options{RateHz: rate, Calibration: cal.Calibration})
		if err != nil {
			return nil, err
		}
		var ox spo2Src
		if sp != nil {
			ox = spo2Src{x: sp.Samples, rate: sp.RateHz, n: len(sp.Samples)}
		}
		why := cal.reason()
		on := onsets(r.Breaths)
		it, err := g.Events(on, math.Max(float64(n)/rate, lastTime(on)), r.Gaps)
		if err != nil {
			return nil, err
		}
		var out []famResult
		for w := range it {
			out = append(out, f.breathWindow(w, r.Breaths[w.Lo:w.Hi], r.Breaths, r.Pauses, r.Gaps, r.Calibration, why, ox))
		}
		return out, nil
	}
	f.newDriver = func(g window.Grid) (driver, error) {
		es, err := window.NewEventStream(g, func(b resp.Breath) float64 { return math.Max(b.Onset, 0) })
		if err != nil {
			return nil, err
		}
		d := &breathDriver{f: f, es: es, rate: rate, last: math.MinInt64, nanStart: -1, bc: bc, refs: refs, refNote: refNote}
		if sp != nil {
			d.ox = &spo2Src{rate: sp.RateHz}
		}
		if needsData(bc) {
			_, hi, _ := calSpan(bc, refs)
			if hi > MaxStreamCalibrationS {
				return nil, fmt.Errorf("features: stream: calibration spans end at %v s, after %v s (give known weights, or use Extract): %w", hi, MaxStreamCalibrationS, ErrConfig)
			}
			d.calEndN = int(math.Ceil((hi + CalibrationPadS) * rate))
			return d, nil
		}
		if err := d.start(resolveCalibration(nil, nil, rate, bc, refs, refNote)); err != nil {
			return nil, err
		}
		return d, nil
	}
	return f
}

// BreathCalibrationResult is the band calibration the breathing family
// resolved for one recording: what a sidecar needs to reproduce the litre
// (or AU) columns.
type BreathCalibrationResult struct {
	// Calibration holds the weights applied (method, litres or not, number
	// of reference breaths, residual of the fit in L, caveat). Method is
	// "none" when no weights were applied.
	Calibration resp.Calibration `json:"calibration"`
	// Requested names what the configuration asked for: "none",
	// "weights", "qdc", "vref" or "qdc+vref".
	Requested string `json:"requested"`
	// QDCBreaths is the number of breaths QDC used (0 without QDC).
	QDCBreaths int `json:"qdc_breaths,omitempty"`
	// VrefAnnotated is the number of reference-breath annotations found;
	// VrefMatched of them were matched to a clean detected breath.
	VrefAnnotated int `json:"vref_annotated,omitempty"`
	VrefMatched   int `json:"vref_matched,omitempty"`
	// Note says why the calibration differs from the one requested, or
	// what else the user should know; empty when nothing.
	Note string `json:"note,omitempty"`
}

// String is a one-line account of the calibration, as the sidecar notes
// carry it.
func (r BreathCalibrationResult) String() string {
	c := r.Calibration
	s := fmt.Sprintf("breathing calibration: requested %s, applied %s", r.Requested, c.Method)
	if c.Method != "none" {
		s += fmt.Sprintf(" (rib_weight %.6g, abd_weight %.6g, volumes in %s)", c.RibWeight, c.AbdWeight, c.VolumeUnit())
	}
	if r.QDCBreaths > 0 {
		s += fmt.Sprintf("; QDC on %d breaths", r.QDCBreaths)
	}
	if r.VrefAnnotated > 0 || r.Requested == "vref" || r.Requested == "qdc+vref" {
		s += fmt.Sprintf("; %d reference breaths annotated, %d matched", r.VrefAnnotated, r.VrefMatched)
	}
	if c.Litres && c.References > 0 {
		s += fmt.Sprintf("; fit on %d breaths, RMS residual %.3g L", c.References, c.ResidualL)
	}
	if r.Note != "" {
		s += "; " + r.Note
	}
	if c.Caveat != "" {
		s += "; caveat: " + c.Caveat
	}
	return s
}

// reason is what the litre columns say when they stay empty although the
// AU columns are computed; "" keeps resp's own reason (no calibration was
// asked for).
func (r BreathCalibrationResult) reason() string {
	if r.Calibration.Litres {
		return ""
	}
	s := ""
	if r.Note != "" {
		s = r.Note + "; "
	}
	switch r.Calibration.Method {
	case "qdc":
		return s + "relative (QDC) calibration only: volumes in arbitrary units (see the _au columns); " + resp.QDCCaveat
	case "none", "":
		if s == "" {
			return ""
		}
	default:
		return s + "weights (" + r.Calibration.Method + ") not in litres: volumes in arbitrary units (see the _au columns)"
	}
	return s + "volumes in arbitrary units (see the _au columns)"
}

// ResolveBreathCalibration returns the band calibration Extract applies to
// rec under cfg (the same function the Stream runs on the same samples), so
// a caller can record it beside the table. Without both bands it returns
// the requested method with Method "none" and a note.
func ResolveBreathCalibration(rec *recording.Recording, cfg Config) (BreathCalibrationResult, error) {
	if rec == nil {
		return BreathCalibrationResult{}, fmt.Errorf("features: nil recording: %w", ErrInput)
	}
	cfg, err := cfg.withDefaults()
	if err != nil {
		return BreathCalibrationResult{}, err
	}
	bc := cfg.BreathCalibration
	refs, refNote := vrefSpans(rec.Annotations, bc)
	rc := cfg.findRole(rec, recording.RoleRibCage)
	ab := cfg.findRole(rec, recording.RoleAbdomen)
	if rc == nil || ab == nil || rc.RateHz != ab.RateHz || !(rc.RateHz > 0) {
		r := BreathCalibrationResult{Calibration: resp.Calibration{Method: "none"}, Requested: requested(bc), Note: "no usable pair of bands"}
		return r, nil
	}
	n := min(len(rc.Samples), len(ab.Samples))
	return resolveCalibration(rc.Samples[:n], ab.Samples[:n], rc.RateHz, bc, refs, refNote), nil
}

func requested(bc BreathCalibration) string {
	switch {
	case bc.Weights != nil:
		return "weights"
	case bc.QDC != nil && bc.VrefAnnotations:
		return "qdc+vref"
	case bc.QDC != nil:
		return "qdc"
	case bc.VrefAnnotations:
		return "vref"
	}
	return "none"
}

// needsData reports whether the calibration is computed from the samples.
func needsData(bc BreathCalibration) bool {
	return bc.Weights == nil && (bc.QDC != nil || bc.VrefAnnotations)
}

// vrefSpan is one annotated reference breath.
type vrefSpan struct {
	start, end float64 // s from the recording start
	volumeL    float64
}

var vrefPattern = regexp.MustCompile(`(?i)^\s*vref\s*=\s*([0-9]*\.?[0-9]+(?:e[-+]?[0-9]+)?)\s*(l|ml)?\s*$`)

// IsReferenceBreathMark reports whether an annotation marks a reference
// breath of the band calibration ("vref=0.80 L", see BreathCalibration).
// Such marks calibrate the bands; they do not describe the subject, so they
// are neither label columns nor report segments.
func IsReferenceBreathMark(a recording.Annotation) bool {
	return vrefPattern.MatchString(a.Text) || vrefPattern.MatchString(a.Code)
}

// vrefSpans returns the reference-breath annotations (sorted by time) and
// a note on those that could not be used.
func vrefSpans(anns []recording.Annotation, bc BreathCalibration) ([]vrefSpan, string) {
	if !bc.VrefAnnotations || bc.Weights != nil {
		return nil, ""
	}
	var out []vrefSpan
	bad := 0
	for _, a := range anns {
		m := vrefPattern.FindStringSubmatch(a.Text)
		if m == nil {
			m = vrefPattern.FindStringSubmatch(a.Code)
		}
		if m == nil {
			continue
		}
		v, err := strconv.ParseFloat(m[1], 64)
		if strings.EqualFold(m[2], "ml") {
			v /= 1000
		}
		if err != nil || !(v > 0) || v > 10 || !(a.Duration > 0) || !isFinite(a.Time) || !isFinite(a.Duration) || a.Time < 0 {
			bad++
			continue
		}
		out = append(out, vrefSpan{start: a.Time, end: a.Time + a.Duration, volumeL: v})
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].start < out[j].start })
	note := ""
	if bad > 0 {
		note = fmt.Sprintf("%d reference annotations unusable (no duration, or volume not in 0..10 L)", bad)
	}
	return out, note
}

// calSpan returns the span the calibration reads (s, before padding).
func calSpan(bc BreathCalibration, refs []vrefSpan) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	if bc.QDC != nil {
		lo, hi = bc.QDC.Start, bc.QDC.End
	}
	for _, r := range refs {
		lo, hi = math.Min(lo, r.start), math.Max(hi, r.end)
	}
	return lo, hi, hi > lo
}

// resolveCalibration is the one calibration core of both drivers. It reads
// only the samples of [lo-CalibrationPadS, hi+CalibrationPadS) clipped to
// the data given, so the Stream, calling it once that span has been pushed
// (or at Close with everything), gets what Extract gets.
func resolveCalibration(rib, abd []float64, rate float64, bc BreathCalibration, refs []vrefSpan, refNote string) (res BreathCalibrationResult) {
	res = BreathCalibrationResult{Calibration: resp.Calibration{Method: "none"}, Requested: requested(bc), VrefAnnotated: len(refs)}
	if bc.Weights != nil {
		res.Calibration = *bc.Weights
		return res
	}
	if !needsData(bc) {
		return res
	}
	notes := []string{}
	if refNote != "" {
		notes = append(notes, refNote)
	}
	defer func() { res.Note = strings.Join(notes, "; ") }()
	lo, hi, ok := calSpan(bc, refs)
	if !ok {
		notes = append(notes, "no reference-breath annotations (vref=<volume> L with a duration) found: no calibration")
		return res
	}
	n := min(len(rib), len(abd))
	i0 := max(0, int(math.Floor((lo-CalibrationPadS)*rate)))
	i1 := min(n, int(math.Ceil((hi+CalibrationPadS)*rate)))
	if i1-i0 < int(4*rate) {
		notes = append(notes, fmt.Sprintf("calibration span %.1f..%.1f s holds too little band signal: no calibration", lo, hi))
		return res
	}
	det, err := resp.Detect(rib[i0:i1], abd[i0:i1], resp.Options{RateHz: rate, StartS: float64(i0) / rate})
	if err != nil {
		notes = append(notes, "calibration breath detection: "+err.Error()+": no calibration")
		return res
	}
	var qdc *resp.QDCResult
	if q := bc.QDC; q != nil {
		var rr, aa []float64
		for _, b := range det.Breaths {
			if b.Quality == 0 && b.Onset >= q.Start && b.EndExp <= q.End {
				rr = append(rr, b.RibRise)
				aa = append(aa, b.AbdRise)
			}
		}
		r, err := resp.QDCFromRises(rr, aa, bc.QDCOptions)
		res.QDCBreaths = r.Used
		if err != nil || !(r.K > 0) || !isFinite(r.K) {
			if err == nil {
				err = fmt.Errorf("rib-cage weight %v", r.K)
			}
			notes = append(notes, fmt.Sprintf("QDC over %.1f..%.1f s failed (%v)", q.Start, q.End, err))
		} else {
			qdc = &r
			res.Calibration = r.Calibration()
		}
	}
	if !bc.VrefAnnotations {
		return res
	}
	var rs []resp.Reference
	used := map[int]bool{}
	for _, v := range refs {
		best, bestOv := -1, 0.0
		for k, b := range det.Breaths {
			if b.Quality != 0 || used[k] {
				continue
			}
			ov := math.Min(b.EndExp, v.end) - math.Max(b.Onset, v.start)
			if ov > bestOv {
				best, bestOv = k, ov
			}
		}
		if best < 0 {
			continue
		}
		b := det.Breaths[best]
		if bestOv < 0.5*math.Min(b.EndExp-b.Onset, v.end-v.start) {
			continue
		}
		used[best] = true
		rs = append(rs, resp.Reference{RibRise: b.RibRise, AbdRise: b.AbdRise, VolumeL: v.volumeL})
	}
	res.VrefMatched = len(rs)
	var cal resp.Calibration
	if qdc != nil {
		cal, err = resp.CalibrateAbsolute(qdc.K, rs)
	} else {
		cal, err = resp.FitWeights(rs)
	}
	if err != nil {
		need := fmt.Sprintf("%d", resp.MinTwoWeightRefs)
		if qdc == nil {
			need += " (or 2 with a QDC interval)"
		}
		notes = append(notes, fmt.Sprintf("no absolute calibration: %d of %d reference breaths matched, need %s (%v)", len(rs), len(refs), need, err))
		return res
	}
	res.Calibration = cal
	return res
}

// spo2Src is the SpO2 channel (whole in batch, a trimmed buffer live): x
// holds samples off..off+len(x) of the n pushed so far.
type spo2Src struct {
	x      []float64
	off, n int
	rate   float64
	closed bool
}

// spo2PadS is the SpO2 taken beyond a window's event context on each side:
// resp's desaturation baseline (30 s before an event) and nadir search (30 s
// after it) plus a breath (resp.EventOptions.DesatBaselineS, DesatLagS).
const spo2PadS = 60

// span returns the global sample range of SpO2 that the window's events see.
func (o *spo2Src) span(lo, hi float64) (i0, i1 int) {
	i0 = max(0, int(math.Floor((lo-spo2PadS)*o.rate)))
	i1 = int(math.Ceil((hi + spo2PadS) * o.rate))
	return i0, i1
}

// events returns the event options with the SpO2 samples of [lo, hi)
// widened by spo2PadS: the same slice in both drivers.
func (o *spo2Src) events(lo, hi float64) resp.EventOptions {
	if o == nil || o.rate == 0 {
		return resp.EventOptions{}
	}
	i0, i1 := o.span(lo, hi)
	i1 = min(i1, o.n)
	if i1 <= i0 {
		return resp.EventOptions{}
	}
	return resp.EventOptions{SpO2: o.x[i0-o.off : i1-o.off], SpO2RateHz: o.rate, SpO2StartS: float64(i0) / o.rate}
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
func (f *family) breathWindow(w window.Window, in []resp.Breath, breaths []resp.Breath, pauses []resp.Excursion, gaps []window.Interval, cal resp.Calibration, calWhy string, ox spo2Src) famResult {
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
		ev, err := resp.DetectEvents(ctx, ox.events(lo, hi))
		if err != nil {
			return "events: " + err.Error()
		}
		s := resp.Summarize(w, in, ev, resp.SummaryOptions{SpO2: ox.rate > 0})
		v, why := s.Values(), s.Reasons()
		copy(out.v, v)
		if calWhy != "" {
			// Litre columns empty while their AU twins are computed: the
			// calibration is why.
			names := resp.SummaryColumns()
			for i, n := range names {
				if au, ok := litreTwin[n]; ok && math.IsNaN(v[i]) {
					if x, _ := s.Value(au); !math.IsNaN(x) {
						why[i] = calWhy
					}
				}
			}
		}
		return joinReasons(resp.SummaryColumns(), why)
	})
}

// litreTwin maps each litre column of resp.Summary to its AU twin.
var litreTwin = map[string]string{"vt_l": "vt_au", "vt_iqr_l": "vt_iqr_au", "ve_l_min": "ve_au_min", "insp_flow_l_s": "insp_flow_au_s"}

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
// window is computed once breathLookaheadS more have passed (and, with an
// SpO2 channel, once SpO2 has been pushed spo2PadS past the window's event
// context).
//
// A calibration from the recording (QDC interval, reference breaths) is
// resolved when the bands have been pushed to CalibrationPadS past the last
// calibration span (or at close): until then the band samples are held
// (at most MaxStreamCalibrationS of them) and then replayed to resp.Stream
// with the resolved weights, so every breath uses the weights batch uses.
type breathDriver struct {
	f    *family
	rs   *resp.Stream // nil until the calibration is resolved
	es   *window.Stream[resp.Breath]
	rate float64

	bc      BreathCalibration
	refs    []vrefSpan
	refNote string
	calEndN int // band samples needed to resolve the calibration
	cal     BreathCalibrationResult
	why     string
	ox      *spo2Src // nil without an SpO2 channel

	buf      [2][]float64
	n        int // samples pushed to resp
	pending  []resp.Breath
	pgaps    []window.Interval
	known    float64
	lastSafe float64

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

// start creates the breath stream with the resolved calibration.
func (d *breathDriver) start(cal BreathCalibrationResult) error {
	s, err := resp.NewStream(resp.Options{RateHz: d.rate, Calibration: cal.Calibration})
	if err != nil {
		return err
	}
	d.rs, d.cal, d.why = s, cal, cal.reason()
	return nil
}

func (d *breathDriver) push(in int, x []float64, _ []window.Interval) ([]famResult, error) {
	if in == 2 { // SpO2
		d.ox.x = append(d.ox.x, x...)
		d.ox.n += len(x)
		if d.rs == nil {
			return nil, nil
		}
		return d.feed(d.lastSafe, false)
	}
	// Gaps reach resp as NaN samples (its own gap detection); declared
	// channel gaps are not passed, in batch as in streaming.
	d.buf[in] = append(d.buf[in], x...)
	if d.rs == nil {
		n := min(len(d.buf[0]), len(d.buf[1]))
		if n < d.calEndN {
			return nil, nil
		}
		if err := d.start(resolveCalibration(d.buf[0][:n], d.buf[1][:n], d.rate, d.bc, d.refs, d.refNote)); err != nil {
			return nil, err
		}
	}
	return d.forward()
}

// forward passes the samples both bands have to resp and feeds the engine.
func (d *breathDriver) forward() ([]famResult, error) {
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
	d.lastSafe = d.safe()
	return d.feed(d.lastSafe, false)
}

// oxReady reports whether the SpO2 a window's events read has arrived.
func (d *breathDriver) oxReady(w window.Window) bool {
	if d.ox == nil || d.ox.closed {
		return true
	}
	_, i1 := d.ox.span(w.Start-breathLookbackS, w.End+breathLookaheadS)
	return d.ox.n >= i1
}

func (d *breathDriver) oxSrc() spo2Src {
	if d.ox == nil {
		return spo2Src{}
	}
	return *d.ox
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
		if !final && (h.w.End+breathLookaheadS > t || !d.oxReady(h.w)) {
			break
		}
		out = append(out, d.f.breathWindow(h.w, h.in, d.breaths, d.pauses, d.gaps, d.rs.Calibration(), d.why, d.oxSrc()))
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
	if o := d.ox; o != nil {
		if k := int(math.Floor((from - 1 - spo2PadS) * o.rate)); k > o.off {
			k = min(k, o.n)
			o.x = o.x[k-o.off:]
			o.off = k
		}
	}
}

func (d *breathDriver) close() ([]famResult, error) {
	if d.ox != nil {
		d.ox.closed = true
	}
	var early []famResult
	if d.rs == nil {
		n := min(len(d.buf[0]), len(d.buf[1]))
		if err := d.start(resolveCalibration(d.buf[0][:n], d.buf[1][:n], d.rate, d.bc, d.refs, d.refNote)); err != nil {
			return nil, err
		}
		var err error
		if early, err = d.forward(); err != nil {
			return nil, err
		}
	}
	if err := d.rs.Close(); err != nil {
		return nil, err
	}
	d.drain()
	out, err := d.feed(math.Inf(1), false)
	if err != nil {
		return nil, err
	}
	out = append(early, out...)
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
