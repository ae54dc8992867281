package resp

import (
	"fmt"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
	"github.com/tidalbeat/tidalbeat/window"
)

// Detect finds the breaths in the rib-cage and abdominal bands, sampled
// together at opt.RateHz. NaN, infinite or absurd (magnitude above 1e15)
// samples in either band become gaps
// (Result.Gaps) and detection restarts after each. It is the batch driver of
// the same core the Stream type feeds, so both give identical results.
//
// Conditioning (documented bands): each band is low-passed (order-2
// Butterworth, Options.LowpassHz, 2 Hz by default) and the weighted sum of the
// low-passed bands is the volume signal on which peaks and troughs are
// located and volumes measured; copies of the bands are also high-passed
// (order-1 Butterworth, Options.HighpassHz, 0.05 Hz) to remove drift for the
// phase angles. Motion above the low-pass band is filtered out; motion
// inside the breathing band cannot be told from breathing without a
// reference, so it is detected (the sum's energy above the low-pass band,
// implausibly large excursions, or caller-supplied Options.Motion spans)
// and flagged per breath, and flagged breaths are left out of the window
// features and of event baselines rather than "corrected". Reported times are corrected for the low-pass delay at low
// frequency (sqrt(2)/(2*pi*fc) for order 2; 0.11 s at 2 Hz).
//
// Segmentation is by alternating extrema with an adaptive threshold (methods
// reference 5.2, common practice): a peak is confirmed when the sum has
// fallen from it, and a trough when the sum has risen from it, by
// 2*HysteresisFrac times the median amplitude of the last ten clean breaths
// (the drift-removed detection signal sets that reference until three
// breaths are known). Measuring from the last extremum rather than from a
// baseline keeps shallow breaths after deep ones, and breaths on a drifting
// baseline, detectable. After two breath lengths (at least 8 s) with no
// breath the reference decays (time constant 30 s, to 35 %, so nothing at
// the apnea level of 10 % is taken for a breath); a breath accepted only
// thanks to the decay restarts the reference from itself, so a lasting step
// down of ventilation is followed within a few breaths. A
// flat trough longer than PauseMinS is split into end of expiration, pause
// and next onset.
func Detect(rib, abd []float64, opt Options) (Result, error) {
	if len(rib) != len(abd) {
		return Result{}, fmt.Errorf("resp: %d rib-cage and %d abdominal samples: %w", len(rib), len(abd), ErrInput)
	}
	if len(rib) == 0 {
		return Result{}, fmt.Errorf("resp: no samples: %w", ErrInput)
	}
	c, err := newCore(opt)
	if err != nil {
		return Result{}, err
	}
	c.out.Breaths = make([]Breath, 0, int(float64(len(rib))/opt.RateHz/3)+1)
	c.push(rib, abd)
	c.close()
	return c.out, nil
}

// Stream is the streaming driver of breath detection: push chunks of both
// bands in time order and collect the breaths as they complete. It feeds the
// same core as Detect, so any chunking gives the breaths Detect gives, bit for
// bit. Memory is bounded by Options.BufferS of signal. It is not safe for
// concurrent use.
type Stream struct {
	c      *core
	closed bool
}

// NewStream returns a stream for bands sampled at opt.RateHz.
func NewStream(opt Options) (*Stream, error) {
	c, err := newCore(opt)
	if err != nil {
		return nil, err
	}
	return &Stream{c: c}, nil
}

// Push feeds the next samples of both bands (equal lengths).
func (s *Stream) Push(rib, abd []float64) error {
	if s.closed {
		return ErrClosed
	}
	if len(rib) != len(abd) {
		return fmt.Errorf("resp: stream: %d rib-cage and %d abdominal samples: %w", len(rib), len(abd), ErrInput)
	}
	s.c.push(rib, abd)
	return nil
}

// Close ends the stream; a breath still in progress is counted as discarded.
func (s *Stream) Close() error {
	if s.closed {
		return ErrClosed
	}
	s.closed = true
	s.c.close()
	return nil
}

