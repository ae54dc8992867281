package motion

import (
	"fmt"
	"math"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"github.com/tidalbeat/tidalbeat/window"
)

// Flags mark per-sample facts found by the per-sample pipeline.
type Flags uint8

// Sample flags.
const (
	FlagInvalid        Flags = 1 << iota // an axis was NaN or infinite; the sample carries no data
	FlagSaturated                        // an axis reached Options.RangeG
	FlagStep                             // a counted step was detected at this sample
	FlagZeroCross                        // the count band-pass crossed its hysteresis band here
	FlagAboveThreshold                   // the rectified count signal exceeded the threshold here
	FlagPostureChange                    // a posture change was confirmed at this sample
)

// Sample is the per-sample output of the pipeline, the input of Summarize.
// Values are float32 to keep a week at 50 Hz under a gigabyte; sums over
// windows are taken in float64.
type Sample struct {
	// VM is the vector magnitude of the calibrated acceleration, g (NaN
	// when FlagInvalid).
	VM float32
	// Up, Left and Forward are the calibrated acceleration along the body
	// axes of the Mount, g.
	Up, Left, Forward float32
	// Count is the rectified band-passed vector magnitude after the dead
	// band and clip of CountOptions, g: the integrand of the PIM counts.
	Count float32
	Flags Flags
}

// PostureChange is a sustained rotation of the gravity vector.
type PostureChange struct {
	// Start is when the gravity direction left the previous posture and End
	// when the new one had been stable for PostureOptions.StableS, seconds
	// from the origin.
	Start, End float64
	From, To   Posture // chest-worn posture classes before and after
	// AngleDeg is the rotation between the two gravity directions.
	AngleDeg float64
}

// Trace is the per-sample output of Derive: the samples and the events.
type Trace struct {
	RateHz  float64
	Samples []Sample
	// StepTimes are the counted steps, seconds from the origin (the time of
	// the band-passed peak; the causal filter delays it by roughly a
	// quarter of a step period, which is not compensated).
	StepTimes []float64
	Changes   []PostureChange
	// Gaps are the runs of invalid samples.
	Gaps []window.Interval
}

// sampleTime is the time of sample i; it matches the window engine's
// formula (t0 + i/rate with t0 = 0), so gaps agree bit for bit.
func sampleTime(rate float64, i int) float64 { return 0 + float64(i)/rate }

// processor is the one per-sample core behind Derive and Stream. Every stage
// is causal, so any chunking gives the same samples and events.
type processor struct {
	o    Options
	rate float64
	conv float64 // unit factor to g
	mi   [3]int  // device index of up, left, forward
	ms   [3]float64
	bo   [3]float64    // body-axis offset, g
	bs   [3]float64    // body-axis scale from raw units to g
	rot  bool          // Mount.Matrix given: calibrate (do, ds) then rotate (rm)
	rm   [3][3]float64 // rows: body up, left, forward in device axes
	do   [3]float64    // device-axis offset, g
	ds   [3]float64    // device-axis scale from raw units to g

	n       int // samples processed
	outBase int // global index of out[0]
	out     []Sample
	steps   []int
	changes []PostureChange

	fresh bool // next valid sample (re)starts the filters

	// counts
	cf     *pair
	zcSide int8

	// steps
	sf            *pair
	rmsA, ms2     float64
	p1, p2        float64
	haveP         int
	lastCand      int
	pending       []int
	runConfirmed  bool
	minIntN       int
	maxIntN       int
	minRun        int
	peakMin, relK float64

	// posture
	gf                          [3]*dsp.Filter
	pm, pk                      int        // samples per gravity block, samples in the current block
	psum                        [3]float64 // sum of the current block
	hasRef, moving              bool
	ref, cand                   [3]float64
	onset, stableSince, stableN int
	cosChange, cosStable        float64
}

