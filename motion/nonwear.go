package motion

import (
	"fmt"
	"math"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// NonWearOptions configures NonWear. The defaults are the later rule of van
// Hees et al., PLoS One 8(4):e61691, 2013 (from memory, unverified): 60-min
// windows moved in 15-min steps, an axis is still when its SD < 13 mg and
// its range < 50 mg, non-wear when at least 2 of 3 axes are still. Set
// WindowS 1800, SDmg 3 and Either true for the earlier rule of van Hees et
// al., PLoS One 6(7):e22922, 2011 (SD < 3 mg or range < 50 mg; from memory,
// unverified).
type NonWearOptions struct {
	WindowS, StepS float64 // window length and step, s; defaults 3600 and 900
	SDmg, RangeMg  float64 // per-axis limits, mg; defaults 13 and 50
	MinAxes        int     // still axes needed; default 2
	// Either makes an axis still when either limit holds (2011 rule)
	// instead of both (2013 rule).
	Either bool
}

func (o NonWearOptions) withDefaults() NonWearOptions {
	if o.WindowS == 0 {
		o.WindowS = 3600
	}
	if o.StepS == 0 {
		o.StepS = 900
	}
	if o.SDmg == 0 {
		o.SDmg = 13
	}
	if o.RangeMg == 0 {
		o.RangeMg = 50
	}
	if o.MinAxes == 0 {
		o.MinAxes = 2
	}
	return o
}

// NonWearWindow reports whether the samples of one window (device axes, g;
// non-finite samples skipped) look like a device lying off the body. It is
// the pure per-window function behind NonWear. It returns false for fewer
// than two valid samples.
func NonWearWindow(x, y, z []float64, o NonWearOptions) bool {
	o = o.withDefaults()
	still := 0
	for _, a := range [][]float64{x, y, z} {
		var s, ss float64
		n := 0
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range a {
			if !finite(v) {
				continue
			}
			n++
			s += v
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		if n < 2 {
			return false
		}
		mu := s / float64(n)
		for _, v := range a {
			if finite(v) {
				ss += (v - mu) * (v - mu)
			}
		}
		sdOK := 1000*math.Sqrt(ss/float64(n-1)) < o.SDmg
		rgOK := 1000*(hi-lo) < o.RangeMg
		if (o.Either && (sdOK || rgOK)) || (!o.Either && sdOK && rgOK) {
			still++
		}
	}
	return still >= o.MinAxes
}

// NonWear returns the non-wear periods (s from the first sample, merged) of
// x, y, z in unit u at rateHz: the union of the engine's windows that
// NonWearWindow calls non-wear. Windows with less than 80 % valid samples are
// not judged.
func NonWear(x, y, z []float64, rateHz float64, u Unit, opts NonWearOptions) ([]window.Interval, error) {
	o := opts.withDefaults()
	if len(x) != len(y) || len(x) != len(z) {
		return nil, fmt.Errorf("motion: non-wear: axis lengths %d, %d, %d differ: %w", len(x), len(y), len(z), ErrInput)
	}
	if !finite(rateHz) || rateHz < MinRateHz || rateHz > MaxRateHz {
		return nil, fmt.Errorf("motion: non-wear: rate %v Hz: %w", rateHz, ErrInput)
	}
	if !(o.WindowS > 0) || !(o.StepS > 0) || !(o.SDmg > 0) || !(o.RangeMg > 0) || o.MinAxes < 1 || o.MinAxes > 3 {
		return nil, fmt.Errorf("motion: non-wear options %+v: %w", o, ErrOptions)
	}
	conv := 1.0
	if u == UnitMS2 {
		conv = 1 / StandardGravity
	}
	spec := window.Spec{Length: time.Duration(o.WindowS * 1e9), Step: time.Duration(o.StepS * 1e9), Anchor: window.AnchorStart}
	g, err := window.NewGrid(spec, time.Unix(0, 0))
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear: %w", err)
	}
	gaps := window.InvalidRuns(window.InvalidRuns(window.InvalidRuns(nil, x, rateHz, 0), y, rateHz, 0), z, rateHz, 0)
	seq, err := g.Samples(rateHz, 0, len(x), gaps)
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear: %w", err)
	}
	var bx, by, bz []float64
	var out []window.Interval
	end := sampleTime(rateHz, len(x))
	for w := range seq {
		if !w.Valid {
			continue
		}
		bx, by, bz = scaled(bx, x[w.Lo:w.Hi], conv), scaled(by, y[w.Lo:w.Hi], conv), scaled(bz, z[w.Lo:w.Hi], conv)
		if NonWearWindow(bx, by, bz, o) {
			out = append(out, window.Interval{Start: math.Max(w.Start, 0), End: math.Min(w.End, end)})
		}
	}
	return window.NormalizeGaps(out)
}

func scaled(dst, x []float64, c float64) []float64 {
	dst = dst[:0]
	for _, v := range x {
		dst = append(dst, v*c)
	}
	return dst
}