// Drain returns the breaths, pause excursions and gaps completed since the
// last Drain (appended to the given slices, which may be nil) and forgets
// them, so memory stays bounded.
func (s *Stream) Drain(breaths []Breath, pauses []Excursion, gaps []window.Interval) ([]Breath, []Excursion, []window.Interval) {
	breaths = append(breaths, s.c.out.Breaths...)
	pauses = append(pauses, s.c.out.Pauses...)
	gaps = append(gaps, s.c.out.Gaps...)
	s.c.out.Breaths = s.c.out.Breaths[:0]
	s.c.out.Pauses = s.c.out.Pauses[:0]
	s.c.out.Gaps = s.c.out.Gaps[:0]
	return breaths, pauses, gaps
}

// Discarded returns the number of breath candidates dropped so far.
func (s *Stream) Discarded() int { return s.c.out.Discarded }

// Calibration returns the calibration the stream's volumes use.
func (s *Stream) Calibration() Calibration { return s.c.out.Calibration }

const (
	stInit = iota
	stHigh
	stLow
)

const nRecent = 10 // breaths in the adaptive reference (methods reference 5.2: ~10)

type core struct {
	o      Options
	a, b   float64
	litres bool
	fs     float64
	delay  float64

	lpR, lpA, hpR, hpA, hfS *dsp.Filter

	cap, mask                int
	m, rf, af, rl, al, hf2   []float64
	flag                     []uint8
	n                        int // global index of the next sample
	started                  bool
	startN                   int
	lastR, lastA             float64
	runR, runA, clipN, flatN int

	state        int
	iHi, iLo     int // running extremes before the first transition
	onset, peak  int
	ext          int
	quietFrom    int
	lastAccept   int
	amps         []float64 // recent clean breath amplitudes (ring)
	ribs, abds   []float64
	tis, tes     []float64
	medTi, medTe float64 // recent median Ti, Te (s); 1.5 and 2.5 before any breath
	medTtot      float64
	maxTi        int     // longest plausible inspiration (samples)
	delayS       float64 // time without a breath before the reference decays (s)
	recentPos    int
	ref          float64 // median of amps
	refRib       float64
	refAbd       float64
	warmHi       float64
	warmLo       float64
	spanN        int
	pauseMinN    int
	minBreathN   int
	inGap        bool
	gapStart     float64
	motion       []window.Interval
	motionCursor int
	bufR, bufA   []float64

	out Result
}

// maxSample is the largest band magnitude accepted; larger (or NaN, Inf)
// samples are invalid and become gaps: squares of larger values could
// overflow the filters' state.
const maxSample = 1e15

const (
	flagClip uint8 = 1 << iota
	flagFlat
)

