package features

import (
	"github.com/tidalbeat/tidalbeat/features/recording"
)

// newHRVFamily builds the HRV family: beats detected on the ECG channel (or
// taken from annotations when Config.BeatsAnnotator is set), NN cleaning,
// then the hrv package's metrics per window, plus ECG quality per window.
func newHRVFamily(rec *recording.Recording, cfg Config, withData bool) *family {
	f := &family{name: FamilyHRV, length: cfg.HRVWindow}
	if cfg.BeatsAnnotator == "" {
		ch := cfg.findRole(rec, recording.RoleECG)
		if ch == nil {
			f.missing = "no ECG channel"
			return f
		}
		f.inputs = []input{channelInput(ch, recording.RoleECG, withData)}
	}
	f.missing = ReasonNotAvailable
	return f
}
