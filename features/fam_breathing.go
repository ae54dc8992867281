package features

import (
	"github.com/tidalbeat/tidalbeat/features/recording"
)

// newBreathingFamily builds the breathing family from the rib-cage and
// abdominal bands (either alone is used when the other is missing).
func newBreathingFamily(rec *recording.Recording, cfg Config, withData bool) *family {
	f := &family{name: FamilyBreathing, length: cfg.BreathingWindow}
	rc := cfg.findRole(rec, recording.RoleRibCage)
	ab := cfg.findRole(rec, recording.RoleAbdomen)
	if rc == nil && ab == nil {
		f.missing = "no respiratory band"
		return f
	}
	f.missing = ReasonNotAvailable
	return f
}
