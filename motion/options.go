package motion

import (
	"errors"
	"fmt"
	"math"
)

// StandardGravity is the conventional value of g used to convert between g
// and m/s^2 (9.80665 m/s^2: the standard acceleration of gravity adopted by
// the 3rd CGPM, 1901).
const StandardGravity = 9.80665

// Rates accepted by the package, in Hz. Below 10 Hz step impacts alias; above
// 500 Hz nothing here gains (common practice, no source).
const (
	MinRateHz = 10
	MaxRateHz = 500
)

// Errors returned by the package; test with errors.Is.
var (
	// ErrInput reports unusable input: bad rate, mismatched axis lengths,
	// non-finite options.
	ErrInput = errors.New("motion: invalid input")
	// ErrOptions reports an impossible option value.
	ErrOptions = errors.New("motion: invalid options")
	// ErrCalibration reports that auto-calibration found too few still
	// periods or too little spread of orientations to fit.
	ErrCalibration = errors.New("motion: calibration not possible")
)

// Unit is the unit of the raw acceleration samples.
type Unit int

const (
	// UnitG means samples are in units of standard gravity (the default).
	UnitG Unit = iota
	// UnitMS2 means samples are in m/s^2; they are divided by StandardGravity.
	UnitMS2
)

// String returns "g" or "m/s2".
func (u Unit) String() string {
	switch u {
	case UnitG:
		return "g"
	case UnitMS2:
		return "m/s2"
	}
	return fmt.Sprintf("Unit(%d)", int(u))
}

// ParseUnit reads a unit label as found in file headers: "g" (also "G"),
// "m/s2", "m/s^2", "m/s²", "mps2". The empty string means g.
func ParseUnit(s string) (Unit, error) {
	switch s {
	case "", "g", "G":
		return UnitG, nil
	case "m/s2", "m/s^2", "m/s²", "mps2", "m s-2":
		return UnitMS2, nil
	}
	return 0, fmt.Errorf("motion: unknown acceleration unit %q: %w", s, ErrInput)
}

// Axis names a signed device axis.
type Axis int

// Signed device axes.
const (
	PosX Axis = iota + 1
	NegX
	PosY
	NegY
	PosZ
	NegZ
)

func (a Axis) index() (int, float64) {
	switch a {
	case PosX:
		return 0, 1
	case NegX:
		return 0, -1
	case PosY:
		return 1, 1
	case NegY:
		return 1, -1
	case PosZ:
		return 2, 1
	case NegZ:
		return 2, -1
	}
	return -1, 0
}

// String returns "+x", "-y" and so on.
func (a Axis) String() string {
	i, s := a.index()
	if i < 0 {
		return fmt.Sprintf("Axis(%d)", int(a))
	}
	sign := "+"
	if s < 0 {
		sign = "-"
	}
	return sign + string("xyz"[i])
}

// Mount says how the device sits on the body: which signed device axis points
// towards the head (Up), towards the wearer's left (Left) and out of the
// chest (Forward). The zero value is the default chest mounting: Up = +y,
// Left = +x, Forward = +z (Tidalbeat's convention, also used by the
// simulator in internal/sim). The three axes must be distinct device axes.
//
// A device at rest measures +1 g along the direction opposite to gravity, so
// standing upright reads (up, left, forward) = (1, 0, 0), lying supine reads
// (0, 0, 1), prone (0, 0, -1), on the left side (0, -1, 0), on the right side
// (0, 1, 0).
type Mount struct {
	Up, Left, Forward Axis
	// Matrix, when non-nil, replaces the three axes with a general rotation
	// for a device that sits tilted: its rows are the body's up, left and
	// forward directions in device coordinates (unit vectors, mutually
	// orthogonal, left = up × forward), so body = Matrix · device.
	// MountFromUpright builds one from a standing period.
	Matrix *[3][3]float64
}

// DefaultMount is the chest mounting used when Options.Mount is zero.
var DefaultMount = Mount{Up: PosY, Left: PosX, Forward: PosZ}

func (m Mount) orDefault() Mount {
	if m == (Mount{}) {
		return DefaultMount
	}
	return m
}

