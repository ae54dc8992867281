package window

import (
	"runtime"
	"testing"
	"time"
)

// The benchmark: 7 days of 250 Hz samples in 5 min windows every 30 s.
const (
	benchRate = 250.0
	benchDays = 7
)

func benchGrid(b *testing.B) Grid {
	g, err := NewGrid(Spec{Length: 5 * time.Minute, Step: 30 * time.Second}, time.Date(2026, 5, 1, 7, 13, 0, 0, time.UTC))
	if err != nil {
		b.Fatal(err)
	}
	return g
}

func BenchmarkSamplesBatch7Days(b *testing.B) {
	g := benchGrid(b)
	n := int(benchRate * 86400 * benchDays)
	gaps := []Interval{{Start: 3600, End: 3700}, {Start: 86400, End: 90000}}
	b.ReportAllocs()
	windows := 0
	for b.Loop() {
		seq, err := g.Samples(benchRate, 0, n, gaps)
		if err != nil {
			b.Fatal(err)
		}
		for range seq {
			windows++
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()*1e9/float64(b.N)/float64(n), "ns/sample")
	b.ReportMetric(float64(windows)/b.Elapsed().Seconds(), "windows/s")
}

func BenchmarkSamplesStream7Days(b *testing.B) {
	g := benchGrid(b)
	n := int(benchRate * 86400 * benchDays)
	chunk := make([]float64, int(benchRate)) // one second per push, as a live device would deliver
	b.ReportAllocs()
	var heapDay1, heapEnd uint64
	for b.Loop() {
		s, err := NewSampleStream[float64](g, benchRate, 0)
		if err != nil {
			b.Fatal(err)
		}
		sum := 0.0
		for i := 0; i < n; i += len(chunk) {
			if err := s.Push(chunk...); err != nil {
				b.Fatal(err)
			}
			for _, items := range s.Ready() {
				sum += float64(len(items))
			}
			if i == int(benchRate*86400) {
				heapDay1 = heapInUse()
			}
		}
		_ = s.Close()
		for range s.Ready() {
		}
		heapEnd = heapInUse()
		_ = sum
	}
	b.ReportMetric(b.Elapsed().Seconds()*1e9/float64(b.N)/float64(n), "ns/sample")
	// Flat memory: heap after 7 days minus heap after day 1 should be about 0.
	b.ReportMetric(float64(int64(heapEnd)-int64(heapDay1)), "heap-growth-B")
}

func heapInUse() uint64 {
	runtime.GC()
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	return m.HeapInuse
}

func BenchmarkEventsBatchDayOfBeats(b *testing.B) {
	g := benchGrid(b)
	times := make([]float64, 0, 86400*3/2)
	for t := 0.0; t < 86400; t += 0.8 {
		times = append(times, t)
	}
	b.ReportAllocs()
	for b.Loop() {
		seq, err := g.Events(times, 86400, nil)
		if err != nil {
			b.Fatal(err)
		}
		for range seq {
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()*1e9/float64(b.N)/float64(len(times)), "ns/event")
}