func newProcessor(rateHz float64, opts Options) (*processor, error) {
	o := opts.withDefaults()
	if err := o.validate(rateHz); err != nil {
		return nil, err
	}
	p := &processor{o: o, rate: rateHz, conv: 1, fresh: true, lastCand: math.MinInt / 2}
	if o.Unit == UnitMS2 {
		p.conv = 1 / StandardGravity
	}
	if r := o.Mount.Matrix; r != nil {
		// General rotation: device values are calibrated first (dev), then
		// rotated per sample.
		p.rot, p.rm = true, *r
		for k := 0; k < 3; k++ {
			off, sc := 0.0, 1.0
			if c := o.Calibration; c != nil {
				off, sc = c.OffsetG[k], c.Scale[k]
			}
			p.do[k], p.ds[k] = off, sc*p.conv
		}
	}
	for k, a := range []Axis{o.Mount.Up, o.Mount.Left, o.Mount.Forward} {
		if p.rot {
			break
		}
		p.mi[k], p.ms[k] = a.index()
		off, sc := 0.0, 1.0
		if c := o.Calibration; c != nil {
			off, sc = c.OffsetG[p.mi[k]], c.Scale[p.mi[k]]
		}
		p.bo[k], p.bs[k] = p.ms[k]*off, p.ms[k]*sc*p.conv
	}
	c := o.Counts
	cc, err := dsp.ButterBandpass(2, c.LowHz, c.HighHz, rateHz)
	if err != nil {
		return nil, fmt.Errorf("motion: count filter: %w", err)
	}
	if p.cf, err = newPair(cc); err != nil {
		return nil, err
	}
	s := o.Steps
	sc, err := dsp.ButterBandpass(2, s.LowHz, s.HighHz, rateHz)
	if err != nil {
		return nil, fmt.Errorf("motion: step filter: %w", err)
	}
	if p.sf, err = newPair(sc); err != nil {
		return nil, err
	}
	p.rmsA = 1 - math.Exp(-1/(s.RMSWindowS*rateHz))
	p.minIntN = int(math.Round(s.MinIntervalS * rateHz))
	p.maxIntN = int(math.Round(s.MaxIntervalS * rateHz))
	p.minRun = s.MinRun
	p.peakMin, p.relK = s.MinPeakG, s.RelPeak
	// Gravity is followed at about 10 Hz: block means of pm samples feed the
	// low-pass, which is ample for a 0.5 Hz cut-off and keeps the posture
	// logic off the per-sample path.
	p.pm = max(1, int(math.Round(rateHz/postureRateHz)))
	gc, err := dsp.ButterLowpass(2, o.Posture.GravityHz, rateHz/float64(p.pm))
	if err != nil {
		return nil, fmt.Errorf("motion: gravity filter: %w", err)
	}
	for k := range p.gf {
		p.gf[k] = gc.NewFilter()
	}
	p.stableN = int(math.Round(o.Posture.StableS * rateHz))
	p.cosChange = math.Cos(o.Posture.ChangeDeg * math.Pi / 180)
	p.cosStable = math.Cos(o.Posture.StableDeg * math.Pi / 180)
	return p, nil
}

// push runs the pipeline over one chunk of raw samples.
func (p *processor) push(x, y, z []float64) error {
	if len(x) != len(y) || len(x) != len(z) {
		return fmt.Errorf("motion: axis lengths %d, %d, %d differ: %w", len(x), len(y), len(z), ErrInput)
	}
	for i := range x {
		p.step(x[i], y[i], z[i])
	}
	return nil
}