func newCore(opt Options) (*core, error) {
	o, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	lp, err := dsp.ButterLowpass(2, o.LowpassHz, o.RateHz)
	if err != nil {
		return nil, fmt.Errorf("resp: low-pass: %w", err)
	}
	hp, err := dsp.ButterHighpass(1, o.HighpassHz, o.RateHz)
	if err != nil {
		return nil, fmt.Errorf("resp: high-pass: %w", err)
	}
	hf, err := dsp.ButterHighpass(2, math.Min(o.LowpassHz, 0.4*o.RateHz), o.RateHz)
	if err != nil {
		return nil, fmt.Errorf("resp: motion high-pass: %w", err)
	}
	mot, err := window.NormalizeGaps(o.Motion)
	if err != nil {
		return nil, fmt.Errorf("resp: motion spans: %w", err)
	}
	c := &core{o: o, fs: o.RateHz, lpR: lp.NewFilter(), lpA: lp.NewFilter(), hpR: hp.NewFilter(), hpA: hp.NewFilter(), hfS: hf.NewFilter(), motion: mot}
	c.a, c.b = o.Calibration.weights()
	c.litres = o.Calibration.Litres
	c.out.Calibration = o.Calibration
	if c.out.Calibration.Method == "" {
		c.out.Calibration.Method = "none"
	}
	// Group delay of the low-pass near 0 Hz from its phase at a frequency
	// far below the cut-off.
	f0 := o.LowpassHz / 100
	h := lp.Response(f0, o.RateHz)
	c.delay = -math.Atan2(imag(h), real(h)) / (2 * math.Pi * f0)
	// The ring is a power of two so that indexing is a mask.
	c.cap = 1
	for c.cap < int(o.BufferS*o.RateHz)+2 {
		c.cap *= 2
	}
	c.mask = c.cap - 1
	for _, p := range []*[]float64{&c.m, &c.rf, &c.af, &c.rl, &c.al, &c.hf2} {
		*p = make([]float64, c.cap)
	}
	c.flag = make([]uint8, c.cap)
	c.clipN = max(2, int(math.Round(o.ClipRunS*o.RateHz)))
	c.flatN = max(c.clipN+1, int(math.Round(o.FlatRunS*o.RateHz)))
	c.spanN = max(1, int(math.Round(o.ExcursionSpanS*o.RateHz)))
	c.pauseMinN = int(math.Round(o.PauseMinS * o.RateHz))
	c.minBreathN = int(math.Round(o.MinBreathS * o.RateHz))
	c.medTi, c.medTe, c.medTtot = 1.5, 2.5, 4
	c.timing()
	c.amps = make([]float64, 0, nRecent)
	c.ribs = make([]float64, 0, nRecent)
	c.abds = make([]float64, 0, nRecent)
	c.tis = make([]float64, 0, nRecent)
	c.tes = make([]float64, 0, nRecent)
	c.resetState()
	return c, nil
}

func (c *core) resetState() {
	c.state = stInit
	c.onset, c.peak, c.ext, c.quietFrom = -1, -1, -1, -1
	c.started = false
}

// t returns the time of global sample i, corrected for the low-pass delay.
func (c *core) t(i int) float64 { return c.o.StartS + float64(i)/c.fs - c.delay }

// tRaw is the acquisition time of sample i (for gaps).
func (c *core) tRaw(i int) float64 { return c.o.StartS + float64(i)/c.fs }

func (c *core) push(rib, abd []float64) {
	for i := range rib {
		c.step(rib[i], abd[i])
	}
}

func (c *core) close() {
	if c.inGap {
		c.out.Gaps = append(c.out.Gaps, window.Interval{Start: c.gapStart, End: c.tRaw(c.n)})
		c.inGap = false
	}
	if c.onset >= 0 {
		c.out.Discarded++ // breath in progress at the end
	}
	if c.quietFrom >= 0 && c.quietFrom < c.n {
		c.emitQuiet(c.quietFrom, c.n)
	}
	c.resetState()
}

// reference returns the adaptive amplitude reference at sample n.
func (c *core) reference() float64 {
	r := c.ref
	if len(c.amps) < 3 {
		r = c.warmHi - c.warmLo
	}
	if el, d := float64(c.n-c.lastAccept)/c.fs, c.decayDelay(); el > d {
		r *= math.Max(0.35, math.Exp(-(el-d)/30))
	}
	return r
}

// decayDelay is how long without a clean breath before the reference
// decays: two recent breath lengths, at least 8 s (our choice).
func (c *core) decayDelay() float64 { return c.delayS }

