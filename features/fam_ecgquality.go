package features

import (
	"fmt"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

// FamilyECGQuality names the ECG signal-quality columns. They come with the
// HRV family whenever beats are detected on an ECG channel, over windows one
// step long (the last 30 s before the row time by default), so a bad stretch
// shows in the rows it touches rather than being averaged over 5 minutes.
const FamilyECGQuality = "ecg_quality"

var ecgQualityCols = []Column{
	{Name: "ecg_n_samples", Kind: Int, Doc: "ECG samples in the quality window"},
	{Name: "ecg_n_beats", Kind: Int, Doc: "Pan-Tompkins beats (the HRV detector's) in the quality window"},
	{Name: "ecg_envelope_n_beats", Kind: Int, Doc: "beats found by the second (envelope) detector, for bSQI"},
	{Name: "ecg_lead_off_frac", Kind: Float, Doc: "fraction of samples invalid (NaN: lead off, dropped data)"},
	{Name: "ecg_flat_frac", Kind: Float, Doc: "fraction of samples in flat-line runs of at least 0.5 s"},
	{Name: "ecg_saturated_frac", Kind: Float, Doc: "fraction of samples at the amplifier rails (rails unknown: 0)"},
	{Name: "ecg_kurtosis", Kind: Float, Doc: "kSQI: kurtosis of the valid samples (Li, Mark and Clifford 2008)"},
	{Name: "ecg_skewness", Kind: Float, Doc: "sSQI: skewness of the valid samples (Li, Mark and Clifford 2008)"},
	{Name: "ecg_psqi_frac", Kind: Float, Doc: "pSQI: power 5-15 Hz over 5-40 Hz (Li, Mark and Clifford 2008)"},
	{Name: "ecg_bassqi_frac", Kind: Float, Doc: "basSQI: 1 - power 0-1 Hz over 0-40 Hz (Li, Mark and Clifford 2008)"},
	{Name: "ecg_bsqi_frac", Kind: Float, Doc: "bSQI: agreement of Pan-Tompkins and envelope beats within 150 ms (Li, Mark and Clifford 2008)"},
}

// newECGQualityFamily returns the ECG quality family, or nil when HRV does
// not detect beats on an ECG channel. Its windows are the engine's sample
// windows of the ECG channel; each gets ecg.WindowQuality with the
// Pan-Tompkins beats of the whole-record detector (ecg.Detect in batch,
// ecg.Detector live) that fall inside it.
func newECGQualityFamily(rec *recording.Recording, cfg Config, withData bool, sh *shared) *family {
	if !cfg.wants(FamilyHRV) || cfg.BeatsAnnotator != "" || cfg.NoECGQuality {
		return nil
	}
	ch := cfg.findRole(rec, recording.RoleECG)
	if ch == nil {
		return nil
	}
	f := &family{name: FamilyECGQuality, length: cfg.Step, cols: ecgQualityCols, alwaysCore: true}
	if ch.RateHz < ecg.MinRateHz || ch.RateHz > ecg.MaxRateHz {
		f.missing = fmt.Sprintf("ECG rate %v Hz outside %d..%d Hz", ch.RateHz, ecg.MinRateHz, ecg.MaxRateHz)
		return f
	}
	in := channelInput(ch, recording.RoleECG, withData)
	f.inputs = []input{in}
	rate := ch.RateHz
	f.batchFn = func(g window.Grid) ([]famResult, error) {
		if len(in.x) == 0 {
			return nil, nil
		}
		res, err := sh.detect(in.x, rate)
		if err != nil {
			return nil, err
		}
		beats := ecg.BeatTimes(res.Beats)
		it, err := g.Samples(rate, 0, len(in.x), in.gaps)
		if err != nil {
			return nil, err
		}
		var ws []window.Window
		for w := range it {
			ws = append(ws, w)
		}
		out := make([]famResult, len(ws))
		parallel(len(ws), func(i int) {
			out[i] = f.qualityWindow(ws[i], in.x[ws[i].Lo:ws[i].Hi], rate, beats)
		})
		return out, nil
	}
	f.newDriver = func(g window.Grid) (driver, error) {
		det, err := ecg.NewDetector(rate, ecg.Options{})
		if err != nil {
			return nil, err
		}
		ss, err := window.NewSampleStream[float64](g, rate, 0)
		if err != nil {
			return nil, err
		}
		return &qualityDriver{f: f, det: det, ss: ss, rate: rate, last: math.MinInt64}, nil
	}
	return f
}

// qualityWindow is the family's one per-window core: x holds window w's
// samples (the first at sample w.Lo), beats every detected beat time so far
// (sorted; those inside the window are used).
func (f *family) qualityWindow(w window.Window, x []float64, rate float64, beats []float64) famResult {
	return f.runWindowWith([]seg{{w: w, ok: true}}, func(out cells, _ bool) string {
		out.v[0] = float64(len(x))
		if len(x) == 0 {
			return ReasonNoData
		}
		t0 := float64(w.Lo) / rate
		t1 := float64(w.Lo+len(x)) / rate
		lo := sort.SearchFloat64s(beats, t0)
		hi := sort.SearchFloat64s(beats, t1)
		rel := make([]float64, hi-lo)
		for i, b := range beats[lo:hi] {
			rel[i] = b - t0
		}
		q, err := ecg.WindowQuality(x, rate, rel, ecg.QualityOptions{})
		if err != nil {
			return err.Error()
		}
		copy(out.v[1:], []float64{float64(len(rel)), float64(q.EnvelopeBeats), q.LeadOffFraction, q.FlatFraction,
			q.SaturatedFraction, q.Kurtosis, q.Skewness, q.PSQI, q.BasSQI, q.BSQI})
		for i := range out.v {
			if math.IsInf(out.v[i], 0) {
				out.v[i] = math.NaN()
			}
		}
		return q.Reason
	})
}

// qualityDriver streams the ECG quality family: samples go to the engine's
// sample stream and to the streaming detector; a released window is
// computed once the detector's beats are final past its end
// (ecg.Detector.Latency), with the same core as batch.
type qualityDriver struct {
	f     *family
	det   *ecg.Detector
	ss    *window.Stream[float64]
	rate  float64
	n     int
	beats []float64
	held  []heldSamples
	last  int64
	ended bool
}

type heldSamples struct {
	w window.Window
	x []float64
}

func (d *qualityDriver) push(_ int, x []float64, gaps []window.Interval) ([]famResult, error) {
	b, err := d.det.Push(x)
	if err != nil {
		return nil, err
	}
	d.beats = append(d.beats, ecg.BeatTimes(b)...)
	for _, g := range gaps {
		if err := d.ss.Gap(g); err != nil {
			return nil, err
		}
	}
	if err := d.ss.Push(x...); err != nil {
		return nil, err
	}
	d.n += len(x)
	return d.release(float64(d.n)/d.rate - d.det.Latency() - 1), nil
}

// release computes the held windows ending before t (all when t is +Inf).
func (d *qualityDriver) release(t float64) []famResult {
	for w, items := range d.ss.Ready() {
		d.held = append(d.held, heldSamples{w: w, x: append([]float64(nil), items...)})
	}
	var out []famResult
	k := 0
	for ; k < len(d.held) && d.held[k].w.End <= t; k++ {
		h := d.held[k]
		out = append(out, d.f.qualityWindow(h.w, h.x, d.rate, d.beats))
		d.last = h.w.Seq
	}
	d.held = d.held[k:]
	// Beats before the first sample of the oldest window still to come are
	// no longer needed: that is a held window, or one not released yet,
	// which starts less than a window length before the data end.
	from := float64(d.n)/d.rate - d.f.length.Seconds()
	if len(d.held) > 0 {
		from = math.Min(from, float64(d.held[0].w.Lo)/d.rate)
	}
	j := sort.SearchFloat64s(d.beats, from)
	d.beats = append(d.beats[:0], d.beats[j:]...)
	return out
}

func (d *qualityDriver) close() ([]famResult, error) {
	b, err := d.det.Flush()
	if err != nil {
		return nil, err
	}
	d.beats = append(d.beats, ecg.BeatTimes(b)...)
	if err := d.ss.Close(); err != nil {
		return nil, err
	}
	out := d.release(math.Inf(1))
	d.ended = true
	return out, nil
}

func (d *qualityDriver) done() int64 {
	if d.ended {
		return math.MaxInt64
	}
	return d.last
}
