package resp

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/tidalbeat/tidalbeat/window"
)

// Errors returned by the package; test with errors.Is.
var (
	// ErrInput reports unusable input: empty or mismatched bands, a bad
	// sampling rate, non-finite options.
	ErrInput = errors.New("invalid input")
	// ErrTooFew reports too few breaths (or beats) for an estimate.
	ErrTooFew = errors.New("too few breaths")
	// ErrUndefined reports a quantity that the data do not define, such as
	// a QDC weight when one band's excursions do not vary.
	ErrUndefined = errors.New("undefined for the data")
	// ErrClosed reports use of a closed stream.
	ErrClosed = errors.New("stream closed")
)

// Quality is a set of per-breath quality flags; zero means clean.
type Quality uint8

// Quality flags. A breath may carry several.
const (
	// QualityMotion: high-frequency energy in the band sum above
	// Options.MotionFrac of the breath's amplitude, an excursion larger than
	// Options.MotionAmpFactor times the recent typical one, or overlap with
	// a caller-supplied motion interval.
	QualityMotion Quality = 1 << iota
	// QualityClipping: a band held the same raw value for at least
	// Options.ClipRunS (and less than Options.FlatRunS) inside the breath:
	// saturation of the amplifier or converter.
	QualityClipping
	// QualityBandLoss: a band was flat for at least Options.FlatRunS, or one
	// band's excursion fell below a tenth of its recent typical value while
	// the other band kept moving (a slipped or disconnected band).
	QualityBandLoss
	// QualityLongPause: the pause after the breath outlasted the detector's
	// buffer (Options.BufferS); PauseS is then a lower bound.
	QualityLongPause
)

// String lists the flags, "ok" when none.
func (q Quality) String() string {
	if q == 0 {
		return "ok"
	}
	var p []string
	for _, f := range []struct {
		q Quality
		s string
	}{{QualityMotion, "motion"}, {QualityClipping, "clipping"}, {QualityBandLoss, "band_loss"}, {QualityLongPause, "long_pause"}} {
		if q&f.q != 0 {
			p = append(p, f.s)
		}
	}
	return strings.Join(p, "|")
}

// Breath is one detected breath. Times are seconds from the recording start
// (Options.StartS is added); they are corrected for the low-pass filter's
// delay. Volumes named AU are in the arbitrary units of the calibrated sum
// (Calibration.RibWeight*rib + Calibration.AbdWeight*abdomen); volumes named L
// are litres and are NaN unless the calibration is absolute.
type Breath struct {
	Onset   float64 // inspiration onset (s)
	EndInsp float64 // end of inspiration, the peak of the sum (s)
	EndExp  float64 // end of expiration (s); equals the next onset unless a pause follows
	// PauseS is the expiratory pause between EndExp and the next breath's
	// onset (s): zero unless the trough stays flat for longer than
	// Options.PauseMinS and half the recent breath length. The pause time
	// itself is described by Result.Pauses. Rates per window count it
	// (60 * breaths / sum of TtotS + PauseS); RatePerMin does not.
	PauseS float64

	TiS        float64 // inspiratory time EndInsp-Onset (s)
	TeS        float64 // expiratory time EndExp-EndInsp (s)
	TtotS      float64 // TiS+TeS (s)
	TiTtot     float64 // duty cycle TiS/TtotS (ratio)
	RatePerMin float64 // 60/TtotS (breaths per minute)

	VtAU    float64 // tidal volume, trough-to-peak rise of the sum (AU)
	VtL     float64 // tidal volume (L); NaN without absolute calibration
	FlowAUs float64 // mean inspiratory flow VtAU/TiS (AU/s)
	FlowLs  float64 // mean inspiratory flow VtL/TiS (L/s); NaN without absolute calibration

	// RibRise and AbdRise are the changes of the low-passed rib-cage and
	// abdominal bands from Onset to EndInsp in the bands' own (unweighted)
	// units: the inputs of QDC and of absolute calibration.
	RibRise, AbdRise float64

	// RibExcAU and AbdExcAU are the peak-to-peak excursions of the weighted
	// rib-cage and abdominal contributions over the breath (AU), the effort
	// each band shows.
	RibExcAU, AbdExcAU float64

	// PhaseXcorrDeg is the thoraco-abdominal phase angle from the lag of
	// maximum cross-correlation, 360*lag/Ttot (Prisk et al. 2002), in
	// [-180, 180]: positive when the rib cage leads. NaN when undefined.
	PhaseXcorrDeg float64
	// PhaseLissajousDeg is the phase angle from the rib-cage/abdomen loop,
	// asin(m/s), resolved to 90..180 degrees when the loop's major axis
	// slopes downwards; in [0, 180]. NaN when undefined.
	PhaseLissajousDeg float64
	// Paradox is true when the absolute cross-correlation phase (or, when it
	// is undefined, the Lissajous phase) is at least Options.ParadoxDeg.
	Paradox bool
	// Sigh is true when VtAU is at least Options.SighFactor times the median
	// of the preceding breaths.
	Sigh    bool
	Quality Quality
}