func (c *core) step(rib, abd float64) {
	if !(math.Abs(rib) <= maxSample) || !(math.Abs(abd) <= maxSample) {
		if !c.inGap {
			c.inGap = true
			c.gapStart = c.tRaw(c.n)
			if c.onset >= 0 {
				c.out.Discarded++
			}
			if c.quietFrom >= 0 && c.quietFrom < c.n {
				c.emitQuiet(c.quietFrom, c.n)
			}
			c.resetState()
		}
		c.n++
		return
	}
	if c.inGap {
		c.out.Gaps = append(c.out.Gaps, window.Interval{Start: c.gapStart, End: c.tRaw(c.n)})
		c.inGap = false
	}
	if !c.started {
		c.lpR.Reset(rib)
		c.lpA.Reset(abd)
		c.hpR.Reset(rib)
		c.hpA.Reset(abd)
		c.hfS.Reset(c.a*rib + c.b*abd)
		c.started = true
		c.startN = c.n
		c.iHi, c.iLo = c.n, c.n
		c.lastAccept = c.n
		c.warmHi, c.warmLo = 0, 0
		c.lastR, c.lastA = math.NaN(), math.NaN()
		c.runR, c.runA = 0, 0
	}
	n := c.n
	k := n & c.mask
	rl := c.lpR.Step(rib)
	al := c.lpA.Step(abd)
	rf := c.a * c.hpR.Step(rl)
	af := c.b * c.hpA.Step(al)
	m := c.a*rl + c.b*al
	d := rf + af
	hf := c.hfS.Step(c.a*rib + c.b*abd)
	c.m[k], c.rf[k], c.af[k], c.rl[k], c.al[k], c.hf2[k] = m, rf, af, rl, al, hf*hf

	// Runs of identical raw values: clipping when short, band loss when long.
	var fl uint8
	if rib == c.lastR {
		c.runR++
	} else {
		c.runR = 1
	}
	if abd == c.lastA {
		c.runA++
	} else {
		c.runA = 1
	}
	c.lastR, c.lastA = rib, abd
	for _, r := range [2]int{c.runR, c.runA} {
		if r >= c.flatN {
			fl |= flagFlat
		} else if r >= c.clipN {
			fl |= flagClip
		}
	}
	c.flag[k] = fl

	if len(c.amps) < 3 {
		if d > c.warmHi {
			c.warmHi = d
		}
		if d < c.warmLo {
			c.warmLo = d
		}
	}
	ref := c.reference()
	h := c.o.HysteresisFrac * ref

	switch c.state {
	case stInit:
		// The running extremes restart when they would leave the buffer (a
		// long flat stretch), so they never read overwritten samples.
		if m > c.m[c.iHi&c.mask] || n-c.iHi > c.cap/2 {
			c.iHi = n
		}
		if m < c.m[c.iLo&c.mask] || n-c.iLo > c.cap/2 {
			c.iLo = n
		}
		if c.quietFrom >= 0 && n-c.quietFrom >= c.spanN {
			c.emitQuiet(c.quietFrom, c.quietFrom+c.spanN)
			c.quietFrom += c.spanN
		}
		if m < c.m[c.iHi&c.mask]-2*h {
			c.state, c.ext = stLow, n
		} else if m > c.m[c.iLo&c.mask]+2*h {
			if c.quietFrom >= 0 {
				// Breathing resumes after an abandoned inspiration: the
				// quiet stretch ends at this breath's onset.
				c.ext = c.iLo
				c.rise(ref)
			}
			c.state, c.ext = stHigh, n
		}
	case stHigh:
		if m > c.m[c.ext&c.mask] {
			c.ext = n
		}
		if c.onset >= 0 && n-c.onset > c.maxTiN() {
			// No peak confirmed within a plausible inspiratory time: what
			// follows the onset is not a breath (small or inverted efforts
			// of an apnea, for example). Abandon it, hand the time to the
			// pause excursions and look for breathing afresh.
			c.out.Discarded++
			c.quietFrom, c.onset, c.peak = c.onset, -1, -1
			c.state, c.iHi, c.iLo = stInit, n, n
			break
		}
		if c.onset < 0 && n-c.ext > c.cap/2 {
			c.ext = n
		}
		if m < c.m[c.ext&c.mask]-2*h {
			c.peak = c.ext
			if c.onset < 0 {
				c.peak = -1 // no onset: this half breath is not a breath
			}
			c.state, c.ext = stLow, n
		}
	case stLow:
		if m < c.m[c.ext&c.mask] {
			c.ext = n
		}
		if c.peak >= 0 && n-c.onset >= c.cap-2 {
			c.forcePause(ref)
		}
		if c.peak < 0 {
			if n-c.ext > c.cap/2 {
				c.ext = n
			}
			if c.quietFrom >= 0 && n-c.quietFrom >= c.spanN {
				c.emitQuiet(c.quietFrom, c.quietFrom+c.spanN)
				c.quietFrom += c.spanN
			}
		}
		if m > c.m[c.ext&c.mask]+2*h {
			c.rise(ref)
			c.state, c.ext = stHigh, n
		}
	}
	c.n++
}

