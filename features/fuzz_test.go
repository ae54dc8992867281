package features

import (
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// FuzzStreamEqualsBatch builds a short multimodal recording from the fuzz
// input (seed, lost-sample stretches, a flat stretch, chunk sizes) and
// requires Stream rows identical to Extract rows. Its seeds run in the
// normal test suite.
func FuzzStreamEqualsBatch(f *testing.F) {
	f.Add(uint64(1), uint16(0), uint16(0), uint16(0), 2.0)
	f.Add(uint64(2), uint16(3000), uint16(400), uint16(9000), 0.05)
	f.Add(uint64(3), uint16(65535), uint16(65535), uint16(1), 30.0)
	f.Fuzz(func(t *testing.T, seed uint64, nanAt, nanLen, flatAt uint16, chunkS float64) {
		if math.IsNaN(chunkS) || chunkS <= 0.01 || chunkS > 60 {
			chunkS = 1
		}
		const dur = 100.0
		e, err := sim.ECGSimulate(sim.ECGConfig{DurationS: dur, MeanHR: 60 + float64(seed%60), NoisemV: 0.03, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		a, err := sim.AccelSimulate([]sim.AccelSegment{{Activity: sim.AccelWalking, DurationS: dur, CadenceSPM: 100 + float64(seed%30)}}, sim.AccelConfig{Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		ecgX := append([]float64(nil), e.Samples...)
		for i := int(nanAt); i < min(int(nanAt)+int(nanLen), len(ecgX)); i++ {
			ecgX[i] = math.NaN()
		}
		for i := int(flatAt); i < min(int(flatAt)+300, len(ecgX)); i++ {
			ecgX[i] = 0.1
		}
		rec := &recording.Recording{Name: "fuzz", Start: time.Unix(1780000007, 0).UTC(), StartKnown: true, Channels: []recording.Channel{
			{Name: "ECG", Unit: "mV", RateHz: e.RateHz, Samples: ecgX, Role: recording.RoleECG},
			{Name: "x", Unit: "g", RateHz: a.RateHz, Samples: a.X, Role: recording.RoleAccX},
			{Name: "y", Unit: "g", RateHz: a.RateHz, Samples: a.Y, Role: recording.RoleAccY},
			{Name: "z", Unit: "g", RateHz: a.RateHz, Samples: a.Z, Role: recording.RoleAccZ},
		}}
		cfg := Config{Step: 10 * time.Second, HRVWindow: time.Minute, ActivityWindow: 10 * time.Second}
		want, err := Extract(rec, cfg)
		if err != nil {
			t.Fatal(err)
		}
		rowsEqual(t, want.Rows, streamRows(t, rec, cfg, rand.New(rand.NewPCG(seed, uint64(nanAt))), chunkS))
	})
}
