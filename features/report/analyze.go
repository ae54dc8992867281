package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/hrv"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// Options adjusts Analyze. The zero value means the documented defaults.
type Options struct {
	// Features configures the feature table the per-window figures are drawn
	// from (features.Extract; its zero value means its defaults).
	Features features.Config
	// ExcerptS is the length of the breathing-trace excerpt, s; 180 when
	// zero. The excerpt is centred on the longest candidate event, else on
	// the longest pause between breaths when one lasts 10 s (the AASM
	// minimum event duration, Berry et al. 2012) or more, else it starts
	// at the first breath.
	ExcerptS float64
	// BreathCalibration is the band calibration the feature table applied
	// (features.ResolveBreathCalibration); when nil, Analyze resolves it
	// from Features with the same function, so the breathing trace and its
	// breaths use the table's weights. When it applies no weights (method
	// "none") the report falls back to QDC per posture in arbitrary units.
	BreathCalibration *features.BreathCalibrationResult
}

func (o Options) withDefaults() Options {
	if o.ExcerptS == 0 {
		o.ExcerptS = 180
	}
	return o
}

// Analysis is what Analyze found in a recording: the report's Input and the
// event lists behind it, for callers that want numbers (the demo's summary).
type Analysis struct {
	Input *Input
	// RPeaksS are the detected R-peak times, s from the start.
	RPeaksS []float64
	// ECGGaps are the spans of unusable ECG.
	ECGGaps []window.Interval
	// NN is the cleaned NN series of the whole recording.
	NN ecg.NN
	// Breaths are the detected breaths (resp.Detect on the band sum with
	// the table's calibration, or QDC weights per posture when the table
	// has none; see BreathCalibration).
	Breaths []resp.Breath
	// BreathCalibration is the calibration the table resolved; the
	// breathing figure used it when its Calibration.Method is not "none".
	BreathCalibration features.BreathCalibrationResult
	// Events are the candidate apneas and hypopneas (resp.DetectEvents,
	// AASM amplitude and duration criteria on the band sum).
	Events []resp.Event
	// Table is the feature table of the recording (features.Extract), the
	// source of every per-window figure.
	Table *features.Table
	// Missing lists the modalities the recording lacks or that failed, with
	// the reason, in the order ECG, breathing, motion.
	Missing []string
}

// Analyze fills a report Input for rec: the feature table (features.Extract)
// gives every per-window figure (trends, activity, posture, steps, quality);
// the beat-level figures come from the modality packages (R-peaks by
// Pan-Tompkins for the tachogram and Poincare plot). A missing modality
// leaves its figures empty (they say so) and is listed in Analysis.Missing.
// Errors come only from the feature extraction itself.
func Analyze(rec *recording.Recording, opt Options) (*Analysis, error) {
	if rec == nil {
		return nil, fmt.Errorf("report: nil recording: %w", ErrInput)
	}
	opt = opt.withDefaults()
	in := &Input{Record: rec.Name, Duration: rec.Duration()}
	if !rec.Start.IsZero() {
		in.Start = rec.Start
	}
	a := &Analysis{Input: in}
	for _, c := range rec.Channels {
		in.Facts = append(in.Facts, Fact{Name: "channel " + c.Name, Value: fmt.Sprintf("%s, %g Hz, %s, %d samples", c.Role, c.RateHz, unitOr(c.Unit), len(c.Samples))})
	}
	in.Labels, in.Segments = labelSpans(rec)

	if err := a.heart(rec); err != nil {
		a.Missing = append(a.Missing, "ECG: "+err.Error())
	}
	t, err := features.Extract(rec, opt.Features)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	a.Table = t
	a.fromTable(opt.Features)
	if err := a.breathing(rec, opt); err != nil {
		a.Missing = append(a.Missing, "breaths: "+err.Error())
	}
	a.segmentStats()
	for _, m := range a.Missing {
		in.Facts = append(in.Facts, Fact{Name: "not analysed", Value: m})
	}
	return a, nil
}

func unitOr(u string) string {
	if u == "" {
		return "no unit"
	}
	return u
}

