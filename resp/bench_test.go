package resp_test

import (
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// dayLong returns 24 hours of two-band data at 50 Hz: the trail-day
// schedule repeated (exercise, rest, sleep with apneas).
func dayLong(b *testing.B) *sim.BreathRecording {
	b.Helper()
	var segs []sim.BreathSegment
	total := 0.0
	for total < 86400 {
		for _, s := range sim.BreathTrailDay() {
			if total >= 86400 {
				break
			}
			segs = append(segs, s)
			total += s.DurationS
		}
	}
	rec, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 1, Segments: segs})
	if err != nil {
		b.Fatal(err)
	}
	return rec
}

// BenchmarkDay24h: breath detection, events and 60 s / 30 s windowed
// features for a 24-hour two-band recording at 50 Hz (issue target: under
// 0.5 s per recording).
func BenchmarkDay24h(b *testing.B) {
	rec := dayLong(b)
	g, err := window.NewGrid(window.Spec{Length: time.Minute, Step: 30 * time.Second}, time.Date(2026, 5, 16, 0, 0, 0, 0, time.UTC))
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	var nb, nw int
	for i := 0; i < b.N; i++ {
		r, err := resp.Detect(rec.Rib, rec.Abd, resp.Options{RateHz: 50})
		if err != nil {
			b.Fatal(err)
		}
		ev, err := resp.DetectEvents(r, resp.EventOptions{})
		if err != nil {
			b.Fatal(err)
		}
		ws, err := resp.Windows(g, r, ev, rec.DurationS(), resp.SummaryOptions{})
		if err != nil {
			b.Fatal(err)
		}
		nb, nw = len(r.Breaths), len(ws)
	}
	sec := b.Elapsed().Seconds() / float64(b.N)
	b.ReportMetric(sec, "s/day")
	b.ReportMetric(float64(2*len(rec.Rib))/sec, "samples/s")
	b.ReportMetric(float64(nb), "breaths")
	b.ReportMetric(float64(nw), "windows")
}
