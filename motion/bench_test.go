package motion_test

import (
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// BenchmarkWeekAt50Hz runs every measure (ENMO, MAD, counts, steps,
// cadence, posture, posture changes, artefact flag in 30-s epochs, and
// non-wear) over 7 days of 3-axis data at 50 Hz: the
// simulator's two-hour trail day tiled 84 times. Target: under 2 s per week
// on one core (issue 7).
func BenchmarkWeekAt50Hz(b *testing.B) {
	rec, err := sim.AccelSimulate(sim.AccelTrailDay(), sim.AccelConfig{RateHz: 50, Seed: 1})
	if err != nil {
		b.Fatal(err)
	}
	const reps = 7 * 12
	n := len(rec.X) * reps
	x, y, z := make([]float64, 0, n), make([]float64, 0, n), make([]float64, 0, n)
	for r := 0; r < reps; r++ {
		x, y, z = append(x, rec.X...), append(y, rec.Y...), append(z, rec.Z...)
	}
	spec := window.Spec{Length: 30 * time.Second, Step: 30 * time.Second}
	b.ResetTimer()
	cpu0 := processCPU()
	for i := 0; i < b.N; i++ {
		ep, err := motion.Epochs(x, y, z, 50, origin, spec, motion.Options{})
		if err != nil || len(ep) < 7*2880 {
			b.Fatalf("%d epochs, %v", len(ep), err)
		}
		if _, err := motion.NonWear(x, y, z, 50, motion.UnitG, motion.NonWearOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/week")
	// CPU seconds (all threads, garbage collector included) next to the wall
	// time, because the wall time on a shared machine includes waiting.
	b.ReportMetric((processCPU()-cpu0)/float64(b.N), "cpu-s/week")
	b.ReportMetric(float64(n*b.N)/b.Elapsed().Seconds(), "samples/s")
}
