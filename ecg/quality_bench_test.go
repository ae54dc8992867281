package ecg_test

import (
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// BenchmarkWindowQuality is the ECG quality family's per-window cost: one
// 30-s window of 250 Hz ECG (the default row step) through WindowQuality
// (flags, moments, Welch spectrum, envelope detector, bSQI). A day of rows
// is 2880 windows: windows/s over 2880 gives days per second on one core.
func BenchmarkWindowQuality(b *testing.B) {
	s, err := sim.ECGSimulate(sim.ECGConfig{RateHz: 250, DurationS: 30, MeanHR: 62, RSAFraction: 0.04, NoisemV: 0.02, Seed: 1})
	if err != nil {
		b.Fatal(err)
	}
	x := s.Samples[:7500]
	beats := make([]float64, 0, len(s.Beats))
	for _, bt := range s.Beats {
		if bt.TimeS < 30 {
			beats = append(beats, bt.TimeS)
		}
	}
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		if _, err := ecg.WindowQuality(x, 250, beats, ecg.QualityOptions{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "windows/s")
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N)*2880, "cpu_s/day")
}