// Validate reports whether the mount names three distinct device axes.
func (m Mount) Validate() error {
	m = m.orDefault()
	if r := m.Matrix; r != nil {
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				d := r[i][0]*r[j][0] + r[i][1]*r[j][1] + r[i][2]*r[j][2]
				want := 0.0
				if i == j {
					want = 1
				}
				if !(math.Abs(d-want) < 1e-6) {
					return fmt.Errorf("motion: mount matrix rows %d and %d not orthonormal (dot %v): %w", i, j, d, ErrOptions)
				}
			}
		}
		// Right-handed as the axes convention: left = up × forward.
		c := cross(r[0], r[2])
		if !(c[0]*r[1][0]+c[1]*r[1][1]+c[2]*r[1][2] > 0) {
			return fmt.Errorf("motion: mount matrix is a reflection (left is not up × forward): %w", ErrOptions)
		}
		return nil
	}
	seen := [3]bool{}
	for _, a := range []Axis{m.Up, m.Left, m.Forward} {
		i, _ := a.index()
		if i < 0 {
			return fmt.Errorf("motion: mount axis %v unknown: %w", a, ErrOptions)
		}
		if seen[i] {
			return fmt.Errorf("motion: mount %v/%v/%v uses a device axis twice: %w", m.Up, m.Left, m.Forward, ErrOptions)
		}
		seen[i] = true
	}
	return nil
}

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// MountFromUpright returns the mounting of a device that may sit tilted,
// from the mean acceleration of a period of quiet standing (gx, gy, gz in
// device axes, any unit: only the direction counts) and the signed device
// axis that points roughly out of the chest. Up is the measured gravity
// reaction; forward is that device axis with its component along up
// removed; left = up × forward. It fails when the vector is zero or
// the forward axis lies within 10° of up.
func MountFromUpright(gx, gy, gz float64, forward Axis) (Mount, error) {
	up := [3]float64{gx, gy, gz}
	n := math.Sqrt(gx*gx + gy*gy + gz*gz)
	if !(n > 0) || math.IsInf(n, 0) {
		return Mount{}, fmt.Errorf("motion: upright vector (%v, %v, %v): %w", gx, gy, gz, ErrInput)
	}
	for k := range up {
		up[k] /= n
	}
	i, sg := forward.index()
	if i < 0 {
		return Mount{}, fmt.Errorf("motion: forward axis %v unknown: %w", forward, ErrOptions)
	}
	var f [3]float64
	f[i] = sg
	d := f[0]*up[0] + f[1]*up[1] + f[2]*up[2]
	if math.Abs(d) > math.Cos(10*math.Pi/180) {
		return Mount{}, fmt.Errorf("motion: forward axis %v within 10° of the upright direction: %w", forward, ErrInput)
	}
	for k := range f {
		f[k] -= d * up[k]
	}
	fn := math.Sqrt(f[0]*f[0] + f[1]*f[1] + f[2]*f[2])
	for k := range f {
		f[k] /= fn
	}
	m := [3][3]float64{up, cross(up, f), f}
	return Mount{Matrix: &m}, nil
}

// CountMode names one way the band-passed, rectified signal becomes
// activity counts. Every epoch carries all three; Epoch.Counts picks one.
type CountMode int

// Count modes of classic actigraphy.
const (
	// CountsPIM is proportional integration: the time integral of the
	// rectified band-passed signal (area under the curve).
	CountsPIM CountMode = iota
	// CountsZC counts zero crossings of the band-passed signal, with the
	// threshold as a hysteresis band so sensor noise does not count.
	CountsZC
	// CountsTAT is time above threshold: seconds during which the rectified
	// band-passed signal exceeds the threshold.
	CountsTAT
)

