package features

import (
	"fmt"
	"math"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
)

// FamilyECGQuality names the ECG signal-quality columns. They come with the
// HRV family whenever beats are detected on an ECG channel, over windows one
// step long (the last 30 s before the row time by default), so a bad stretch
// shows in the rows it touches rather than being averaged over 5 minutes.
const FamilyECGQuality = "ecg_quality"

var ecgQualityCols = []Column{
	{Name: "ecg_n_samples", Kind: Int, Doc: "ECG samples in the quality window"},
	{Name: "ecg_n_beats", Kind: Int, Doc: "Pan-Tompkins beats detected in the quality window on its own"},
	{Name: "ecg_envelope_n_beats", Kind: Int, Doc: "beats found by the second (envelope) detector, for bSQI"},
	{Name: "ecg_lead_off_frac", Kind: Float, Doc: "fraction of samples invalid (NaN: lead off, dropped data)"},
	{Name: "ecg_flat_frac", Kind: Float, Doc: "fraction of samples in flat-line runs of at least 0.5 s"},
	{Name: "ecg_saturated_frac", Kind: Float, Doc: "fraction of samples at the amplifier rails (rails unknown: 0)"},
	{Name: "ecg_kurtosis", Kind: Float, Doc: "kSQI: kurtosis of the valid samples (Li, Mark and Clifford 2008)"},
	{Name: "ecg_skewness", Kind: Float, Doc: "sSQI: skewness of the valid samples (Li, Mark and Clifford 2008)"},
	{Name: "ecg_psqi_frac", Kind: Float, Doc: "pSQI: power 5-15 Hz over 5-40 Hz (Li, Mark and Clifford 2008)"},
	{Name: "ecg_bassqi_frac", Kind: Float, Doc: "basSQI: 1 - power 0-1 Hz over 0-40 Hz (Li, Mark and Clifford 2008)"},
	{Name: "ecg_bsqi_frac", Kind: Float, Doc: "bSQI: agreement of the two detectors within 150 ms (Li, Mark and Clifford 2008)"},
}

// newECGQualityFamily returns the ECG quality family (a generic sample
// family: the engine's sample windows of the ECG channel, ecg.WindowQuality
// per window), or nil when HRV does not detect beats on an ECG channel.
func newECGQualityFamily(rec *recording.Recording, cfg Config, withData bool) *family {
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
	f.inputs = []input{channelInput(ch, recording.RoleECG, withData)}
	f.core = func(segs []seg, out cells) string {
		s := segs[0]
		out.v[0] = float64(len(s.x))
		if len(s.x) == 0 {
			return ReasonNoData
		}
		var beats []float64
		if r, err := ecg.Detect(s.x, s.rate, ecg.Options{}); err == nil {
			beats = ecg.BeatTimes(r.Beats)
		}
		q, err := ecg.WindowQuality(s.x, s.rate, beats, ecg.QualityOptions{})
		if err != nil {
			return err.Error()
		}
		copy(out.v[1:], []float64{float64(len(beats)), float64(q.EnvelopeBeats), q.LeadOffFraction, q.FlatFraction,
			q.SaturatedFraction, q.Kurtosis, q.Skewness, q.PSQI, q.BasSQI, q.BSQI})
		for i := range out.v {
			if math.IsInf(out.v[i], 0) {
				out.v[i] = math.NaN()
			}
		}
		return q.Reason
	}
	return f
}
