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
	return nonWearWindow(x, y, z, 1, o.withDefaults())
}

// axisStats accumulates one axis over a run of samples: count, sums of
// deviations from a fixed reference (shifted sums keep mg-level spreads
// accurate around 1 g), minimum and maximum, all in raw units.
type axisStats struct {
	n, s, ss, lo, hi float64
}

func (a *axisStats) merge(b axisStats) {
	if b.n == 0 {
		return
	}
	if a.n == 0 {
		*a = b
		return
	}
	a.n += b.n
	a.s += b.s
	a.ss += b.ss
	a.lo = min(a.lo, b.lo)
	a.hi = max(a.hi, b.hi)
}

// sd is the sample standard deviation (n-1) in raw units.
func (a *axisStats) sd() float64 {
	return math.Sqrt(math.Max(0, (a.ss-a.s*a.s/a.n)/(a.n-1)))
}

// still reports whether the axis passes the SD and range limits (conv: raw
// unit to g).
func (a *axisStats) still(conv float64, o NonWearOptions) (ok, enough bool) {
	if a.n < 2 {
		return false, false
	}
	sdOK := 1000*conv*a.sd() < o.SDmg
	rgOK := 1000*conv*(a.hi-a.lo) < o.RangeMg
	if o.Either {
		return sdOK || rgOK, true
	}
	return sdOK && rgOK, true
}

// decide applies the rule to the three axes' statistics.
func decide(st *[3]axisStats, conv float64, o NonWearOptions) bool {
	still := 0
	for k := range st {
		ok, enough := st[k].still(conv, o)
		if !enough {
			return false
		}
		if ok {
			still++
		}
	}
	return still >= o.MinAxes
}

func statsOf(x, y, z []float64, ref [3]float64) [3]axisStats {
	var st [3]axisStats
	for k, a := range [][]float64{x, y, z} {
		st[k] = axisOf(a, ref[k])
	}
	return st
}

// axisOf gathers the statistics of one axis over a slice (this runs over
// every sample of a week, so the first-sample case is kept out of the loop).
func axisOf(a []float64, ref float64) axisStats {
	var st axisStats
	i := 0
	for i < len(a) && a[i]-a[i] != 0 {
		i++
	}
	if i == len(a) {
		return st
	}
	lo, hi := a[i], a[i]
	var n, s, ss float64
	for _, v := range a[i:] {
		if v-v != 0 { // NaN or infinite
			continue
		}
		n++
		d := v - ref
		s += d
		ss += d * d
		if v < lo {
			lo = v
		} else if v > hi {
			hi = v
		}
	}
	return axisStats{n: n, s: s, ss: ss, lo: lo, hi: hi}
}

// invalidRuns3 returns, as gaps, the runs of samples where any axis is NaN
// or infinite (the union of window.InvalidRuns over the axes, in one pass).
func invalidRuns3(x, y, z []float64, rate float64) []window.Interval {
	var out []window.Interval
	for i := 0; i < len(x); {
		if x[i]-x[i] == 0 && y[i]-y[i] == 0 && z[i]-z[i] == 0 {
			i++
			continue
		}
		j := i
		for j < len(x) && !(x[j]-x[j] == 0 && y[j]-y[j] == 0 && z[j]-z[j] == 0) {
			j++
		}
		out = append(out, window.Interval{Start: sampleTime(rate, i), End: sampleTime(rate, j)})
		i = j
	}
	return out
}

// nonWearWindow applies the rule to samples in any unit with conv the
// factor to g.
func nonWearWindow(x, y, z []float64, conv float64, o NonWearOptions) bool {
	ref := [3]float64{firstFinite(x), firstFinite(y), firstFinite(z)}
	st := statsOf(x, y, z, ref)
	return decide(&st, conv, o)
}

func firstFinite(a []float64) float64 {
	for _, v := range a {
		if finite(v) {
			return v
		}
	}
	return 0
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
	seq, err := g.Samples(rateHz, 0, len(x), invalidRuns3(x, y, z, rateHz))
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear: %w", err)
	}
	// The windows overlap (60 min every 15 min by default), so statistics
	// are gathered once per step-long block, from the engine's grid of
	// blocks, and each window merges the blocks that tile it exactly; a
	// window that no run of blocks tiles is summed directly.
	bg, err := window.NewGrid(window.Spec{Length: spec.Step, Step: spec.Step, Anchor: window.AnchorStart}, time.Unix(0, 0))
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear: %w", err)
	}
	bseq, err := bg.Samples(rateHz, 0, len(x), nil)
	if err != nil {
		return nil, fmt.Errorf("motion: non-wear: %w", err)
	}
	ref := [3]float64{firstFinite(x), firstFinite(y), firstFinite(z)}
	type block struct {
		lo, hi int
		st     [3]axisStats
	}
	var blocks []block
	for b := range bseq {
		blocks = append(blocks, block{lo: b.Lo, hi: b.Hi, st: statsOf(x[b.Lo:b.Hi], y[b.Lo:b.Hi], z[b.Lo:b.Hi], ref)})
	}
	var out []window.Interval
	end := sampleTime(rateHz, len(x))
	bi := 0
	for w := range seq {
		if !w.Valid {
			continue
		}
		for bi < len(blocks) && blocks[bi].lo < w.Lo {
			bi++
		}
		var st [3]axisStats
		at := w.Lo
		for j := bi; j < len(blocks) && blocks[j].hi <= w.Hi && blocks[j].lo == at; j++ {
			for k := range st {
				st[k].merge(blocks[j].st[k])
			}
			at = blocks[j].hi
		}
		if at != w.Hi {
			st = statsOf(x[w.Lo:w.Hi], y[w.Lo:w.Hi], z[w.Lo:w.Hi], ref)
		}
		if decide(&st, conv, o) {
			out = append(out, window.Interval{Start: math.Max(w.Start, 0), End: math.Min(w.End, end)})
		}
	}
	return window.NormalizeGaps(out)
}