// CountOptions configures Tidalbeat's activity counts. These are
// Tidalbeat's own counts: they follow the published shape of count
// pipelines (band-pass, rectify, dead band, clip, integrate), but the
// coefficients of any device's proprietary counts are not available to us,
// so the numbers are NOT equal to any device's counts and must not be
// compared with cut-points defined for them. Counts are computed on the
// vector magnitude of the calibrated acceleration (one filter), not per axis.
type CountOptions struct {
	// LowHz and HighHz bound the pass band of a Butterworth band-pass
	// (order 2 high-pass then order 2 low-pass, causal; the order is
	// Tidalbeat's choice). Defaults 0.29 and
	// 1.66 Hz: the pass band restated for Brønd et al. 2017 (0.29-1.63 Hz,
	// from memory, unverified) with the low-pass half-power cut-off 1.66 Hz
	// reported by Fridolfsson, Börjesson and Arvidsson, Sensors 18:3399, 2018.
	LowHz, HighHz float64
	// DeadBandG is subtracted from the rectified signal, which is floored at
	// zero, so sensor noise integrates to nothing. Default 0.068 g (the
	// dead band restated for Brønd et al. 2017; from memory, unverified).
	DeadBandG float64
	// ClipG caps the rectified signal before integration. Default 2.13 g
	// (restated for Brønd et al. 2017; from memory, unverified).
	ClipG float64
	// ThresholdG is the level for the zero-crossing hysteresis band (the
	// signal must go below -ThresholdG and above +ThresholdG) and for time
	// above threshold. Default 0.068 g, the dead band (Tidalbeat's choice).
	ThresholdG float64
}

func (c CountOptions) withDefaults() CountOptions {
	if c.LowHz == 0 {
		c.LowHz = 0.29
	}
	if c.HighHz == 0 {
		c.HighHz = 1.66
	}
	if c.DeadBandG == 0 {
		c.DeadBandG = 0.068
	}
	if c.ClipG == 0 {
		c.ClipG = 2.13
	}
	if c.ThresholdG == 0 {
		c.ThresholdG = 0.068
	}
	return c
}

// StepOptions configures the step detector: band-pass of the vector
// magnitude, peaks above an adaptive threshold, a refractory interval and a
// minimum regular run (methods reference section 6.5, common practice, no
// source). The defaults below were set from that common practice before the
// detector was scored on the step-counter validation walks (package tests)
// and were not tuned per walk or per carrying position. Known limitation:
// after hard running the adaptive threshold takes a few seconds to fall, so
// the first few steps of a walk that follows a run can be missed.
type StepOptions struct {
	// LowHz and HighHz bound the Butterworth band-pass (order 2 each) applied
	// to the vector magnitude. Defaults 0.5 and 3 Hz (common practice).
	LowHz, HighHz float64
	// MinPeakG is the smallest band-passed peak that can be a step.
	// Default 0.05 g (Tidalbeat's choice; rejects a 0.02 g sway).
	MinPeakG float64
	// RelPeak is the adaptive threshold as a fraction of the running RMS of
	// the band-passed signal (time constant RMSWindowS). Default 0.7.
	RelPeak float64
	// RMSWindowS is the time constant of the running RMS, s. Default 2.
	RMSWindowS float64
	// MinIntervalS is the refractory interval between steps, s. Default
	// 0.25 s (methods reference 6.5: 0.25-0.3 s, common practice).
	MinIntervalS float64
	// MaxIntervalS is the longest interval between steps of one run, s.
	// Default 2 s (common practice: slower than any walking cadence).
	MaxIntervalS float64
	// MinRun is the number of regular steps a run needs before any of its
	// steps count; regular means each interval lies within MinIntervalS
	// and MaxIntervalS of the previous step. Default 4 (methods reference
	// 6.5: 3-4, common practice).
	MinRun int
}

func (s StepOptions) withDefaults() StepOptions {
	if s.LowHz == 0 {
		s.LowHz = 0.5
	}
	if s.HighHz == 0 {
		s.HighHz = 3
	}
	if s.MinPeakG == 0 {
		s.MinPeakG = 0.05
	}
	if s.RelPeak == 0 {
		s.RelPeak = 0.7
	}
	if s.RMSWindowS == 0 {
		s.RMSWindowS = 2
	}
	if s.MinIntervalS == 0 {
		s.MinIntervalS = 0.25
	}
	if s.MaxIntervalS == 0 {
		s.MaxIntervalS = 2
	}
	if s.MinRun == 0 {
		s.MinRun = 4
	}
	return s
}