func (p *processor) step(x, y, z float64) {
	i := p.n
	p.n++
	p.expireRun(i)
	if x-x != 0 || y-y != 0 || z-z != 0 { // NaN or infinite (v-v is NaN for both)
		p.out = append(p.out, Sample{VM: float32(math.NaN()), Up: float32(math.NaN()), Left: float32(math.NaN()), Forward: float32(math.NaN()), Flags: FlagInvalid})
		p.fresh = true
		return
	}
	var fl Flags
	if r := p.o.RangeG; r > 0 {
		// Saturation is judged on the raw reading in g, before calibration.
		if math.Abs(x*p.conv) >= r || math.Abs(y*p.conv) >= r || math.Abs(z*p.conv) >= r {
			fl |= FlagSaturated
		}
	}
	// Unit, calibration and mounting folded into one affine map per body
	// axis (newProcessor): b = offset + scale * raw device axis.
	raw := [3]float64{x, y, z}
	var b [3]float64
	if p.rot {
		d := [3]float64{p.do[0] + p.ds[0]*x, p.do[1] + p.ds[1]*y, p.do[2] + p.ds[2]*z}
		for k := range b {
			b[k] = p.rm[k][0]*d[0] + p.rm[k][1]*d[1] + p.rm[k][2]*d[2]
		}
	} else {
		b = [3]float64{p.bo[0] + p.bs[0]*raw[p.mi[0]], p.bo[1] + p.bs[1]*raw[p.mi[1]], p.bo[2] + p.bs[2]*raw[p.mi[2]]}
	}
	vm := math.Sqrt(b[0]*b[0] + b[1]*b[1] + b[2]*b[2])
	if !(vm <= maxPlausibleG) {
		// Not a physical acceleration (or an overflow): flag it rather than
		// let it poison every filter state that follows.
		p.out = append(p.out, Sample{VM: float32(math.NaN()), Up: float32(math.NaN()), Left: float32(math.NaN()), Forward: float32(math.NaN()), Flags: FlagInvalid})
		p.fresh = true
		return
	}
	if p.fresh {
		// Start (or restart after a gap) every filter in its steady state
		// for this sample, so a constant input produces no transient.
		p.cf.reset(vm)
		p.sf.reset(vm)
		for k := range p.gf {
			p.gf[k].Reset(b[k])
		}
		p.pk, p.psum = 0, [3]float64{}
		p.haveP = 0
		p.fresh = false
	}

	// Counts: band-pass, rectify, dead band, clip (CountOptions).
	c := &p.o.Counts
	bp := p.cf.step(vm)
	r := math.Abs(bp) - c.DeadBandG
	if r < 0 {
		r = 0
	}
	if r > c.ClipG {
		r = c.ClipG
	}
	if math.Abs(bp) > c.ThresholdG {
		fl |= FlagAboveThreshold
	}
	switch {
	case bp > c.ThresholdG:
		if p.zcSide < 0 {
			fl |= FlagZeroCross
		}
		p.zcSide = 1
	case bp < -c.ThresholdG:
		if p.zcSide > 0 {
			fl |= FlagZeroCross
		}
		p.zcSide = -1
	}
	p.out = append(p.out, Sample{VM: float32(vm), Up: float32(b[0]), Left: float32(b[1]), Forward: float32(b[2]), Count: float32(r), Flags: fl})

	p.stepDetect(i, p.sf.step(vm))
	p.psum[0] += b[0]
	p.psum[1] += b[1]
	p.psum[2] += b[2]
	if p.pk++; p.pk == p.pm {
		p.posture(i)
	}
}

// stepDetect finds band-passed peaks above the adaptive threshold and keeps
// them once they form a regular run (StepOptions).
func (p *processor) stepDetect(i int, s float64) {
	p.ms2 += p.rmsA * (s*s - p.ms2)
	if p.haveP >= 2 && p.p1 > p.p2 && p.p1 >= s {
		peak := i - 1
		thr := math.Max(p.peakMin, p.relK*math.Sqrt(p.ms2))
		if p.p1 > thr && peak-p.lastCand >= p.minIntN {
			p.candidate(peak)
		}
	}
	p.p2, p.p1 = p.p1, s
	if p.haveP < 2 {
		p.haveP++
	}
}

// expireRun ends the current run when no candidate followed the last one
// within the longest step interval; an unconfirmed run is discarded.
func (p *processor) expireRun(i int) {
	if i-p.lastCand > p.maxIntN && (len(p.pending) > 0 || p.runConfirmed) {
		p.pending = p.pending[:0]
		p.runConfirmed = false
	}
}

func (p *processor) candidate(idx int) {
	if idx-p.lastCand > p.maxIntN {
		p.pending = p.pending[:0]
		p.runConfirmed = false
	}
	p.lastCand = idx
	if p.runConfirmed {
		p.markStep(idx)
		return
	}
	p.pending = append(p.pending, idx)
	if len(p.pending) >= p.minRun {
		for _, j := range p.pending {
			p.markStep(j)
		}
		p.pending = p.pending[:0]
		p.runConfirmed = true
	}
}