// endExpAt returns the end of expiration after the peak at from: the first
// sample within tol of the floor of the expected expiration span (1.5 times
// the recent median Te plus 1 s, searched no further than to), so a floor
// drifting down during a long pause does not drag it late.
func (c *core) endExpAt(from, to int, tol float64) int {
	i, _ := c.endExpFloor(from, to, tol)
	return i
}

func (c *core) endExpFloor(from, to int, tol float64) (int, float64) {
	hi := min(to, from+int((1.5*c.medTe+1)*c.fs))
	lo := math.Inf(1)
	for i := from; i <= hi; i++ {
		if v := c.m[i&c.mask]; v < lo {
			lo = v
		}
	}
	for i := from; i <= hi; i++ {
		if c.m[i&c.mask] <= lo+tol {
			return i, lo
		}
	}
	return hi, lo
}

// onsetAt returns the inspiration onset before the rise detected at c.n: the
// last sample within tol of the floor of the preceding span of max(2 s, 1.5
// times the recent median Ti), never before from.
func (c *core) onsetAt(from int, tol float64) (int, float64) {
	lo := max(from, c.n-int(math.Max(2, 1.5*c.medTi)*c.fs))
	fl := math.Inf(1)
	for j := lo; j <= c.n; j++ {
		if v := c.m[j&c.mask]; v < fl {
			fl = v
		}
	}
	for j := c.n; j >= lo; j-- {
		if c.m[j&c.mask] <= fl+tol {
			return j, fl
		}
	}
	return lo, fl
}

// maxTiN is the longest plausible inspiration in samples: three times the
// recent median Ti, at least 5 s (our choice; a sigh's inspiration is about
// twice the usual), and never more than the buffer.
func (c *core) maxTiN() int { return c.maxTi }

// timing refreshes the limits derived from the recent median timing.
func (c *core) timing() {
	c.maxTi = min(c.cap-2, int(math.Max(5, 3*c.medTi)*c.fs))
	c.delayS = math.Max(8, 2*c.medTtot)
}

// rise handles the switch from expiration to inspiration at sample c.n.
func (c *core) rise(ref float64) {
	tr := c.ext
	from := tr
	tol := c.o.PauseTolFrac * ref
	if c.peak >= 0 {
		from = c.peak
		tol = c.o.PauseTolFrac * (c.m[c.peak&c.mask] - c.m[tr&c.mask])
	} else if c.quietFrom >= 0 {
		from = c.quietFrom
	}
	next, flOn := c.onsetAt(from, tol)
	endExp, flEnd := next, flOn
	if c.peak >= 0 {
		endExp, flEnd = c.endExpFloor(c.peak, next, tol)
	}
	// A trough is split into end of expiration, pause and onset only when
	// the flat part is long: PauseMinS, or half the recent breath length
	// for slow breathing.
	if next-endExp < max(c.pauseMinN, int(0.5*c.medTtot*c.fs)) {
		endExp, next = tr, tr
	} else {
		// Found with the coarse tolerance; place both ends where the sum
		// comes within a tenth of it (1 % of the amplitude) of the floor.
		fine := tol / 10
		for endExp < next && c.m[endExp&c.mask] > flEnd+fine {
			endExp++
		}
		for next > endExp && c.m[next&c.mask] > flOn+fine {
			next--
		}
	}
	switch {
	case c.peak >= 0 && c.onset >= 0:
		c.finish(c.onset, c.peak, endExp, next, ref, false)
	case c.quietFrom >= 0:
		if next > c.quietFrom {
			c.emitQuiet(c.quietFrom, next)
		}
	}
	c.quietFrom = -1
	c.onset, c.peak = next, -1
}