// PostureOptions configures posture and posture-change detection.
type PostureOptions struct {
	// GravityHz is the cut-off of the order-2 Butterworth low-pass that
	// estimates gravity for posture-change events, run on 0.1-s block means
	// (so below 5 Hz). Default 0.5 Hz (methods reference 6.4: <= ~0.5 Hz,
	// common practice).
	GravityHz float64
	// LyingDeg is the inclination of the up axis from vertical beyond which
	// the wearer is lying. Default 60° (methods reference 6.4, common
	// practice, no source).
	LyingDeg float64
	// ChangeDeg is the rotation of the gravity vector that starts a posture
	// change. Default 30° (Tidalbeat's choice).
	ChangeDeg float64
	// A change is confirmed when the gravity direction has stayed at least
	// ChangeDeg from the reference for StableS seconds. The reference is the
	// direction at the last change, updated to any direction then held
	// within StableDeg for StableS (so slow drift never adds up to a
	// change). Defaults 10° and 1 s (Tidalbeat's choice).
	StableDeg, StableS float64
}

func (p PostureOptions) withDefaults() PostureOptions {
	if p.GravityHz == 0 {
		p.GravityHz = 0.5
	}
	if p.LyingDeg == 0 {
		p.LyingDeg = 60
	}
	if p.ChangeDeg == 0 {
		p.ChangeDeg = 30
	}
	if p.StableDeg == 0 {
		p.StableDeg = 10
	}
	if p.StableS == 0 {
		p.StableS = 1
	}
	return p
}

// IntensityOptions holds the MAD cut-points between intensity classes.
type IntensityOptions struct {
	// ModerateMg is the light/moderate cut-point (3 MET). Default 91 mg,
	// and VigorousMg the moderate/vigorous cut-point (6 MET), default 414 mg:
	// Vähä-Ypyä et al., PLoS One 10(8):e0134813, 2015, validated for
	// hip-worn sensors in adults against measured oxygen uptake. They are
	// not validated for a chest-worn sensor; set your own where you have them.
	ModerateMg, VigorousMg float64
}

func (o IntensityOptions) withDefaults() IntensityOptions {
	if o.ModerateMg == 0 {
		o.ModerateMg = 91
	}
	if o.VigorousMg == 0 {
		o.VigorousMg = 414
	}
	return o
}

// ArtefactOptions decides the motion-artefact flag of a window.
type ArtefactOptions struct {
	// MADmg flags a window whose MAD reaches it. Default 91 mg, the
	// light/moderate cut-point (Tidalbeat's choice, no source: beyond light
	// activity, movement artefact in the ECG and above all in inductance
	// bands is to be expected). Tune it against your own quality labels.
	MADmg float64
	// NoPostureChange, when true, does not flag windows holding a posture
	// change (by default they are flagged, because a posture change shifts
	// the calibration of inductance bands).
	NoPostureChange bool
}

func (a ArtefactOptions) withDefaults() ArtefactOptions {
	if a.MADmg == 0 {
		a.MADmg = 91
	}
	return a
}

// Options configures the whole per-sample pipeline and the per-window
// summary. The zero value means every documented default.
type Options struct {
	Unit  Unit  // unit of the samples; UnitG when zero
	Mount Mount // device orientation on the body; DefaultMount when zero
	// Calibration, when non-nil, is applied to every sample (after the unit
	// conversion, before the mounting rotation). Get one from Calibrate.
	Calibration *Calibration
	// RangeG is the sensor's full-scale range: a sample with any axis at or
	// beyond it is marked saturated and its window flagged. Zero means
	// unknown (no saturation check).
	RangeG    float64
	Counts    CountOptions
	Steps     StepOptions
	Posture   PostureOptions
	Intensity IntensityOptions
	Artefact  ArtefactOptions
}

func (o Options) withDefaults() Options {
	o.Mount = o.Mount.orDefault()
	o.Counts = o.Counts.withDefaults()
	o.Steps = o.Steps.withDefaults()
	o.Posture = o.Posture.withDefaults()
	o.Intensity = o.Intensity.withDefaults()
	o.Artefact = o.Artefact.withDefaults()
	return o
}