// labelSpans returns the annotations with a duration (segment labels,
// events) as spans, and one SegmentStat per label. Reference-breath marks of
// the band calibration are not segments.
func labelSpans(rec *recording.Recording) ([]Span, []SegmentStat) {
	var spans []Span
	var segs []SegmentStat
	for _, an := range rec.Annotations {
		if an.Duration > 0 && an.Text != "" && !features.IsReferenceBreathMark(an) {
			spans = append(spans, Span{Start: an.Time, End: an.Time + an.Duration, Label: an.Text})
			segs = append(segs, SegmentStat{Label: an.Text, Start: an.Time, End: an.Time + an.Duration})
		}
	}
	return spans, segs
}

// heart detects R-peaks on the first ECG channel.
func (a *Analysis) heart(rec *recording.Recording) error {
	ch, ok := rec.Channel(recording.RoleECG)
	if !ok {
		return fmt.Errorf("no ECG channel")
	}
	res, err := ecg.Detect(ch.Samples, ch.RateHz, ecg.Options{})
	if err != nil {
		return err
	}
	a.ECGGaps = res.Gaps
	a.RPeaksS = make([]float64, len(res.Beats))
	for i, b := range res.Beats {
		a.RPeaksS[i] = b.Time
	}
	in := a.Input
	for _, g := range res.Gaps {
		in.Beats.Gaps = append(in.Beats.Gaps, Span{Start: g.Start, End: g.End, Label: "no ECG"})
	}
	// NN series: the whole record cleaned once for the beat-level figures
	// (the table's HRV family cleans each window on its own).
	nn, err := ecg.CleanRR(a.RPeaksS, res.Gaps, ecg.NNOptions{})
	if err != nil {
		return err
	}
	a.NN = nn
	in.Beats.TimeS, in.Beats.RRms = nn.TimeS, nn.Ms
	in.Beats.Corrected = make([]bool, len(nn.Fix))
	for i, f := range nn.Fix {
		in.Beats.Corrected[i] = f != ecg.FixNone
	}
	c := nn.Counts
	in.Facts = append(in.Facts, Fact{Name: "NN cleaning", Value: fmt.Sprintf("%d intervals; %d ectopic beats, %d missed, %d extra, %d long, %d short, %d out of range (Lipponen and Tarvainen 2019)",
		c.Intervals, c.Ectopic, c.Missed, c.Extra, c.Long, c.Short, c.OutOfRange)})
	a.spectrum()
	in.Facts = append(in.Facts, Fact{Name: "R-peaks detected", Value: fmt.Sprintf("%d (Pan-Tompkins)", len(a.RPeaksS))})
	return nil
}

// psdWindowS is the short-term HRV recording length: 5 min (Task Force of
// ESC/NASPE 1996).
const psdWindowS = 300

