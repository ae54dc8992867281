package motion

import (
	"fmt"
	"math"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// Calibration is a per-axis offset and scale in device axes: calibrated =
// OffsetG + Scale * raw (raw in g).
type Calibration struct {
	OffsetG [3]float64
	Scale   [3]float64
	// Points is the number of still windows the fit used; ErrorBeforeMg and
	// ErrorAfterMg are the RMS distances of their mean vectors from the unit
	// sphere before and after calibration.
	Points                      int
	ErrorBeforeMg, ErrorAfterMg float64
}

func (c *Calibration) validate() error {
	for k := 0; k < 3; k++ {
		if !finite(c.OffsetG[k]) || !finite(c.Scale[k]) || c.Scale[k] <= 0 || math.Abs(c.OffsetG[k]) > 2 {
			return fmt.Errorf("motion: calibration axis %d offset %v g scale %v: %w", k, c.OffsetG[k], c.Scale[k], ErrOptions)
		}
	}
	return nil
}

// CalibrationOptions configures Calibrate. Defaults after van Hees et al.,
// J Appl Physiol 117(7):738-744, 2014 (from memory, unverified: 10-s windows,
// still when every axis SD < 13 mg; an axis must see gravity on both sides).
type CalibrationOptions struct {
	WindowS    float64 // still-window length, s; default 10
	StillSDmg  float64 // per-axis SD limit of a still window, mg; default 13
	MinSpreadG float64 // each axis needs still means both above +MinSpreadG and below -MinSpreadG; default 0.3 g
	MinPoints  int     // fewest still windows; default 10
	MaxIter    int     // iterations of the sphere fit; default 1000
}

func (c CalibrationOptions) withDefaults() CalibrationOptions {
	if c.WindowS == 0 {
		c.WindowS = 10
	}
	if c.StillSDmg == 0 {
		c.StillSDmg = 13
	}
	if c.MinSpreadG == 0 {
		c.MinSpreadG = 0.3
	}
	if c.MinPoints == 0 {
		c.MinPoints = 10
	}
	if c.MaxIter == 0 {
		c.MaxIter = 1000
	}
	return c
}

// Calibrate fits a per-axis offset and scale so that the mean acceleration of
// still periods lies on the 1 g sphere (the auto-calibration principle of
// van Hees et al. 2014). x, y, z are in unit u (device axes), sampled at
// rateHz. Still windows are found with the window engine (non-overlapping
// windows of WindowS). It returns ErrCalibration when the still periods are
// too few or do not cover both directions of every axis, because then the
// fit is not determined. A chest-worn sensor rarely sees its up axis point
// down, so a day of chest data alone often cannot be calibrated; calibrate
// from a recording that includes lying in several positions, or from a
// bench session with the device turned through all six faces, and pass the
// result in Options.Calibration.
func Calibrate(x, y, z []float64, rateHz float64, u Unit, opts CalibrationOptions) (*Calibration, error) {
	o := opts.withDefaults()
	if len(x) != len(y) || len(x) != len(z) {
		return nil, fmt.Errorf("motion: calibrate: axis lengths %d, %d, %d differ: %w", len(x), len(y), len(z), ErrInput)
	}
	if !finite(rateHz) || rateHz < MinRateHz || rateHz > MaxRateHz {
		return nil, fmt.Errorf("motion: calibrate: rate %v Hz: %w", rateHz, ErrInput)
	}
	if !(o.WindowS > 0) || !(o.StillSDmg > 0) || !(o.MinSpreadG >= 0) || o.MinPoints < 4 || o.MaxIter < 1 {
		return nil, fmt.Errorf("motion: calibrate: options %+v: %w", o, ErrOptions)
	}
	conv := 1.0
	if u == UnitMS2 {
		conv = 1 / StandardGravity
	}
	d := time.Duration(o.WindowS * float64(time.Second))
	g, err := window.NewGrid(window.Spec{Length: d, Step: d, Anchor: window.AnchorStart, MinCoverage: 1}, time.Unix(0, 0))
	if err != nil {
		return nil, fmt.Errorf("motion: calibrate: %w", err)
	}
	seq, err := g.Samples(rateHz, 0, len(x), window.InvalidRuns(window.InvalidRuns(window.InvalidRuns(nil, x, rateHz, 0), y, rateHz, 0), z, rateHz, 0))
	if err != nil {
		return nil, fmt.Errorf("motion: calibrate: %w", err)
	}
	var pts [][3]float64
	for w := range seq {
		if !w.Valid {
			continue
		}
		if m, ok := stillMean(x[w.Lo:w.Hi], y[w.Lo:w.Hi], z[w.Lo:w.Hi], conv, o.StillSDmg/1000); ok {
			pts = append(pts, m)
		}
	}
	if len(pts) < o.MinPoints {
		return nil, fmt.Errorf("motion: calibrate: %d still windows, need %d: %w", len(pts), o.MinPoints, ErrCalibration)
	}
	for k := 0; k < 3; k++ {
		lo, hi := false, false
		for _, p := range pts {
			lo = lo || p[k] < -o.MinSpreadG
			hi = hi || p[k] > o.MinSpreadG
		}
		if !lo || !hi {
			return nil, fmt.Errorf("motion: calibrate: axis %d never saw gravity on both sides (±%v g): %w", k, o.MinSpreadG, ErrCalibration)
		}
	}
	c := &Calibration{Scale: [3]float64{1, 1, 1}, Points: len(pts)}
	c.ErrorBeforeMg = sphereError(pts, c)
	// Alternate: project the calibrated points on the unit sphere, then
	// refit each axis's offset and scale by least squares to the projection.
	prev := math.Inf(1)
	for it := 0; it < o.MaxIter; it++ {
		var sx, sy, sxx, sxy [3]float64
		for _, p := range pts {
			var q [3]float64
			for k := range q {
				q[k] = c.OffsetG[k] + c.Scale[k]*p[k]
			}
			n := math.Sqrt(q[0]*q[0] + q[1]*q[1] + q[2]*q[2])
			for k := range q {
				t := q[k] / n
				sx[k] += p[k]
				sy[k] += t
				sxx[k] += p[k] * p[k]
				sxy[k] += p[k] * t
			}
		}
		fn := float64(len(pts))
		for k := 0; k < 3; k++ {
			den := fn*sxx[k] - sx[k]*sx[k]
			if den <= 0 {
				return nil, fmt.Errorf("motion: calibrate: axis %d degenerate: %w", k, ErrCalibration)
			}
			c.Scale[k] = (fn*sxy[k] - sx[k]*sy[k]) / den
			c.OffsetG[k] = (sy[k] - c.Scale[k]*sx[k]) / fn
		}
		e := sphereError(pts, c)
		if prev-e < 1e-9 {
			break
		}
		prev = e
	}
	c.ErrorAfterMg = sphereError(pts, c)
	if err := c.validate(); err != nil {
		return nil, fmt.Errorf("motion: calibrate: fit diverged: %w", ErrCalibration)
	}
	return c, nil
}

// stillMean returns the mean of each axis (g) when every axis's SD is below
// sdLim (g); the statistics are those of non-wear (axisOf).
func stillMean(x, y, z []float64, conv, sdLim float64) ([3]float64, bool) {
	var m [3]float64
	for k, a := range [][]float64{x, y, z} {
		st := axisOf(a, firstFinite(a))
		if st.n < 2 || conv*st.sd() >= sdLim {
			return m, false
		}
		m[k] = conv * (firstFinite(a) + st.s/st.n)
	}
	return m, true
}

func sphereError(pts [][3]float64, c *Calibration) float64 {
	var s float64
	for _, p := range pts {
		var q [3]float64
		for k := range q {
			q[k] = c.OffsetG[k] + c.Scale[k]*p[k]
		}
		d := math.Sqrt(q[0]*q[0]+q[1]*q[1]+q[2]*q[2]) - 1
		s += d * d
	}
	return 1000 * math.Sqrt(s/float64(len(pts)))
}