// validate checks options after defaults, for sampling rate rateHz.
func (o Options) validate(rateHz float64) error {
	if !finite(rateHz) || rateHz < MinRateHz || rateHz > MaxRateHz {
		return fmt.Errorf("motion: sampling rate %v Hz outside %d..%d Hz: %w", rateHz, MinRateHz, MaxRateHz, ErrInput)
	}
	if o.Unit != UnitG && o.Unit != UnitMS2 {
		return fmt.Errorf("motion: unit %v: %w", o.Unit, ErrOptions)
	}
	if err := o.Mount.Validate(); err != nil {
		return err
	}
	nyq := rateHz / 2
	pos := func(name string, v float64) error {
		if !finite(v) || v <= 0 {
			return fmt.Errorf("motion: %s = %v must be positive and finite: %w", name, v, ErrOptions)
		}
		return nil
	}
	c, s, p, in, a := o.Counts, o.Steps, o.Posture, o.Intensity, o.Artefact
	for _, chk := range []struct {
		name string
		v    float64
	}{
		{"Counts.LowHz", c.LowHz}, {"Counts.HighHz", c.HighHz}, {"Counts.DeadBandG", c.DeadBandG},
		{"Counts.ClipG", c.ClipG}, {"Counts.ThresholdG", c.ThresholdG},
		{"Steps.LowHz", s.LowHz}, {"Steps.HighHz", s.HighHz}, {"Steps.MinPeakG", s.MinPeakG},
		{"Steps.RelPeak", s.RelPeak}, {"Steps.RMSWindowS", s.RMSWindowS}, {"Steps.MinIntervalS", s.MinIntervalS},
		{"Steps.MaxIntervalS", s.MaxIntervalS}, {"Posture.GravityHz", p.GravityHz}, {"Posture.LyingDeg", p.LyingDeg},
		{"Posture.ChangeDeg", p.ChangeDeg}, {"Posture.StableDeg", p.StableDeg}, {"Posture.StableS", p.StableS},
		{"Intensity.ModerateMg", in.ModerateMg}, {"Intensity.VigorousMg", in.VigorousMg}, {"Artefact.MADmg", a.MADmg},
	} {
		if err := pos(chk.name, chk.v); err != nil {
			return err
		}
	}
	switch {
	case c.LowHz >= c.HighHz || c.HighHz >= nyq:
		return fmt.Errorf("motion: count band %v-%v Hz at %v Hz: %w", c.LowHz, c.HighHz, rateHz, ErrOptions)
	case s.LowHz >= s.HighHz || s.HighHz >= nyq:
		return fmt.Errorf("motion: step band %v-%v Hz at %v Hz: %w", s.LowHz, s.HighHz, rateHz, ErrOptions)
	case p.GravityHz >= postureRateHz/2 || p.GravityHz >= nyq:
		return fmt.Errorf("motion: gravity cut-off %v Hz at %v Hz: %w", p.GravityHz, rateHz, ErrOptions)
	case s.MinIntervalS >= s.MaxIntervalS:
		return fmt.Errorf("motion: step intervals %v-%v s: %w", s.MinIntervalS, s.MaxIntervalS, ErrOptions)
	case s.MinRun < 1 || s.MinRun > 1000:
		return fmt.Errorf("motion: minimum run %d steps: %w", s.MinRun, ErrOptions)
	case in.ModerateMg >= in.VigorousMg:
		return fmt.Errorf("motion: cut-points %v >= %v mg: %w", in.ModerateMg, in.VigorousMg, ErrOptions)
	case p.LyingDeg >= 90 || p.ChangeDeg >= 180 || p.StableDeg >= p.ChangeDeg:
		return fmt.Errorf("motion: posture angles lying %v°, change %v°, stable %v°: %w", p.LyingDeg, p.ChangeDeg, p.StableDeg, ErrOptions)
	case o.RangeG < 0 || !finite(o.RangeG):
		return fmt.Errorf("motion: range %v g: %w", o.RangeG, ErrOptions)
	}
	if o.Calibration != nil {
		if err := o.Calibration.validate(); err != nil {
			return err
		}
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