// Excursion is the excursion of the calibrated sum and of each weighted band
// over a span of a pause between breaths (spans are at most
// Options.ExcursionSpanS long), as the peak-to-peak of a sine with the same
// standard deviation (2*sqrt(2)*SD): equal to the peak-to-peak for shallow
// breathing, and not inflated by the end of the expiration before a pause. Event scoring reads breaths and excursions
// together as one timeline of breathing amplitude.
type Excursion struct {
	Start, End float64 // s from the recording start
	SumAU      float64 // excursion of the calibrated sum (AU)
	RibExcAU   float64 // excursion of the weighted rib-cage contribution (AU)
	AbdExcAU   float64 // excursion of the weighted abdominal contribution (AU)
}

// Result is what breath detection returns.
type Result struct {
	Breaths []Breath
	// Pauses holds the excursion spans covering the time between breaths
	// (expiratory pauses and apneas), in time order.
	Pauses []Excursion
	// Gaps are the spans where either band was NaN or infinite (s from the
	// recording start, half-open); detection restarts after each.
	Gaps []window.Interval
	// Discarded counts breath candidates that were dropped: shorter than
	// Options.MinBreathS, cut by a gap, or longer than the buffer.
	Discarded int
	// Calibration is the calibration the volumes use.
	Calibration Calibration
}

// Options configures breath detection. Zero values mean the documented
// defaults; RateHz is required.
type Options struct {
	RateHz float64 // sampling rate of both bands (Hz), 10..500 (issue scope); required
	StartS float64 // time of the first sample (s from the recording start); 0 when zero

	// Calibration weights the bands into the sum; the zero value is
	// equal weights in arbitrary units (see Calibration).
	Calibration Calibration

	// LowpassHz is the cut-off of the order-2 Butterworth low-pass applied
	// to each band: 2 Hz when zero. Common practice puts 1 Hz for adults at
	// rest (methods reference 5.2); 2 Hz keeps the fundamental of exercise
	// breathing up to ~60/min within 3 % of its amplitude.
	LowpassHz float64
	// HighpassHz is the cut-off of the order-1 Butterworth high-pass that
	// removes slow drift from the band copies used for the phase angles
	// and for the start-up amplitude reference: 0.05 Hz when zero (common
	// practice, methods reference 5.2). Extrema, volumes and excursions are
	// taken on the low-passed signal only, so the high-pass shifts none of
	// them; drift slower than a breath does not disturb the extremum test.
	HighpassHz float64
	// HysteresisFrac sets the adaptive threshold: a breath must rise from
	// its trough and fall from its peak by 2*HysteresisFrac times the median
	// amplitude of the last ten clean breaths, so breaths smaller than 30 %
	// of the recent ones are not counted (they are left to event scoring as
	// pause excursions): 0.15 when zero (common practice: accept a breath at
	// 15-30 % of the recent median, methods reference 5.2).
	HysteresisFrac float64
	// MinBreathS is the shortest accepted breath (s): 0.8 when zero
	// (75 breaths/min, above hard-exercise rates; common practice).
	MinBreathS float64
	// PauseMinS: a trough that stays within PauseTolFrac of its floor for
	// longer than this (and than half the recent breath length) is split
	// into end of expiration and next onset with a pause between: 2 s when
	// zero (our choice; shorter end-expiratory pauses stay part of Te as is
	// usual).
	PauseMinS float64
	// PauseTolFrac is the tolerance, as a fraction of the breath's amplitude,
	// for "at the trough": 0.1 when zero (our choice: above the residual of
	// an imperfectly calibrated sum during obstructed efforts).
	PauseTolFrac float64
	// SighFactor marks a breath as a sigh when its volume is at least this
	// multiple of the recent median: 2 when zero (common practice: a sigh
	// is roughly a double breath).
	SighFactor float64
	// ParadoxDeg is the phase angle from which a breath is paradoxical: 90
	// when zero (common practice: bands more out of phase than in phase).
	ParadoxDeg float64
	// MotionFrac flags motion when the RMS of the band sum above
	// LowpassHz (order-2 Butterworth high-pass of the raw sum) exceeds this
	// fraction of the breath amplitude: 0.1 when
	// zero (our choice).
	MotionFrac float64
	// MotionAmpFactor flags motion for a breath larger than this multiple of
	// the recent median: 5 when zero (our choice; sighs are 2-3 times).
	MotionAmpFactor float64
	// Motion are caller-known motion spans (for example from package
	// motion's accelerometer flags), s from the recording start.
	Motion []window.Interval
	// ClipRunS and FlatRunS: a band repeating the same raw value for at
	// least ClipRunS is clipping, for at least FlatRunS band loss: 0.1 s and
	// 2 s when zero (our choice).
	ClipRunS, FlatRunS float64
	// ExcursionSpanS is the longest span of a pause excursion: 4 s when zero
	// (about one resting breath, so a span sees a whole shallow breath).
	ExcursionSpanS float64
	// BufferS is the signal history the detector keeps (s): 120 when zero.
	// A pause longer than this ends the breath before it with
	// QualityLongPause.
	BufferS float64
}