// forcePause ends the pending breath when the pause after it outgrows the
// buffer; the pause continues as excursion spans.
func (c *core) forcePause(ref float64) {
	tol := c.o.PauseTolFrac * (c.m[c.peak&c.mask] - c.m[c.ext&c.mask])
	endExp := c.endExpAt(c.peak, c.n, tol)
	c.finish(c.onset, c.peak, endExp, c.n, ref, true)
	c.onset, c.peak = -1, -1
	c.quietFrom = c.n
}

// emitQuiet appends excursion spans covering samples [i, j).
func (c *core) emitQuiet(i, j int) {
	for s := i; s < j; s += c.spanN {
		e := min(s+c.spanN, j)
		c.out.Pauses = append(c.out.Pauses, Excursion{
			Start: c.t(s), End: c.t(e),
			SumAU: c.sdExc(c.m, s, e-1), RibExcAU: c.a * c.sdExc(c.rl, s, e-1), AbdExcAU: c.b * c.sdExc(c.al, s, e-1),
		})
	}
}

// sdExc is the sine-equivalent peak-to-peak excursion 2*sqrt(2)*SD over
// samples i..j: exact for shallow breaths, and little moved by the tail of
// the expiration that ends where a pause begins (which a plain
// peak-to-peak would count in full).
func (c *core) sdExc(x []float64, i, j int) float64 {
	var s, ss float64
	n := float64(j - i + 1)
	x0 := x[i&c.mask]
	for k := i; k <= j; k++ {
		v := x[k&c.mask] - x0
		s += v
		ss += v * v
	}
	v := ss/n - (s/n)*(s/n)
	return 2 * math.Sqrt(2*math.Max(0, v))
}

func (c *core) p2p(x []float64, i, j int) float64 {
	hi, lo := math.Inf(-1), math.Inf(1)
	for k := i; k <= j; k++ {
		v := x[k&c.mask]
		if v > hi {
			hi = v
		}
		if v < lo {
			lo = v
		}
	}
	return hi - lo
}

