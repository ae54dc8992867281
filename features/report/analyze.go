package report

import (
	"fmt"
	"math"
	"sort"
	"time"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// Options adjusts Analyze. The zero value means the documented defaults.
type Options struct {
	// EpochS is the activity epoch, s; 30 when zero (the feature table's
	// default activity window, common practice).
	EpochS float64
	// ExcerptS is the length of the breathing-trace excerpt, s; 180 when
	// zero. The excerpt is centred on the first candidate event when there
	// is one, otherwise it starts at the first breath.
	ExcerptS float64
}

func (o Options) withDefaults() Options {
	if o.EpochS == 0 {
		o.EpochS = 30
	}
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
	// StepsS are the detected step times, s.
	StepsS []float64
	// Epochs are the activity epochs.
	Epochs []motion.Epoch
	// Missing lists the modalities the recording lacks or that failed, with
	// the reason, in the order ECG, breathing, motion.
	Missing []string
}

// Analyze runs the modality packages over rec and fills a report Input.
// A missing modality leaves its figures empty (they say so) and is listed
// in Analysis.Missing; only a recording with no usable channel at all is an
// error.
func Analyze(rec *recording.Recording, opt Options) (*Analysis, error) {
	if rec == nil {
		return nil, fmt.Errorf("report: nil recording: %w", ErrInput)
	}
	opt = opt.withDefaults()
	in := &Input{Record: rec.Name, Duration: rec.Duration()}
	if rec.StartKnown || !rec.Start.IsZero() {
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
	if err := a.motion(rec, opt); err != nil {
		a.Missing = append(a.Missing, "motion: "+err.Error())
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
// events) as spans, and one SegmentStat per label.
func labelSpans(rec *recording.Recording) ([]Span, []SegmentStat) {
	var spans []Span
	var segs []SegmentStat
	for _, an := range rec.Annotations {
		if an.Duration > 0 && an.Text != "" {
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
	// Intervals that span a gap are not intervals between consecutive beats.
	for i := 1; i < len(a.RPeaksS); i++ {
		t0, t1 := a.RPeaksS[i-1], a.RPeaksS[i]
		if spansGap(t0, t1, res.Gaps) {
			continue
		}
		in.Beats.TimeS = append(in.Beats.TimeS, t1)
		in.Beats.RRms = append(in.Beats.RRms, 1000*(t1-t0))
		in.Beats.Corrected = append(in.Beats.Corrected, false)
	}
	in.Facts = append(in.Facts, Fact{Name: "R-peaks detected", Value: fmt.Sprintf("%d (Pan-Tompkins)", len(a.RPeaksS))})
	return nil
}

func spansGap(t0, t1 float64, gaps []window.Interval) bool {
	for _, g := range gaps {
		if g.Start < t1 && g.End > t0 {
			return true
		}
	}
	return false
}

// motion derives steps, posture and per-epoch activity from the
// accelerometer axes.
func (a *Analysis) motion(rec *recording.Recording, opt Options) error {
	x, okx := rec.Channel(recording.RoleAccX)
	y, oky := rec.Channel(recording.RoleAccY)
	z, okz := rec.Channel(recording.RoleAccZ)
	if !okx || !oky || !okz {
		return fmt.Errorf("no 3-axis accelerometer")
	}
	if x.RateHz != y.RateHz || x.RateHz != z.RateHz {
		return fmt.Errorf("accelerometer axes at different rates (%g, %g, %g Hz)", x.RateHz, y.RateHz, z.RateHz)
	}
	n := min(len(x.Samples), len(y.Samples), len(z.Samples))
	unit, err := motion.ParseUnit(x.Unit)
	if err != nil {
		return err
	}
	mopt := motion.Options{Unit: unit}
	tr, err := motion.Derive(x.Samples[:n], y.Samples[:n], z.Samples[:n], x.RateHz, mopt)
	if err != nil {
		return err
	}
	origin := rec.Start
	if origin.IsZero() {
		origin = time.Unix(0, 0).UTC()
	}
	spec := window.Spec{Length: time.Duration(opt.EpochS * float64(time.Second)), Step: time.Duration(opt.EpochS * float64(time.Second)), Anchor: window.AnchorStart}
	eps, err := motion.EpochsOf(tr, origin, spec, nil, mopt)
	if err != nil {
		return err
	}
	a.StepsS, a.Epochs = tr.StepTimes, eps
	act := &a.Input.Activity
	act.EpochS = opt.EpochS
	q := QualityRow{Family: "motion"}
	for _, e := range eps {
		act.TimeS = append(act.TimeS, e.Start)
		act.ENMOmg = append(act.ENMOmg, e.ENMOmg)
		act.MADmg = append(act.MADmg, e.MADmg)
		act.Steps = append(act.Steps, float64(e.Steps))
		p := ""
		if e.Posture != motion.PostureUnknown {
			p = e.Posture.String()
		}
		act.Posture = append(act.Posture, p)
		q.TimeS, q.EndS = append(q.TimeS, e.Start), append(q.EndS, e.End)
		score := e.Coverage
		if !e.Valid {
			score = 0
		} else if e.Artefact {
			score *= 0.5
		}
		q.Score = append(q.Score, score)
	}
	a.Input.Quality = append(a.Input.Quality, q)
	a.Input.Facts = append(a.Input.Facts, Fact{Name: "steps detected", Value: fmt.Sprintf("%d", len(tr.StepTimes))})
	return nil
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
		if a.StepsS != nil {
			lo := sort.SearchFloat64s(a.StepsS, s.Start)
			hi := sort.SearchFloat64s(a.StepsS, s.End)
			s.Values = append(s.Values, Fact{Name: "steps", Value: fmt.Sprintf("%d", hi-lo)})
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
