package motion_test

import (
	"runtime"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/motion"
)

// BenchmarkNonWearStreamWeek feeds 7 days of 3-axis data at 50 Hz (the
// simulator's trail day tiled) to a NonWearStream in one-minute chunks,
// reading the live value per 30 s as package features does. It reports the
// time per week and the heap in use at the end (bounded: about two 15-min
// blocks of samples, independent of the record length, on top of the 8.6 MB
// simulated day it replays; measured 0.44 s and 10.7 MB on the shared 2-core development machine).
func BenchmarkNonWearStreamWeek(b *testing.B) {
	rec, err := sim.AccelSimulate(sim.AccelTrailDay(), sim.AccelConfig{RateHz: 50, Seed: 1})
	if err != nil {
		b.Fatal(err)
	}
	const rate, chunk = 50, 3000
	reps := 7 * 24 * 3600 * rate / len(rec.X)
	b.ResetTimer()
	var heap float64
	for i := 0; i < b.N; i++ {
		s, err := motion.NewNonWearStream(rate, motion.UnitG, motion.NonWearOptions{})
		if err != nil {
			b.Fatal(err)
		}
		pushed := 0
		for r := 0; r < reps; r++ {
			for lo := 0; lo < len(rec.X); lo += chunk {
				hi := min(len(rec.X), lo+chunk)
				if err := s.Push(rec.X[lo:hi], rec.Y[lo:hi], rec.Z[lo:hi]); err != nil {
					b.Fatal(err)
				}
				pushed += hi - lo
				now := float64(pushed) / rate
				_ = s.TrailingFrac(now-30, now)
				s.Forget(now - 30)
			}
		}
		if err := s.Close(); err != nil {
			b.Fatal(err)
		}
		var ms runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&ms)
		heap = float64(ms.HeapInuse)
		runtime.KeepAlive(s)
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/week")
	b.ReportMetric(heap/1e6, "heapMB-end")
}
