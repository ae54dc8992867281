package features

import (
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// testStart is a start that is not on the 30-s grid, so the first row and
// every family's first window are partial.
var testStart = time.Date(2026, 6, 1, 8, 0, 7, 250e6, time.UTC)

// simAccel returns a recording with the chest accelerometer of a schedule
// (internal/sim.AccelSimulate, whose ground truth is the list of step
// impacts) and the simulated record.
func simAccel(t testing.TB, segs []sim.AccelSegment, seed uint64) (*recording.Recording, *sim.AccelRecord) {
	t.Helper()
	a, err := sim.AccelSimulate(segs, sim.AccelConfig{Seed: seed})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "sim_accel", Start: testStart, StartKnown: true}
	for i, x := range [][]float64{a.X, a.Y, a.Z} {
		rec.Channels = append(rec.Channels, recording.Channel{
			Name: []string{"acc_x", "acc_y", "acc_z"}[i], Unit: "g", RateHz: a.RateHz, Samples: x,
			Role: []recording.Role{recording.RoleAccX, recording.RoleAccY, recording.RoleAccZ}[i]})
	}
	return rec, a
}

// simECG adds a simulated ECG channel (McSharry et al. 2003 waveform via
// internal/sim.ECGSimulate) to rec and returns its ground-truth signal.
func simECG(t testing.TB, rec *recording.Recording, cfg sim.ECGConfig) sim.ECGSignal {
	t.Helper()
	e, err := sim.ECGSimulate(cfg)
	if err != nil {
		t.Fatal(err)
	}
	rec.Channels = append(rec.Channels, recording.Channel{Name: "ECG", Unit: "mV", RateHz: e.RateHz, Samples: e.Samples, Role: recording.RoleECG})
	return e
}

// streamRows feeds rec to a Stream in random chunks, channel by channel in
// interleaved order, and returns every row.
func streamRows(t testing.TB, rec *recording.Recording, cfg Config, rng *rand.Rand, maxChunkS float64) []Row {
	t.Helper()
	hdr := *rec
	s, err := NewStream(&hdr, cfg)
	if err != nil {
		t.Fatal(err)
	}
	pos := make([]int, len(rec.Channels))
	gi := make([]int, len(rec.Channels))
	var rows []Row
	for {
		// Pick the channel that is furthest behind in time, push a random chunk.
		ch, best := -1, math.Inf(1)
		for i, c := range rec.Channels {
			if pos[i] < len(c.Samples) {
				if tt := float64(pos[i]) / c.RateHz; tt < best {
					ch, best = i, tt
				}
			}
		}
		if ch < 0 {
			break
		}
		c := rec.Channels[ch]
		n := len(c.Samples) // whole channel at once when rng is nil
		if rng != nil {
			n = 1 + rng.IntN(int(maxChunkS*c.RateHz)+1)
		}
		end := min(pos[ch]+n, len(c.Samples))
		// Declared gaps go in before the samples they cover.
		for gi[ch] < len(c.Gaps) && c.Gaps[gi[ch]].Start < float64(end)/c.RateHz {
			if err := s.Gap(ch, c.Gaps[gi[ch]]); err != nil {
				t.Fatal(err)
			}
			gi[ch]++
		}
		if err := s.Push(ch, c.Samples[pos[ch]:end]); err != nil {
			t.Fatal(err)
		}
		pos[ch] = end
		for r := range s.Ready() {
			rows = append(rows, r)
		}
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	for r := range s.Ready() {
		rows = append(rows, r)
	}
	return rows
}

// rowsEqual compares rows exactly (NaN equal to NaN, nothing approximate).
func rowsEqual(t testing.TB, want, got []Row) {
	t.Helper()
	if d := cmp.Diff(want, got, cmpopts.EquateNaNs()); d != "" {
		t.Fatalf("stream rows differ from batch rows (-batch +stream):\n%s", d)
	}
}

func secs(s float64) time.Duration { return time.Duration(s * float64(time.Second)) }