// spectrum estimates the HRV spectrum (hrv.Spectrum, Welch by default) over
// the 5-min stretch with the lowest mean heart rate among those whose
// intervals are at least 95 % uncorrected and span at least 95 % of the
// window: the most resting, cleanest short-term recording, where the
// Task Force bands are read as usual. Candidate windows start every 30 s.
func (a *Analysis) spectrum() {
	nn := a.NN
	if len(nn.TimeS) < 4 {
		return
	}
	bestLo, bestHi, bestHR := -1, -1, math.Inf(1)
	end := nn.TimeS[len(nn.TimeS)-1]
	lo := 0
	for t0 := nn.TimeS[0]; t0+psdWindowS <= end; t0 += 30 {
		for lo < len(nn.TimeS) && nn.TimeS[lo] < t0 {
			lo++
		}
		hi := sort.SearchFloat64s(nn.TimeS, t0+psdWindowS)
		if hi-lo < 4 {
			continue
		}
		var sum float64
		for _, v := range nn.Ms[lo:hi] {
			sum += v
		}
		if sum < 0.95*psdWindowS*1000 || nn.CorrectedFraction(lo, hi) > 0.05 {
			continue
		}
		if hr := 60000 / (sum / float64(hi-lo)); hr < bestHR {
			bestLo, bestHi, bestHR = lo, hi, hr
		}
	}
	if bestLo < 0 {
		return
	}
	psd, err := hrv.Spectrum(nn.Ms[bestLo:bestHi], nn.TimeS[bestLo:bestHi], hrv.SpectrumOptions{})
	if err != nil {
		return
	}
	b := hrv.TaskForceBands
	sp := &a.Input.Spectrum
	sp.FreqHz, sp.PowerMs2 = psd.FreqHz, psd.Power
	sp.Bands = []Span{{Start: b.VLF.Lo, End: b.VLF.Hi, Label: "VLF"}, {Start: b.LF.Lo, End: b.LF.Hi, Label: "LF"}, {Start: b.HF.Lo, End: b.HF.Hi, Label: "HF"}}
	sp.Method = fmt.Sprintf("%s periodogram (hrv.Spectrum defaults), mean HR %.1f beats/min", psd.Estimator, bestHR)
	sp.WindowS = [2]float64{nn.TimeS[bestLo], nn.TimeS[bestHi-1]}
	lf, hf := psd.BandPower(b.LF), psd.BandPower(b.HF)
	sp.BandPower = []Fact{
		{Name: "VLF", Value: fmt.Sprintf("%.0f ms²", psd.BandPower(b.VLF))},
		{Name: "LF", Value: fmt.Sprintf("%.0f ms²", lf)},
		{Name: "HF", Value: fmt.Sprintf("%.0f ms²", hf)},
		{Name: "LF/HF", Value: fmt.Sprintf("%.2f", lf/hf)},
	}
}

// qdcSpanS is the stretch of natural breathing a relative calibration is
// taken from: 5 minutes in one posture (Sackner et al. 1989 used about
// 5 min of natural breathing in one posture).
const qdcSpanS = 300

// postureRuns splits [0, end) into runs of one posture from the table's
// per-window posture (unknown windows join the run they fall in); runs
// shorter than qdcSpanS join the run before them (or after, at the start).
// Without posture there is one run.
func (a *Analysis) postureRuns(end float64) []Span {
	act := a.Input.Activity
	var runs []Span
	for i, p := range act.Posture {
		if p == "" {
			continue
		}
		t0 := math.Max(0, act.TimeS[i])
		if n := len(runs); n > 0 && runs[n-1].Label == p {
			continue
		} else if n > 0 {
			runs[n-1].End = t0
		} else {
			t0 = 0
		}
		runs = append(runs, Span{Start: t0, End: end, Label: p})
	}
	if len(runs) == 0 {
		return []Span{{Start: 0, End: end}}
	}
	var out []Span
	for _, r := range runs {
		switch {
		case r.End-r.Start >= qdcSpanS || len(out) == 0:
			if n := len(out); n > 0 && out[n-1].End-out[n-1].Start < qdcSpanS {
				out[n-1].End, out[n-1].Label = r.End, r.Label // a short first run joins the next
				continue
			}
			out = append(out, r)
		default:
			out[len(out)-1].End = r.End
		}
	}
	return out
}

// roleOf returns the first channel of role r after Config.Roles overrides
// (as the feature table finds its channels), or nil.
func roleOf(rec *recording.Recording, cfg features.Config, r recording.Role) *recording.Channel {
	for i := range rec.Channels {
		ch := &rec.Channels[i]
		cr := ch.Role
		if o, ok := cfg.Roles[ch.Name]; ok {
			cr = o
		}
		if cr == r {
			return ch
		}
	}
	return nil
}

// bandsOf returns the rib-cage and abdominal bands as the feature table
// finds them.
func bandsOf(rec *recording.Recording, cfg features.Config) (rc, ab *recording.Channel) {
	return roleOf(rec, cfg, recording.RoleRibCage), roleOf(rec, cfg, recording.RoleAbdomen)
}