func (p *processor) markStep(idx int) {
	p.out[idx-p.outBase].Flags |= FlagStep
	p.steps = append(p.steps, idx)
}

// posture tracks the low-passed gravity direction and reports sustained
// rotations (PostureOptions).
func (p *processor) posture(i int) {
	var g [3]float64
	for k := range g {
		g[k] = p.gf[k].Step(p.psum[k] / float64(p.pm))
	}
	p.pk, p.psum = 0, [3]float64{}
	n := math.Sqrt(g[0]*g[0] + g[1]*g[1] + g[2]*g[2])
	if n < 0.1 { // free fall or a broken sensor: no direction to follow
		return
	}
	for k := range g {
		g[k] /= n
	}
	if !p.hasRef {
		p.ref, p.cand, p.hasRef = g, g, true
		return
	}
	if !p.moving {
		// While settled, the reference snaps to any direction held within
		// StableDeg for StableS, so slow drifts never add up to a change.
		if dot(g, p.cand) < p.cosStable {
			p.cand, p.stableSince = g, i
		} else if i-p.stableSince >= p.stableN {
			p.ref = p.cand
		}
		if dot(g, p.ref) < p.cosChange {
			p.moving, p.onset = true, i
		}
		return
	}
	// Moving: a change is confirmed when the direction has stayed at least
	// ChangeDeg from the reference for StableS; coming back cancels it. Not
	// requiring the new direction to be still lets a change be seen even
	// when walking starts straight after it (sensor in a trouser pocket).
	c := dot(g, p.ref)
	if c >= p.cosChange {
		p.moving = false
		return
	}
	if i-p.onset < p.stableN {
		return
	}
	p.moving = false
	lying := p.o.Posture.LyingDeg
	p.changes = append(p.changes, PostureChange{
		Start:    sampleTime(p.rate, p.onset),
		End:      sampleTime(p.rate, i),
		From:     classify(p.ref[0], p.ref[1], p.ref[2], lying),
		To:       classify(g[0], g[1], g[2], lying),
		AngleDeg: math.Acos(math.Max(-1, math.Min(1, c))) * 180 / math.Pi,
	})
	p.out[i-p.outBase].Flags |= FlagPostureChange
	p.ref, p.cand, p.stableSince = g, g, i
}

// maxPlausibleG is the largest vector magnitude taken as a measurement;
// anything above it (10,000 g, beyond any body-worn sensor) is flagged
// invalid.
const maxPlausibleG = 1e4

// postureRateHz is the rate at which gravity and posture are followed.
const postureRateHz = 10

func dot(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }

// releasable returns the global index below which no sample can still be
// changed: later peaks land at n-1 or after, and unconfirmed candidates may
// still be marked as steps.
func (p *processor) releasable() int {
	r := p.n - 1
	if len(p.pending) > 0 && p.pending[0] < r {
		r = p.pending[0]
	}
	if r < p.outBase {
		r = p.outBase
	}
	return r
}

// Derive runs the per-sample pipeline over whole axes (x, y, z in
// opts.Unit, sample i at i/rateHz seconds from the origin) and returns the
// samples and events. Invalid (NaN or infinite) samples are kept, flagged,
// and reported as gaps.
func Derive(x, y, z []float64, rateHz float64, opts Options) (*Trace, error) {
	p, err := newProcessor(rateHz, opts)
	if err != nil {
		return nil, err
	}
	p.out = make([]Sample, 0, len(x))
	if err := p.push(x, y, z); err != nil {
		return nil, err
	}
	tr := &Trace{RateHz: rateHz, Samples: p.out, Changes: p.changes}
	tr.StepTimes = make([]float64, len(p.steps))
	for k, i := range p.steps {
		tr.StepTimes[k] = sampleTime(rateHz, i)
	}
	for i := 0; i < len(p.out); {
		if p.out[i].Flags&FlagInvalid == 0 {
			i++
			continue
		}
		j := i
		for j < len(p.out) && p.out[j].Flags&FlagInvalid != 0 {
			j++
		}
		tr.Gaps = append(tr.Gaps, window.Interval{Start: sampleTime(rateHz, i), End: sampleTime(rateHz, j)})
		i = j
	}
	return tr, nil
}
