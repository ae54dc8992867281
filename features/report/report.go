// Package report renders one recording's analysis as a single self-contained
// HTML file: inline SVG figures drawn with gonum/plot (heart-rate tachogram
// with quality shading and corrected beats, HRV spectrum with its bands,
// Poincare plot, breathing trace with breaths and events, ventilation trends,
// activity, posture and steps, and a per-window quality strip).
//
// The file references nothing outside itself (no scripts, style sheets, fonts
// or images from the network) and is well-formed XHTML, so it opens offline in
// any browser and parses with encoding/xml.
//
// Write renders an Input that holds already computed results (plain slices);
// Analyze fills an Input from a recording with the modality packages. The
// report does no signal processing of its own.
//
// Research software, not a medical device: the report says so at the top.
package report

import (
	"errors"
	"time"
)

// ErrInput marks an Input the report cannot be drawn from.
var ErrInput = errors.New("report: invalid input")

// Caution is printed at the top of every report.
const Caution = "Research software, not a medical device. Nothing in this report is a diagnosis; " +
	"alarms or decisions built on these numbers need clinical validation and must defer to " +
	"local regulation and licensed practice."

// Input is everything a report shows. Times are seconds from the recording
// start. Empty parts produce a figure that says "no data" rather than an error,
// so a recording without, say, an accelerometer still gets a report.
type Input struct {
	Title    string    // heading; the record name when empty
	Record   string    // record name or path
	Start    time.Time // UTC start of the recording (zero when unknown)
	Duration float64   // recording length, s

	Facts []Fact // summary lines printed above the figures (channels, counts, ...)

	Beats    Beats    // heart beats and NN series
	Spectrum Spectrum // HRV power spectral density of the NN series
	Breath   Breath   // breathing trace excerpt, breaths and events
	Trends   Trends   // per-window ventilation trends
	Activity Activity // per-epoch activity, posture and steps
	Quality  []QualityRow
	Labels   []Span // labelled intervals (annotations with a duration), drawn as bands
	Segments []SegmentStat
}

// Fact is one line of the summary table.
type Fact struct{ Name, Value string }

// Span is a labelled time interval [Start, End) in seconds.
type Span struct {
	Start, End float64
	Label      string
}

// Beats holds the beat series behind the tachogram and the Poincare plot.
type Beats struct {
	// TimeS are the times of the beats that end each interval, s; RRms the
	// interval ending at that beat, ms (after cleaning: NN). Corrected marks
	// intervals the cleaning step changed (interpolated, removed ectopic
	// neighbours, merged or split).
	TimeS     []float64
	RRms      []float64
	Corrected []bool
	// Gaps are intervals without usable ECG (lead off, invalid samples).
	Gaps []Span
}

// Spectrum is a power spectral density with the bands to shade.
type Spectrum struct {
	FreqHz    []float64
	PowerMs2  []float64 // ms^2/Hz
	Bands     []Span    // Start/End in Hz, Label the band name (VLF, LF, HF)
	Method    string    // estimator, e.g. "Welch, 4 Hz cubic spline"
	WindowS   [2]float64
	BandPower []Fact // band powers as text, shown in the caption
}

// Breath holds an excerpt of the breathing signal with its detected breaths.
type Breath struct {
	T0S     float64   // time of Samples[0], s
	RateHz  float64   // sampling rate of Samples
	Samples []float64 // weighted band sum (Analyze: the feature table's calibration, or QDC per posture as the fallback)
	Unit    string    // unit of Samples: "L" under an absolute calibration, "AU" otherwise (drawn on the axis)
	// Peaks are end-inspiration times, Troughs end-expiration times, s.
	Peaks, Troughs []float64
	Events         []Span // candidate apnea / hypopnea events (all, not only in the excerpt)
	Note           string // how the excerpt was chosen
}

// Trends holds per-window ventilation values (NaN where undefined).
type Trends struct {
	TimeS     []float64 // window end, s
	VE        []float64 // minute ventilation
	VEUnit    string    // "L/min" when calibrated, otherwise an arbitrary unit
	RatePerMn []float64 // breathing rate, breaths/min
}

// Activity holds per-epoch motion measures (NaN where undefined).
type Activity struct {
	TimeS   []float64 // epoch start, s
	EpochS  float64   // epoch length, s
	ENMOmg  []float64
	MADmg   []float64
	Steps   []float64 // steps in the epoch
	Posture []string  // posture name per epoch ("upright", "supine", ...; "" unknown)
}

// Quality row names: the tachogram shades the windows of QualityECG that
// score below 0.5.
const (
	QualityECG       = "ECG signal"
	QualityHRV       = "HRV"
	QualityBreathing = "breathing"
	QualityMotion    = "motion"
)

// QualityRow is one family's per-window quality: Score in [0, 1] (1 best),
// NaN where the family has no data in the window.
type QualityRow struct {
	Family string
	TimeS  []float64 // window start, s
	EndS   []float64 // window end, s
	Score  []float64
}

// SegmentStat is one row of the per-segment table (a labelled interval with
// the values measured inside it).
type SegmentStat struct {
	Label      string
	Start, End float64
	Values     []Fact
}
