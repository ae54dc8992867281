package features

import (
	"errors"
	"fmt"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
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