// breathing detects the breaths behind the breathing trace, the candidate
// events and the per-segment breathing rates.
//
// With a calibration that applies weights (the table's, resolved by
// features.ResolveBreathCalibration from the same Config, or
// Options.BreathCalibration), breaths are detected once over the whole
// recording with those weights and the same resp.Options the breathing
// family uses (rate and calibration, other fields at their defaults), so
// the trace and its breaths match the table and are in litres when the
// calibration is absolute. The features API does not expose the breaths
// it detected, so they are detected again here, with the same options.
//
// Without one (the table's volumes are in arbitrary units and uncalibrated)
// the fallback is QDC per posture: each run of one posture gets its own
// QDC weight (QDC is posture-specific, resp.QDCCaveat) from its first
// qdcSpanS, the previous run's weight or equal weights when QDC is
// undefined there.
//
// Candidate events are detected on all the breaths together
// (resp.DetectEvents defaults, with the SpO2 channel when there is one, as
// the breathing family does; it detects them per window context), and an excerpt of the weighted sum is kept
// for the breathing-trace figure.
func (a *Analysis) breathing(rec *recording.Recording, opt Options) error {
	rc, ab := bandsOf(rec, opt.Features)
	if rc == nil || ab == nil {
		return fmt.Errorf("needs both a rib-cage and an abdominal band")
	}
	if rc.RateHz != ab.RateHz {
		return fmt.Errorf("bands at different rates (%g, %g Hz)", rc.RateHz, ab.RateHz)
	}
	fs := rc.RateHz
	n := min(len(rc.Samples), len(ab.Samples))
	var bcr features.BreathCalibrationResult
	if opt.BreathCalibration != nil {
		bcr = *opt.BreathCalibration
	} else {
		r, err := features.ResolveBreathCalibration(rec, opt.Features)
		if err != nil {
			return err
		}
		bcr = r
	}
	a.BreathCalibration = bcr
	var (
		res       resp.Result
		note      string
		traceNote string
		cal       resp.Calibration
		runs      []Span
		weights   [][2]float64 // per run, for the excerpt
	)
	if c := bcr.Calibration; c.Method != "" && c.Method != "none" {
		cal = c
		r, err := resp.Detect(rc.Samples[:n], ab.Samples[:n], resp.Options{RateHz: fs, Calibration: cal})
		if err != nil {
			return err
		}
		res = r
		runs = []Span{{Start: 0, End: float64(n) / fs}}
		weights = [][2]float64{{cal.RibWeight, cal.AbdWeight}}
		note = fmt.Sprintf("the feature table's calibration (%s: %s, rib weight %.4g, abdominal weight %.4g, volumes in %s)",
			bcr.Requested, cal.Method, cal.RibWeight, cal.AbdWeight, cal.VolumeUnit())
		if cal.Caveat != "" {
			note += "; " + cal.Caveat
		}
		traceNote = fmt.Sprintf(" Band sum weighted by the feature table's calibration (%s), unfiltered; volumes in %s.", cal.Method, cal.VolumeUnit())
	} else {
		var err error
		res, cal, runs, weights, note, err = a.breathingQDC(rc, ab, n, bcr)
		if err != nil {
			return err
		}
		traceNote = " Band sum weighted by its posture's QDC weight (fallback: the feature table has no calibration), unfiltered; volumes in arbitrary units."
	}
	a.Breaths = res.Breaths
	in := a.Input
	// Events as the breathing family finds them: resp.EventOptions
	// defaults, with the SpO2 channel (the first one after Config.Roles
	// overrides) for the desaturation criterion when there is one.
	eopt := resp.EventOptions{}
	spo2 := "no SpO2"
	if sp := roleOf(rec, opt.Features, recording.RoleSpO2); sp != nil && sp.RateHz > 0 && !math.IsInf(sp.RateHz, 0) && len(sp.Samples) > 0 {
		eopt.SpO2, eopt.SpO2RateHz = sp.Samples, sp.RateHz
		spo2 = "SpO2 for the desaturation criterion, no arousal"
	}
	if ev, err := resp.DetectEvents(res, eopt); err != nil {
		a.Missing = append(a.Missing, "respiratory events: "+err.Error())
	} else {
		a.Events = ev
		for _, e := range ev {
			in.Breath.Events = append(in.Breath.Events, Span{Start: e.Start, End: e.End, Label: e.Class.String() + " " + e.Kind.String()})
		}
		in.Facts = append(in.Facts, Fact{Name: "candidate events", Value: fmt.Sprintf("%d apnea/hypopnea candidates (amplitude and duration criteria of Berry et al. 2012 on the band sum; %s, so not scored events)", len(ev), spo2)})
	}
	in.Facts = append(in.Facts, Fact{Name: "breaths detected", Value: fmt.Sprintf("%d; %s", len(res.Breaths), note)})
	// Excerpt: see Options.ExcerptS.
	centre, longest := 0.0, 0.0
	for i := 1; i < len(res.Breaths); i++ {
		if d := res.Breaths[i].Onset - res.Breaths[i-1].EndExp; d > longest {
			longest, centre = d, (res.Breaths[i].Onset+res.Breaths[i-1].EndExp)/2
		}
	}
	t0 := centre - opt.ExcerptS/2
	why := fmt.Sprintf("Excerpt centred on the longest pause between breaths (%.0f s).", longest)
	var ev *resp.Event
	for i := range a.Events {
		if ev == nil || a.Events[i].DurationS > ev.DurationS {
			ev = &a.Events[i]
		}
	}
	switch {
	case ev != nil:
		t0 = (ev.Start+ev.End)/2 - opt.ExcerptS/2
		why = fmt.Sprintf("Excerpt centred on the longest candidate event (%s %s, %.0f s).", ev.Class, ev.Kind, ev.DurationS)
	case len(res.Breaths) > 0 && longest < 10:
		t0 = res.Breaths[0].Onset
		why = "Excerpt from the first breath (no pause of 10 s or more)."
	}
	t0 = math.Max(0, math.Min(t0, float64(n)/rc.RateHz-opt.ExcerptS))
	i0, i1 := int(t0*rc.RateHz), min(n, int((t0+opt.ExcerptS)*rc.RateHz))
	b := &in.Breath
	b.T0S, b.RateHz, b.Unit, b.Note = float64(i0)/rc.RateHz, rc.RateHz, cal.VolumeUnit(), why+traceNote
	k := 0
	for i := i0; i < i1; i++ {
		t := float64(i) / fs
		for k+1 < len(runs) && t >= runs[k].End {
			k++
		}
		w := weights[k]
		b.Samples = append(b.Samples, w[0]*rc.Samples[i]+w[1]*ab.Samples[i])
	}
	for _, br := range res.Breaths {
		b.Peaks = append(b.Peaks, br.EndInsp)
		b.Troughs = append(b.Troughs, br.EndExp)
	}
	return nil
}

