package features

import (
	"fmt"
	"math"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// activityCols are the activity family's columns: the motion package's own
// column names (motion.Columns), typed, plus the count behind them.
var activityCols = []Column{
	{Name: "activity_n_samples", Kind: Int, Doc: "valid accelerometer samples in the window"},
	{Name: "n_steps", Kind: Int, Doc: "steps counted in the window"},
	{Name: "cadence_spm", Kind: Float, Doc: "steps/min: 60 over the median step interval in the window"},
	{Name: "enmo_mg", Kind: Float, Doc: "ENMO, mg (van Hees et al. 2013)"},
	{Name: "mad_mg", Kind: Float, Doc: "mean amplitude deviation, mg (Vaha-Ypya et al. 2015)"},
	{Name: "counts_pim_mgs", Kind: Float, Doc: "activity counts, proportional integration, mg*s (motion package definition)"},
	{Name: "counts_zc_n", Kind: Int, Doc: "activity counts, zero-crossing mode"},
	{Name: "counts_tat_s", Kind: Float, Doc: "activity counts, time above threshold, s"},
	{Name: "intensity_class", Kind: Text, Doc: "light, moderate or vigorous from MAD cut-points (91, 414 mg; hip-worn adults)"},
	{Name: "posture", Kind: Text, Doc: "posture class from the window's mean gravity vector"},
	{Name: "inclination_deg", Kind: Float, Doc: "trunk inclination from vertical, degrees"},
	{Name: "n_posture_changes", Kind: Int, Doc: "posture changes confirmed in the window"},
	{Name: "n_saturated", Kind: Int, Doc: "saturated samples in the window"},
	{Name: "motion_artefact", Kind: Int, Doc: "1 when motion likely corrupts ECG and bands in this window, else 0"},
	{Name: "artefact_reason", Kind: Text, Doc: "why motion_artefact is 1"},
	{Name: "nonwear_frac", Kind: Float, Doc: "share of the window during which the device was judged off the body, live reading: an instant counts when the latest 60-min non-wear window (15-min steps) ending at or before it met the rule after van Hees et al. 2013 (per-axis SD < 13 mg and range < 50 mg on 2 of 3 axes; thresholds from memory, unverified); causal, so it lags non-wear onset by 60-75 min and its end by up to 15 min; 0 where no window has been judged yet"},
}

// nonWearCol is the index of nonwear_frac in activityCols.
const nonWearCol = 15

// newActivityFamily builds the activity family from the three accelerometer
// axes through the motion package (its Derive/EpochsOf batch pair and its
// Stream, which share one core).
func newActivityFamily(rec *recording.Recording, cfg Config, withData bool, _ *shared) *family {
	f := &family{name: FamilyActivity, length: cfg.ActivityWindow, cols: activityCols}
	var chs []*recording.Channel
	for _, r := range []recording.Role{recording.RoleAccX, recording.RoleAccY, recording.RoleAccZ} {
		ch := cfg.findRole(rec, r)
		if ch == nil {
			f.missing = "no " + r.String() + " channel"
			return f
		}
		chs = append(chs, ch)
		f.inputs = append(f.inputs, channelInput(ch, r, withData))
	}
	if chs[0].RateHz != chs[1].RateHz || chs[0].RateHz != chs[2].RateHz {
		f.missing = fmt.Sprintf("accelerometer axes at different rates (%v, %v, %v Hz)", chs[0].RateHz, chs[1].RateHz, chs[2].RateHz)
		return f
	}
	unit, err := motion.ParseUnit(chs[0].Unit)
	if err != nil {
		f.missing = err.Error()
		return f
	}
	opts := motion.Options{Unit: unit}
	rate := chs[0].RateHz
	if rate < motion.MinRateHz || rate > motion.MaxRateHz {
		f.missing = fmt.Sprintf("accelerometer rate %v Hz outside %d..%d Hz", rate, motion.MinRateHz, motion.MaxRateHz)
		return f
	}
	f.batchFn = func(g window.Grid) ([]famResult, error) {
		n := min(len(chs[0].Samples), len(chs[1].Samples), len(chs[2].Samples))
		if n == 0 {
			return nil, nil
		}
		nw, err := motion.NewNonWearStream(rate, unit, motion.NonWearOptions{})
		if err != nil {
			return nil, err
		}
		if err := nw.Push(chs[0].Samples[:n], chs[1].Samples[:n], chs[2].Samples[:n]); err != nil {
			return nil, err
		}
		if err := nw.Close(); err != nil {
			return nil, err
		}
		tr, err := motion.Derive(chs[0].Samples[:n], chs[1].Samples[:n], chs[2].Samples[:n], rate, opts)
		if err != nil {
			return nil, err
		}
		eps, err := motion.EpochsOf(tr, g.Origin(), g.Spec(), nil, opts)
		if err != nil {
			return nil, err
		}
		out := make([]famResult, len(eps))
		for i := range eps {
			out[i] = epochResult(&eps[i], nw.TrailingFrac(eps[i].Start, eps[i].End))
		}
		return out, nil
	}
	f.newDriver = func(g window.Grid) (driver, error) {
		ms, err := motion.NewStream(g.Origin(), g.Spec(), rate, opts)
		if err != nil {
			return nil, err
		}
		nw, err := motion.NewNonWearStream(rate, unit, motion.NonWearOptions{})
		if err != nil {
			return nil, err
		}
		return &activityDriver{ms: ms, nw: nw, last: math.MinInt64}, nil
	}
	return f
}

// epochResult turns a motion epoch and its non-wear share into the family's
// row part; both drivers call it.
func epochResult(e *motion.Epoch, nonWear float64) famResult {
	r := famResult{seq: e.Seq, coverage: e.Coverage, reason: e.Reason,
		v: make([]float64, len(activityCols)), t: make([]string, len(activityCols))}
	for i := range r.v {
		r.v[i] = math.NaN()
	}
	r.v[0] = float64(e.Samples)
	if !e.Valid || e.Samples == 0 {
		if r.reason == "" {
			r.reason = ReasonNoData
		}
		return r
	}
	art := 0.0
	if e.Artefact {
		art = 1
	}
	copy(r.v[1:], []float64{float64(e.Steps), e.CadenceSPM, e.ENMOmg, e.MADmg, e.CountsPIMmgs,
		float64(e.CountsZC), e.CountsTATs, math.NaN(), math.NaN(), e.InclinationDeg,
		float64(e.PostureChanges), float64(e.Saturated), art})
	r.t[8] = e.Intensity.String()
	r.t[9] = e.Posture.String()
	r.t[14] = e.ArtefactReason
	r.v[nonWearCol] = nonWear
	if math.IsNaN(e.CadenceSPM) && r.reason == "" {
		r.reason = "cadence_spm: fewer than two steps"
	}
	return r
}

// activityDriver feeds the three axes to a motion.Stream and a
// motion.NonWearStream in step (they need equal-length chunks) and turns
// their epochs into row parts. An epoch is held back until the non-wear
// stream has decided its span (NonWearStream.Decided, at most one 15-min
// step behind the samples; in practice the epoch is already decided when
// motion releases it), so its nonwear_frac is the batch value.
type activityDriver struct {
	ms      *motion.Stream
	nw      *motion.NonWearStream
	pending []motion.Epoch
	buf     [3][]float64
	last    int64
	ended   bool
}

func (d *activityDriver) push(in int, x []float64, _ []window.Interval) ([]famResult, error) {
	// Gaps reach motion as NaN samples (its own invalid runs); declared
	// channel gaps are not passed, in batch as in streaming.
	d.buf[in] = append(d.buf[in], x...)
	n := min(len(d.buf[0]), len(d.buf[1]), len(d.buf[2]))
	if n == 0 {
		return nil, nil
	}
	if err := d.ms.Push(d.buf[0][:n], d.buf[1][:n], d.buf[2][:n]); err != nil {
		return nil, err
	}
	if err := d.nw.Push(d.buf[0][:n], d.buf[1][:n], d.buf[2][:n]); err != nil {
		return nil, err
	}
	for i := range d.buf {
		d.buf[i] = append(d.buf[i][:0], d.buf[i][n:]...)
	}
	return d.take(), nil
}

func (d *activityDriver) take() []famResult {
	d.pending = append(d.pending, d.ms.Ready()...)
	final := d.nw.Decided()
	var out []famResult
	k := 0
	for k < len(d.pending) && d.pending[k].End <= final {
		e := &d.pending[k]
		out = append(out, epochResult(e, d.nw.TrailingFrac(e.Start, e.End)))
		d.last = e.Seq
		k++
	}
	if k > 0 {
		// Later epochs start no earlier than the last one released.
		d.nw.Forget(d.pending[k-1].Start)
		d.pending = d.pending[:copy(d.pending, d.pending[k:])]
	}
	return out
}

func (d *activityDriver) close() ([]famResult, error) {
	if err := d.ms.Close(); err != nil {
		return nil, err
	}
	if err := d.nw.Close(); err != nil {
		return nil, err
	}
	d.ended = true
	return d.take(), nil
}

func (d *activityDriver) done() int64 {
	if d.ended {
		return math.MaxInt64
	}
	return d.last
}
