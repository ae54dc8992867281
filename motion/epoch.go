package motion

import (
	"fmt"
	"math"
	"strconv"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// Intensity is an activity-intensity class from the epoch MAD.
type Intensity int

// Intensity classes (cut-points in IntensityOptions).
const (
	IntensityUnknown  Intensity = iota // no valid data
	IntensityLight                     // sedentary or light: MAD below the moderate cut-point (< 3 MET)
	IntensityModerate                  // 3 to 6 MET
	IntensityVigorous                  // 6 MET or more
)

// String returns "light", "moderate", "vigorous" or "unknown".
func (c Intensity) String() string {
	switch c {
	case IntensityLight:
		return "light"
	case IntensityModerate:
		return "moderate"
	case IntensityVigorous:
		return "vigorous"
	}
	return "unknown"
}

// ClassifyIntensity returns the class of a MAD value (mg); NaN is unknown.
// The zero options mean the hip-worn adult cut-points 91 and 414 mg
// (Vähä-Ypyä et al., PLoS One 10(8):e0134813, 2015).
func ClassifyIntensity(madMg float64, o IntensityOptions) Intensity {
	o = o.withDefaults()
	switch {
	case math.IsNaN(madMg):
		return IntensityUnknown
	case madMg >= o.VigorousMg:
		return IntensityVigorous
	case madMg >= o.ModerateMg:
		return IntensityModerate
	}
	return IntensityLight
}

// Epoch is the summary of one window of samples.
type Epoch struct {
	Seq        int64
	Start, End float64 // s from the origin
	StartUTC   time.Time
	Coverage   float64 // fraction of the window with valid samples (window engine)
	Valid      bool    // coverage reached the window spec's minimum
	Reason     string  // why not valid, or why a value is NaN
	// Samples is the number of valid samples inside.
	Samples int
	// Steps is the number of counted steps inside; CadenceSPM is 60 over
	// the mean interval between consecutive steps inside (intervals longer
	// than StepOptions.MaxIntervalS, the pauses between bouts, excluded),
	// steps/min, NaN without two such steps.
	Steps      int
	CadenceSPM float64
	// ENMOmg is the mean of max(0, |a| - 1 g) (van Hees et al. 2013) and
	// MADmg the mean absolute deviation of |a| from its epoch mean
	// (Vähä-Ypyä et al. 2015), both in mg.
	ENMOmg, MADmg float64
	// Tidalbeat counts (see CountOptions): CountsPIMmgs is the integral of
	// the rectified signal in mg·s, CountsZC the number of hysteresis
	// crossings, CountsTATs the seconds above threshold.
	CountsPIMmgs float64
	CountsZC     int
	CountsTATs   float64
	Intensity    Intensity
	// Posture and InclinationDeg come from the epoch mean of the body-axis
	// acceleration (the gravity estimate, common practice).
	Posture        Posture
	InclinationDeg float64
	// PostureChanges is the number of posture changes confirmed inside.
	PostureChanges int
	// Saturated is the number of saturated samples inside.
	Saturated int
	// Artefact flags a window whose motion is likely to corrupt ECG and
	// respiratory bands (ArtefactOptions); ArtefactReason says why.
	Artefact       bool
	ArtefactReason string
}

// Counts returns the epoch's activity counts in mode m: mg·s for
// CountsPIM, crossings for CountsZC, seconds for CountsTAT; NaN for an
// unknown mode.
func (e Epoch) Counts(m CountMode) float64 {
	switch m {
	case CountsPIM:
		return e.CountsPIMmgs
	case CountsZC:
		return float64(e.CountsZC)
	case CountsTAT:
		return e.CountsTATs
	}
	return math.NaN()
}

// Columns returns the column names of Values, units in each name.
func Columns() []string {
	return []string{
		"epoch_start_utc", "epoch_start_s", "epoch_end_s", "coverage_frac", "valid",
		"n_steps", "cadence_spm", "enmo_mg", "mad_mg",
		"counts_pim_mgs", "counts_zc_n", "counts_tat_s", "intensity_class",
		"posture", "inclination_deg", "n_posture_changes", "n_saturated",
		"motion_artefact", "artefact_reason",
	}
}

// Values returns the epoch as strings in the order of Columns. NaN prints
// as "NaN"; times are RFC 3339 UTC with milliseconds.
func (e Epoch) Values() []string {
	f := func(v float64, prec int) string { return strconv.FormatFloat(v, 'f', prec, 64) }
	return []string{
		e.StartUTC.UTC().Format("2006-01-02T15:04:05.000Z07:00"), f(e.Start, 3), f(e.End, 3), f(e.Coverage, 4),
		strconv.FormatBool(e.Valid),
		strconv.Itoa(e.Steps), f(e.CadenceSPM, 2), f(e.ENMOmg, 3), f(e.MADmg, 3),
		f(e.CountsPIMmgs, 1), strconv.Itoa(e.CountsZC), f(e.CountsTATs, 2), e.Intensity.String(),
		e.Posture.String(), f(e.InclinationDeg, 2), strconv.Itoa(e.PostureChanges), strconv.Itoa(e.Saturated),
		strconv.FormatBool(e.Artefact), e.ArtefactReason,
	}
}

// Summarize computes the epoch measures of window w from the samples inside
// it (s = trace.Samples[w.Lo:w.Hi]) at rateHz. It is a pure function: package
// features calls it per window of any grid, and Epochs and Stream call it
// for theirs. Invalid samples are skipped; with none valid the measures are
// NaN and Reason says so.
func Summarize(w window.Window, s []Sample, rateHz float64, opts Options) Epoch {
	o := opts.withDefaults()
	e := Epoch{Seq: w.Seq, Start: w.Start, End: w.End, StartUTC: w.StartUTC, Coverage: w.Coverage, Valid: w.Valid, Reason: w.Reason}
	var sumVM, sumENMO, sumPIM, su, sl, sf float64
	n, zc, tat := 0, 0, 0
	var stepIdx []int
	const rare = FlagStep | FlagSaturated | FlagPostureChange | FlagInvalid
	for j := range s {
		v := &s[j]
		if f := v.Flags; f&rare != 0 {
			if f&FlagStep != 0 {
				stepIdx = append(stepIdx, j)
			}
			if f&FlagSaturated != 0 {
				e.Saturated++
			}
			if f&FlagPostureChange != 0 {
				e.PostureChanges++
			}
			if f&FlagInvalid != 0 {
				continue
			}
		}
		n++
		vm := float64(v.VM)
		sumVM += vm
		if vm > 1 {
			sumENMO += vm - 1
		}
		sumPIM += float64(v.Count)
		zc += int(v.Flags&FlagZeroCross) / int(FlagZeroCross)
		tat += int(v.Flags&FlagAboveThreshold) / int(FlagAboveThreshold)
		su += float64(v.Up)
		sl += float64(v.Left)
		sf += float64(v.Forward)
	}
	e.Samples, e.Steps, e.CountsZC = n, len(stepIdx), zc
	e.CadenceSPM = cadence(stepIdx, rateHz, o.Steps.MaxIntervalS)
	if n == 0 {
		e.ENMOmg, e.MADmg, e.CountsPIMmgs, e.CountsTATs, e.InclinationDeg = math.NaN(), math.NaN(), math.NaN(), math.NaN(), math.NaN()
		if e.Reason == "" {
			e.Reason = "no valid samples"
		}
		return e
	}
	fn := float64(n)
	mean := sumVM / fn
	var dev float64
	for j := range s {
		if s[j].Flags&FlagInvalid == 0 {
			dev += math.Abs(float64(s[j].VM) - mean)
		}
	}
	e.ENMOmg = 1000 * sumENMO / fn
	e.MADmg = 1000 * dev / fn
	e.CountsPIMmgs = 1000 * sumPIM / rateHz
	e.CountsTATs = float64(tat) / rateHz
	e.Intensity = ClassifyIntensity(e.MADmg, o.Intensity)
	e.InclinationDeg = Inclination(su/fn, sl/fn, sf/fn)
	e.Posture = classify(su/fn, sl/fn, sf/fn, o.Posture.LyingDeg)
	switch {
	case e.Saturated > 0:
		e.Artefact, e.ArtefactReason = true, "saturated samples"
	case e.MADmg >= o.Artefact.MADmg:
		e.Artefact, e.ArtefactReason = true, "movement above the MAD limit"
	case e.PostureChanges > 0 && !o.Artefact.NoPostureChange:
		e.Artefact, e.ArtefactReason = true, "posture change"
	}
	return e
}

// cadence is 60 / mean step interval (s) over intervals up to maxS. The mean
// rather than the median, because at low rates intervals are whole samples
// and a median would round the cadence to them.
func cadence(idx []int, rateHz, maxS float64) float64 {
	sum, n := 0.0, 0
	for k := 1; k < len(idx); k++ {
		if d := float64(idx[k]-idx[k-1]) / rateHz; d <= maxS {
			sum += d
			n++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return 60 * float64(n) / sum
}

// EpochsOf summarises a trace on the grid of spec placed at origin (the UTC
// time of sample 0), through the window engine's batch driver. Extra gaps
// (seconds from the origin) are merged with the trace's invalid runs.
func EpochsOf(tr *Trace, origin time.Time, spec window.Spec, gaps []window.Interval, opts Options) ([]Epoch, error) {
	g, err := window.NewGrid(spec, origin)
	if err != nil {
		return nil, err
	}
	all := append(append([]window.Interval(nil), tr.Gaps...), gaps...)
	seq, err := g.Samples(tr.RateHz, 0, len(tr.Samples), all)
	if err != nil {
		return nil, err
	}
	var out []Epoch
	for w := range seq {
		out = append(out, Summarize(w, tr.Samples[w.Lo:w.Hi], tr.RateHz, opts))
	}
	return out, nil
}

// Epochs runs the whole pipeline over x, y, z (opts.Unit, sample i at
// i/rateHz s after origin) and summarises it on the grid of spec: the
// convenience most callers want. It feeds the data through Stream in blocks,
// so memory stays bounded by a window whatever the length of the recording;
// the result equals EpochsOf(Derive(...)) (tested). Use Derive and EpochsOf
// to keep the steps and posture changes.
func Epochs(x, y, z []float64, rateHz float64, origin time.Time, spec window.Spec, opts Options) ([]Epoch, error) {
	if len(x) != len(y) || len(x) != len(z) {
		return nil, fmt.Errorf("motion: axis lengths %d, %d, %d differ: %w", len(x), len(y), len(z), ErrInput)
	}
	s, err := NewStream(origin, spec, rateHz, opts)
	if err != nil {
		return nil, err
	}
	const block = 1 << 16
	var out []Epoch
	for i := 0; i < len(x); i += block {
		j := min(len(x), i+block)
		if err := s.Push(x[i:j], y[i:j], z[i:j]); err != nil {
			return nil, err
		}
		out = append(out, s.Ready()...)
		s.Steps()
		s.PostureChanges()
	}
	if err := s.Close(); err != nil {
		return nil, err
	}
	return append(out, s.Ready()...), nil
}