// fromTable fills the per-window parts of the report from the feature
// table: activity, posture and steps per row, and each family's quality.
func (a *Analysis) fromTable(cfg features.Config) {
	t, in := a.Table, a.Input
	step := cfg.Step
	if step == 0 {
		step = features.DefaultStep
	}
	stepS := step.Seconds()
	times := make([]float64, len(t.Rows))
	for i, r := range t.Rows {
		times[i] = r.Offset
	}
	// Activity: the window ending at each row time; drawn from its start.
	if t.Col("enmo_mg") >= 0 {
		act := &in.Activity
		win := cfg.ActivityWindow
		if win == 0 {
			win = features.DefaultActivityWindow
		}
		act.EpochS = win.Seconds()
		for _, x := range times {
			act.TimeS = append(act.TimeS, x-act.EpochS)
		}
		act.ENMOmg, act.MADmg, act.Steps = t.Float("enmo_mg"), t.Float("mad_mg"), t.Float("n_steps")
		for _, p := range t.Strings("posture") {
			if p == "unknown" {
				p = ""
			}
			act.Posture = append(act.Posture, p)
		}
	}
	// Ventilation trends from the breathing family: litres when the table
	// has them (absolute calibration), arbitrary units otherwise.
	tr := &in.Trends
	tr.TimeS = times
	tr.RatePerMn = t.Float("resp_rate_per_min")
	tr.VE, tr.VEUnit = t.Float("ve_l_min"), "L/min"
	if absent(tr.VE) {
		tr.VE, tr.VEUnit = t.Float("ve_au_min"), "AU/min"
	}
	// Quality strip: one row per family, one cell per row step ending at
	// the row time. The score is the family's coverage times a share of
	// good evidence: for the ECG signal the agreement of its two beat
	// detectors (bSQI, Li, Mark and Clifford 2008), for HRV the share of
	// uncorrected intervals (1 - hrv_corrected_frac), for the bands the
	// share of clean breaths; the accelerometer's is its coverage. NaN
	// (grey) when the family is absent.
	// col reads a column, with ifNaN where it is empty or absent.
	col := func(name string, ifNaN float64) func(int) float64 {
		v := t.Float(name)
		return func(i int) float64 {
			if v == nil || !isFinite(v[i]) {
				return ifNaN
			}
			return v[i]
		}
	}
	bsqi, corr := col("ecg_bsqi_frac", 1), col("hrv_corrected_frac", 0)
	clean, all := t.Float("resp_n_clean_breaths"), t.Float("resp_n_breaths")
	for _, fam := range []struct {
		name, label string
		good        func(int) float64
	}{
		{features.FamilyECGQuality, QualityECG, bsqi},
		{features.FamilyHRV, QualityHRV, func(i int) float64 { return 1 - corr(i) }},
		{features.FamilyBreathing, QualityBreathing, func(i int) float64 {
			if clean != nil && all != nil && all[i] > 0 {
				return clean[i] / all[i]
			}
			return 1
		}},
		{features.FamilyActivity, QualityMotion, func(int) float64 { return 1 }},
	} {
		cov, why := t.Float(fam.name+"_coverage_frac"), t.Strings(fam.name+"_reason")
		if cov == nil {
			continue
		}
		if absent(cov) && len(why) > 0 {
			a.Missing = append(a.Missing, fam.name+": "+why[0])
		}
		q := QualityRow{Family: fam.label}
		for i, x := range times {
			q.TimeS, q.EndS, q.Score = append(q.TimeS, x-stepS), append(q.EndS, x), append(q.Score, cov[i]*fam.good(i))
		}
		in.Quality = append(in.Quality, q)
	}
	in.Facts = append(in.Facts, Fact{Name: "feature table", Value: fmt.Sprintf("%d rows every %v, %d columns", len(t.Rows), step, len(t.Columns))})
}