func (o Options) withDefaults() (Options, error) {
	if !(o.RateHz > 0) || math.IsInf(o.RateHz, 0) || o.RateHz > 1e5 {
		return o, fmt.Errorf("resp: sampling rate %v Hz: %w", o.RateHz, ErrInput)
	}
	if math.IsNaN(o.StartS) || math.IsInf(o.StartS, 0) {
		return o, fmt.Errorf("resp: start %v s: %w", o.StartS, ErrInput)
	}
	def := func(p *float64, v float64, name string) error {
		if math.IsNaN(*p) || math.IsInf(*p, 0) || *p < 0 {
			return fmt.Errorf("resp: option %s = %v: %w", name, *p, ErrInput)
		}
		if *p == 0 {
			*p = v
		}
		return nil
	}
	nyq := o.RateHz / 2
	for _, d := range []struct {
		p    *float64
		v    float64
		name string
	}{
		{&o.LowpassHz, math.Min(2, 0.4*nyq), "LowpassHz"},
		{&o.HighpassHz, 0.05, "HighpassHz"},
		{&o.HysteresisFrac, 0.15, "HysteresisFrac"},
		{&o.MinBreathS, 0.8, "MinBreathS"},
		{&o.PauseMinS, 2, "PauseMinS"},
		{&o.PauseTolFrac, 0.1, "PauseTolFrac"},
		{&o.SighFactor, 2, "SighFactor"},
		{&o.ParadoxDeg, 90, "ParadoxDeg"},
		{&o.MotionFrac, 0.1, "MotionFrac"},
		{&o.MotionAmpFactor, 5, "MotionAmpFactor"},
		{&o.ClipRunS, 0.1, "ClipRunS"},
		{&o.FlatRunS, 2, "FlatRunS"},
		{&o.ExcursionSpanS, 4, "ExcursionSpanS"},
		{&o.BufferS, 120, "BufferS"},
	} {
		if err := def(d.p, d.v, d.name); err != nil {
			return o, err
		}
	}
	if o.LowpassHz >= nyq || o.HighpassHz >= o.LowpassHz {
		return o, fmt.Errorf("resp: band %v..%v Hz at rate %v Hz: %w", o.HighpassHz, o.LowpassHz, o.RateHz, ErrInput)
	}
	if o.BufferS < 4*o.PauseMinS || o.BufferS > 3600 {
		return o, fmt.Errorf("resp: buffer %v s: %w", o.BufferS, ErrInput)
	}
	if err := o.Calibration.validate(); err != nil {
		return o, err
	}
	return o, nil
}
