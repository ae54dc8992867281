package features

import (
	"errors"
	"fmt"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// Version is the library version written into every table's sidecar.
const Version = "0.1.0"

// Family names, as used in Config.Families, in Column.Family and as the
// prefix of each family's own bookkeeping columns.
const (
	FamilyHRV       = "hrv"
	FamilyBreathing = "breathing"
	FamilyActivity  = "activity"
)

// Defaults for Config's zero values.
const (
	// DefaultStep is the row spacing: 30 s (common practice: the 30-s epoch
	// of sleep scoring and a usual HRV tracking step, methods reference 7).
	DefaultStep = 30 * time.Second
	// DefaultHRVWindow is the HRV window: 5 min, the short-term recording
	// of the Task Force of ESC/NASPE (1996).
	DefaultHRVWindow = 5 * time.Minute
	// DefaultBreathingWindow is the breathing window: 60 s (common practice,
	// methods reference 7: 30-60 s holding at least 3 breaths).
	DefaultBreathingWindow = 60 * time.Second
	// DefaultActivityWindow is the activity window: 30 s (common practice).
	DefaultActivityWindow = 30 * time.Second
)

// ErrConfig marks an unusable configuration; ErrInput an unusable recording
// or stream input. Test with errors.Is.
var (
	ErrConfig = errors.New("invalid feature configuration")
	ErrInput  = errors.New("invalid feature input")
)

// Config says how a recording becomes a feature table. The zero value means
// every documented default.
type Config struct {
	// Step is the spacing of rows (DefaultStep when zero). Every family's
	// window ends at the row time, so the families join on timestamps.
	Step time.Duration `json:"step_ns"`
	// Anchor places row times: window.AnchorEpoch (the zero value) puts them
	// at whole multiples of Step since the Unix epoch.
	Anchor window.Anchor `json:"anchor"`
	// Window lengths per family (defaults above).
	HRVWindow       time.Duration `json:"hrv_window_ns"`
	BreathingWindow time.Duration `json:"breathing_window_ns"`
	ActivityWindow  time.Duration `json:"activity_window_ns"`
	// MinCoverage is the fraction of each window that must hold valid data
	// for its values to be computed (window.DefaultMinCoverage, 0.8, when
	// zero: common practice for short-term HRV, methods reference 7).
	MinCoverage float64 `json:"min_coverage"`
	// Families lists the families to compute; all three when empty.
	Families []string `json:"families,omitempty"`
	// Roles overrides channel roles by channel name (exact match); other
	// channels keep the role the recording gives them.
	Roles map[string]recording.Role `json:"roles,omitempty"`
	// BeatsAnnotator, when set, takes the HRV family's beats from the
	// recording's annotations of that annotator (e.g. "atr") instead of
	// detecting them on the ECG: the NN series joins consecutive sinus
	// beats (codes N, L and R), and records without signals work too.
	BeatsAnnotator string `json:"beats_annotator,omitempty"`
	// NoECGQuality leaves out the ECG quality columns (ecg.WindowQuality
	// per step), which cost about as much as beat detection and HRV
	// together.
	NoECGQuality bool `json:"no_ecg_quality,omitempty"`
	// Labels are extra labelled intervals (e.g. from ReadLabelsCSV) that
	// become label columns beside those from the recording's annotations.
	Labels []Label `json:"labels,omitempty"`
	// NoAnnotationLabels stops the recording's own non-beat annotations
	// from becoming label columns.
	NoAnnotationLabels bool `json:"no_annotation_labels,omitempty"`
	// LabelSpan is the span before each row time over which the label
	// overlap fraction is measured (Step when zero).
	LabelSpan time.Duration `json:"label_span_ns"`
	// BreathCalibration says how the breathing family weights the two
	// bands into a volume signal; the zero value applies none (equal
	// weights, every volume in arbitrary units, litre columns empty).
	BreathCalibration BreathCalibration `json:"breath_calibration"`
}

// BreathCalibration configures the breathing family's band calibration
// (package resp, Calibration). At most one source of weights: known
// Weights, or calibration from the recording (a QDC interval, reference
// breaths in the annotations, or both). The zero value means no calibration.
//
// Reference-breath annotations (VrefAnnotations): an annotation whose Text
// (or Code) reads "vref=<volume> L" (or "mL"; case and spaces free, for
// example "vref=0.80 L") with a positive Duration spanning one breath of
// known volume (spirometer, pneumotachograph or a fixed-volume bag). Each is
// matched to the clean detected breath overlapping it most (at least half of
// the shorter of the two); the matched breaths' band rises are fitted to the
// volumes by least squares (resp.CalibrateAbsolute: both weights from
// resp.MinTwoWeightRefs breaths, Chadha et al. 1982; with fewer, from two,
// the QDC ratio of the QDC interval scaled by one volume factor). When too
// few are matched the breathing reason says so and volumes stay in
// arbitrary units (or in QDC's relative units when a QDC interval is given).
// Such annotations also become label columns unless
// Config.NoAnnotationLabels is set.
//
// The calibration is resolved once per recording, by breath detection with
// equal weights on the samples from the earliest calibration span's start to
// the latest one's end (plus CalibrationPadS on both sides); Extract and
// Stream resolve it from the same samples, so they give identical rows.
// ResolveBreathCalibration returns what was resolved (method, weights,
// breaths used, residual, caveat) for a sidecar.
//
// Streaming: with known Weights (or none) breaths are detected from the
// first sample. A calibration from the recording needs its spans before the
// data it calibrates: the reference annotations must be in the header given
// to NewStream, the Stream holds the band samples (and so the breathing
// rows) until the bands have been pushed CalibrationPadS past the last
// span, then resolves the weights and replays the held samples; NewStream
// refuses spans ending after MaxStreamCalibrationS. With an SpO2 channel
// (recording.RoleSpO2, used for the desaturation criterion of the candidate
// hypopneas, column n_hypopneas_desat3) a breathing window is computed once
// SpO2 has also been pushed 150 s past its end (the 90-s event context and
// 60 s for resp's desaturation baseline and lag), so push every channel.
type BreathCalibration struct {
	// Weights are known weights (for example from a spirometer calibration
	// of an earlier session) applied as they are: Litres says whether they
	// give litres.
	Weights *resp.Calibration `json:"weights,omitempty"`
	// QDC is a span of natural breathing in one posture (s from the
	// recording start) for qualitative diagnostic calibration (Sackner et
	// al. 1989): relative weights only, volumes in arbitrary units, with
	// resp.QDCCaveat carried into the breathing reason and the sidecar.
	QDC *window.Interval `json:"qdc,omitempty"`
	// QDCOptions configures the QDC breath selection (resp defaults when
	// zero).
	QDCOptions resp.QDCOptions `json:"qdc_options"`
	// VrefAnnotations fits litre weights to the reference breaths marked in
	// the recording's annotations (convention above).
	VrefAnnotations bool `json:"vref_annotations,omitempty"`
}

// CalibrationPadS is the signal taken before and after the calibration
// spans when breaths are detected for calibration (s): one long resting
// breath, so breaths at the spans' edges are complete (our choice).
const CalibrationPadS = 15

// MaxStreamCalibrationS is the latest end of a calibration span a Stream
// accepts (s from the start): the Stream holds the band samples until the
// spans have passed, then resolves the calibration and replays them, so
// this bounds its memory (our choice: one hour, 29 MB at 500 Hz).
const MaxStreamCalibrationS = 3600

// empty reports whether no calibration is asked for.
func (b BreathCalibration) empty() bool {
	return b.Weights == nil && b.QDC == nil && !b.VrefAnnotations
}

func (b BreathCalibration) validate() error {
	if b.Weights != nil {
		if b.QDC != nil || b.VrefAnnotations {
			return fmt.Errorf("features: breath calibration: known weights exclude QDC and reference breaths: %w", ErrConfig)
		}
		w := *b.Weights
		for _, v := range []float64{w.RibWeight, w.AbdWeight} {
			if !isFinite(v) || v < 0 {
				return fmt.Errorf("features: breath calibration weights %v, %v: %w", w.RibWeight, w.AbdWeight, ErrConfig)
			}
		}
		if w.RibWeight == 0 && w.AbdWeight == 0 {
			return fmt.Errorf("features: breath calibration weights both zero: %w", ErrConfig)
		}
	}
	if q := b.QDC; q != nil {
		if !isFinite(q.Start) || !isFinite(q.End) || q.Start < 0 || !(q.End > q.Start) {
			return fmt.Errorf("features: QDC interval [%v, %v) s: %w", q.Start, q.End, ErrConfig)
		}
	}
	return nil
}

// Resolved returns the configuration with every zero value replaced by its
// default, as Extract uses it (the form written to sidecars), or the error
// that makes it unusable (wrapping ErrConfig).
func (c Config) Resolved() (Config, error) { return c.withDefaults() }

// withDefaults returns c with zero values replaced and checks it.
func (c Config) withDefaults() (Config, error) {
	if c.Step == 0 {
		c.Step = DefaultStep
	}
	if c.HRVWindow == 0 {
		c.HRVWindow = DefaultHRVWindow
	}
	if c.BreathingWindow == 0 {
		c.BreathingWindow = DefaultBreathingWindow
	}
	if c.ActivityWindow == 0 {
		c.ActivityWindow = DefaultActivityWindow
	}
	if c.MinCoverage == 0 {
		c.MinCoverage = window.DefaultMinCoverage
	}
	if c.LabelSpan == 0 {
		c.LabelSpan = c.Step
	}
	if c.LabelSpan < 0 {
		return c, fmt.Errorf("features: label span %v: %w", c.LabelSpan, ErrConfig)
	}
	if err := c.BreathCalibration.validate(); err != nil {
		return c, err
	}
	if w := c.BreathCalibration.Weights; w != nil && w.Method == "" {
		k := *w
		k.Method = "known"
		c.BreathCalibration.Weights = &k
	}
	for _, f := range c.Families {
		if f != FamilyHRV && f != FamilyBreathing && f != FamilyActivity {
			return c, fmt.Errorf("features: unknown family %q (want %s, %s or %s): %w", f, FamilyHRV, FamilyBreathing, FamilyActivity, ErrConfig)
		}
	}
	for _, l := range []time.Duration{c.HRVWindow, c.BreathingWindow, c.ActivityWindow} {
		if err := c.spec(l).Validate(); err != nil {
			return c, fmt.Errorf("features: %w: %w", ErrConfig, err)
		}
	}
	return c, nil
}

func (c Config) spec(length time.Duration) window.Spec {
	return window.Spec{Length: length, Step: c.Step, Anchor: c.Anchor, MinCoverage: c.MinCoverage}
}

func (c Config) wants(family string) bool {
	if len(c.Families) == 0 {
		return true
	}
	for _, f := range c.Families {
		if f == family {
			return true
		}
	}
	return false
}