// segmentStats fills the per-label table with what was measured inside each
// labelled span.
func (a *Analysis) segmentStats() {
	in := a.Input
	for i := range in.Segments {
		s := &in.Segments[i]
		if hr := meanHR(in.Beats, s.Start, s.End); !math.IsNaN(hr) {
			s.Values = append(s.Values, Fact{Name: "mean HR (beats/min)", Value: fmt.Sprintf("%.1f", hr)})
		}
		if br := a.BreathRate(s.Start, s.End); !math.IsNaN(br) {
			s.Values = append(s.Values, Fact{Name: "breathing rate (breaths/min)", Value: fmt.Sprintf("%.1f", br)})
		}
		if a.Breaths != nil {
			n := 0
			for _, e := range a.Events {
				if e.Start < s.End && e.End > s.Start {
					n++
				}
			}
			s.Values = append(s.Values, Fact{Name: "candidate events overlapping", Value: fmt.Sprintf("%d", n)})
		}
		if n, ok := a.StepsIn(s.Start, s.End); ok {
			s.Values = append(s.Values, Fact{Name: "steps", Value: fmt.Sprintf("%.0f", n)})
		}
	}
}

// meanHR is 60000 over the mean interval (ms) of the intervals ending in
// [start, end), NaN when there are none.
func meanHR(b Beats, start, end float64) float64 {
	var sum float64
	n := 0
	for i, t := range b.TimeS {
		if t >= start && t < end && isFinite(b.RRms[i]) {
			sum += b.RRms[i]
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return 60000 / (sum / float64(n))
}

// MeanHR returns the mean heart rate (beats/min) of the analysed intervals
// ending in [start, end): 60000 over the mean interval in ms. NaN when none.
func (a *Analysis) MeanHR(start, end float64) float64 { return meanHR(a.Input.Beats, start, end) }

// StepsIn sums the table's n_steps over the activity windows that lie
// inside [start, end) (row time minus window length at or after start, row
// time at or before end). ok is false without an activity family.
func (a *Analysis) StepsIn(start, end float64) (n float64, ok bool) {
	act := a.Input.Activity
	if act.Steps == nil {
		return math.NaN(), false
	}
	for i, t0 := range act.TimeS {
		if t0 >= start && t0+act.EpochS <= end && isFinite(act.Steps[i]) {
			n += act.Steps[i]
		}
	}
	return n, true
}

// absent reports whether a family has no coverage value in any row (the
// extractor leaves coverage empty for a family whose channels are missing).
func absent(cov []float64) bool {
	for _, c := range cov {
		if !math.IsNaN(c) {
			return false
		}
	}
	return true
}

// BreathRate returns the mean breathing rate (breaths/min) of the detected
// breaths starting in [start, end): 60 over their mean Ttot. NaN when none.
func (a *Analysis) BreathRate(start, end float64) float64 {
	var sum float64
	n := 0
	for _, b := range a.Breaths {
		if b.Onset >= start && b.Onset < end && isFinite(b.TtotS) {
			sum += b.TtotS
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return 60 / (sum / float64(n))
}

// breathingQDC is the fallback of breathing when the table applies no
// calibration: breaths detected run by run of one posture, each with the
// QDC weight of its first qdcSpanS (see breathing).
func (a *Analysis) breathingQDC(rc, ab *recording.Channel, n int, bcr features.BreathCalibrationResult) (res resp.Result, cal resp.Calibration, runs []Span, weights [][2]float64, note string, err error) {
	fs := rc.RateHz
	var notes []string
	runs = a.postureRuns(float64(n) / fs)
	for _, r := range runs {
		i0, i1 := int(math.Round(r.Start*fs)), min(n, int(math.Round(r.End*fs)))
		if i1-i0 < int(10*fs) {
			weights = append(weights, [2]float64{math.NaN(), math.NaN()})
			continue
		}
		ropt := resp.Options{RateHz: fs, StartS: float64(i0) / fs}
		// QDC from the first qdcSpanS of the run.
		q0, q1 := i0, min(i1, i0+int(qdcSpanS*fs))
		qopt := resp.Options{RateHz: fs, StartS: float64(q0) / fs}
		what := "kept the previous weights"
		if qr, qerr := resp.QDC(rc.Samples[q0:q1], ab.Samples[q0:q1], qopt, resp.QDCOptions{}); qerr == nil && isFinite(qr.K) && qr.K > 0 {
			cal = qr.Calibration()
			what = fmt.Sprintf("K = %.3f from %d of %d breaths at %.0f-%.0f s", qr.K, qr.Used, qr.Total, float64(q0)/fs, float64(q1)/fs)
		}
		ropt.Calibration = cal
		rr, derr := resp.Detect(rc.Samples[i0:i1], ab.Samples[i0:i1], ropt)
		if derr != nil {
			return res, cal, runs, weights, "", derr
		}
		res.Breaths = append(res.Breaths, rr.Breaths...)
		res.Pauses = append(res.Pauses, rr.Pauses...)
		res.Gaps = append(res.Gaps, rr.Gaps...)
		res.Discarded += rr.Discarded
		res.Calibration = rr.Calibration
		rw, aw := cal.RibWeight, cal.AbdWeight
		if rw == 0 && aw == 0 {
			rw, aw = 1, 1
		}
		weights = append(weights, [2]float64{rw, aw})
		label := r.Label
		if label == "" {
			label = "whole recording"
		}
		notes = append(notes, fmt.Sprintf("%s %.0f-%.0f s: %s", label, r.Start, r.End, what))
	}
	why := "the feature table applies no calibration"
	if bcr.Note != "" {
		why += " (" + bcr.Note + ")"
	}
	note = "QDC per posture as a fallback, " + why + " (relative calibration; " + resp.QDCCaveat + "): " + strings.Join(notes, "; ")
	return res, cal, runs, weights, note, nil
}