// finish emits the breath onset..peak..endExp whose next onset is next, or
// turns it into excursion spans when it fails the acceptance tests.
func (c *core) finish(on, pk, endExp, next int, ref float64, long bool) {
	vt := c.m[pk&c.mask] - c.m[on&c.mask]
	ti := float64(pk-on) / c.fs
	te := float64(endExp-pk) / c.fs
	// The delay-corrected onset must not precede the segment's first
	// sample: such a trough was the start of the data, not of a breath.
	if endExp-on < c.minBreathN || pk <= on || endExp <= pk || !(vt >= 2*c.o.HysteresisFrac*ref) || c.t(on) < c.tRaw(c.startN) {
		c.out.Discarded++
		c.emitQuiet(on, next)
		return
	}
	b := Breath{
		Onset: c.t(on), EndInsp: c.t(pk), EndExp: c.t(endExp),
		PauseS: float64(next-endExp) / c.fs,
		TiS:    ti, TeS: te, TtotS: ti + te,
		VtAU: vt, VtL: math.NaN(), FlowLs: math.NaN(),
		RibRise: c.rl[pk&c.mask] - c.rl[on&c.mask],
		AbdRise: c.al[pk&c.mask] - c.al[on&c.mask],
	}
	b.TiTtot = b.TiS / b.TtotS
	b.RatePerMin = 60 / b.TtotS
	b.FlowAUs = vt / ti
	if c.litres {
		b.VtL = vt
		b.FlowLs = vt / ti
	}
	// Band excursions on the low-passed bands (no high-pass, whose slow
	// relaxation after a last breath would look like effort).
	b.RibExcAU = c.a * c.p2p(c.rl, on, endExp)
	b.AbdExcAU = c.b * c.p2p(c.al, on, endExp)
	b.PhaseXcorrDeg, b.PhaseLissajousDeg = c.phases(on, endExp)
	ph := math.Abs(b.PhaseXcorrDeg)
	if math.IsNaN(ph) {
		ph = b.PhaseLissajousDeg
	}
	b.Paradox = ph >= c.o.ParadoxDeg

	// Quality.
	var fl uint8
	var e2 float64
	for i := on; i <= endExp; i++ {
		fl |= c.flag[i&c.mask]
		e2 += c.hf2[i&c.mask]
	}
	if fl&flagClip != 0 {
		b.Quality |= QualityClipping
	}
	if fl&flagFlat != 0 {
		b.Quality |= QualityBandLoss
	}
	if math.Sqrt(e2/float64(endExp-on+1)) > c.o.MotionFrac*vt {
		b.Quality |= QualityMotion
	}
	clean := len(c.amps) >= 3
	if clean && vt > c.o.MotionAmpFactor*c.ref {
		b.Quality |= QualityMotion
	}
	if c.overlapsMotion(b.Onset, b.EndExp) {
		b.Quality |= QualityMotion
	}
	if clean && ((b.RibExcAU < 0.1*c.refRib && b.AbdExcAU >= 0.5*c.refAbd) || (b.AbdExcAU < 0.1*c.refAbd && b.RibExcAU >= 0.5*c.refRib)) {
		b.Quality |= QualityBandLoss
	}
	if long {
		b.Quality |= QualityLongPause
	}
	b.Sigh = clean && vt >= c.o.SighFactor*c.ref
	c.out.Breaths = append(c.out.Breaths, b)
	if next > endExp {
		c.emitQuiet(endExp, next)
	}
	if b.Quality&^QualityLongPause == 0 {
		if float64(c.n-c.lastAccept)/c.fs > c.decayDelay() && len(c.amps) >= 3 && vt < 0.5*c.ref {
			// Accepted only thanks to the decayed reference: breathing has
			// stepped down (the end of exercise) rather than paused, so
			// the recent breaths no longer describe it. Start the
			// reference afresh from this breath.
			c.amps, c.ribs, c.abds, c.tis, c.tes = c.amps[:0], c.ribs[:0], c.abds[:0], c.tis[:0], c.tes[:0]
			c.recentPos = 0
			for range nRecent - 1 {
				c.remember(vt, b.RibExcAU, b.AbdExcAU, b.TiS, b.TeS)
			}
		}
		c.remember(vt, b.RibExcAU, b.AbdExcAU, b.TiS, b.TeS)
		c.lastAccept = c.n
	}
}

func (c *core) remember(vt, rib, abd, ti, te float64) {
	if len(c.amps) < nRecent {
		c.amps = append(c.amps, vt)
		c.ribs = append(c.ribs, rib)
		c.abds = append(c.abds, abd)
		c.tis = append(c.tis, ti)
		c.tes = append(c.tes, te)
	} else {
		k := c.recentPos
		c.amps[k], c.ribs[k], c.abds[k], c.tis[k], c.tes[k] = vt, rib, abd, ti, te
		c.recentPos = (c.recentPos + 1) % nRecent
	}
	var buf [nRecent]float64
	c.ref = medianInto(buf[:0], c.amps)
	c.refRib = medianInto(buf[:0], c.ribs)
	c.refAbd = medianInto(buf[:0], c.abds)
	c.medTi = medianInto(buf[:0], c.tis)
	c.medTe = medianInto(buf[:0], c.tes)
	c.medTtot = c.medTi + c.medTe
	c.timing()
}

func medianInto(buf, x []float64) float64 {
	buf = append(buf, x...)
	sort.Float64s(buf)
	n := len(buf)
	if n%2 == 1 {
		return buf[n/2]
	}
	return (buf[n/2-1] + buf[n/2]) / 2
}

func (c *core) overlapsMotion(s, e float64) bool {
	for c.motionCursor < len(c.motion) && c.motion[c.motionCursor].End <= s {
		c.motionCursor++
	}
	return c.motionCursor < len(c.motion) && c.motion[c.motionCursor].Start < e
}
