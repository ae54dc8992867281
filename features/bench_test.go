package features

import (
	"runtime"
	"sync"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

var (
	dayOnce sync.Once
	dayRec  *recording.Recording
	dayErr  error
)

// dayRecording builds, once, a 24-hour multimodal recording from the
// simulators: ECG at 250 Hz (sim.ECGSimulate, 62 beats/min with RSA), the
// two bands at 50 Hz (sim.BreathSimulate, quiet breathing) and the chest
// accelerometer at 50 Hz (sim.AccelSimulate, sitting, walking and lying).
func dayRecording(b *testing.B) *recording.Recording {
	dayOnce.Do(func() {
		const day = 86400.0
		e, err := sim.ECGSimulate(sim.ECGConfig{DurationS: day, MeanHR: 62, RSAFraction: 0.04, JitterFraction: 0.02, NoisemV: 0.02, Seed: 1})
		if err != nil {
			dayErr = err
			return
		}
		br, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 2, Segments: sim.BreathQuiet(day)})
		if err != nil {
			dayErr = err
			return
		}
		var segs []sim.AccelSegment
		for len(segs) < 96 {
			segs = append(segs,
				sim.AccelSegment{Activity: sim.AccelSitting, DurationS: 1800},
				sim.AccelSegment{Activity: sim.AccelWalking, DurationS: 600, CadenceSPM: 110},
				sim.AccelSegment{Activity: sim.AccelSupine, DurationS: 1200})
		}
		a, err := sim.AccelSimulate(segs[:72], sim.AccelConfig{Seed: 3})
		if err != nil {
			dayErr = err
			return
		}
		r := &recording.Recording{Name: "day", Start: testStart, StartKnown: true}
		add := func(name string, role recording.Role, unit string, rate float64, x []float64) {
			if n := int(day * rate); len(x) > n {
				x = x[:n]
			}
			r.Channels = append(r.Channels, recording.Channel{Name: name, Unit: unit, RateHz: rate, Samples: x, Role: role})
		}
		add("ECG", recording.RoleECG, "mV", e.RateHz, e.Samples)
		add("rib", recording.RoleRibCage, "", br.RateHz, br.Rib)
		add("abd", recording.RoleAbdomen, "", br.RateHz, br.Abd)
		add("acc_x", recording.RoleAccX, "g", a.RateHz, a.X)
		add("acc_y", recording.RoleAccY, "g", a.RateHz, a.Y)
		add("acc_z", recording.RoleAccZ, "g", a.RateHz, a.Z)
		dayRec = r
	})
	if dayErr != nil {
		b.Fatal(dayErr)
	}
	return dayRec
}

func totalSamples(r *recording.Recording) int {
	n := 0
	for _, c := range r.Channels {
		n += len(c.Samples)
	}
	return n
}

// BenchmarkExtractDay is the issue 8 target: a 24-hour multimodal recording
// to the full table at 5 min / 30 s (target under 3 s on 2 cores, memory
// under 1 GiB). samples/s over all channels gives the cost per recorded day.
// Measured on the 2-core development machine when otherwise idle: 2.0-2.5 s
// wall and 3.9-4.9 CPU-s per simulated day (17-21 million samples/s), peak
// heap about 740 MB of which 346 MB is the recording itself (43.2 million
// float64 samples). Wall time doubles when another process holds a core;
// cpu_s/day is the steadier figure.
func BenchmarkExtractDay(b *testing.B) { benchExtract(b, Config{}) }

// BenchmarkExtractDayNoECGQuality is BenchmarkExtractDay without the ECG
// quality columns (Config.NoECGQuality).
func BenchmarkExtractDayNoECGQuality(b *testing.B) { benchExtract(b, Config{NoECGQuality: true}) }

func benchExtract(b *testing.B, cfg Config) {
	rec := dayRecording(b)
	n := totalSamples(rec)
	b.ReportAllocs()
	runtime.GC()
	stop := make(chan struct{})
	peak := make(chan uint64)
	go samplePeak(stop, peak)
	b.ResetTimer()
	cpu0 := cpuSeconds()
	rows := 0
	for range b.N {
		t, err := Extract(rec, cfg)
		if err != nil {
			b.Fatal(err)
		}
		rows = len(t.Rows)
	}
	b.StopTimer()
	b.ReportMetric((cpuSeconds()-cpu0)/float64(b.N), "cpu_s/day")
	close(stop)
	b.ReportMetric(float64(<-peak)/(1<<20), "peak_heap_MB")
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "samples/s")
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/day")
	b.ReportMetric(float64(rows), "rows")
}

// BenchmarkStreamDay feeds the same day to a Stream in 1-s chunks per
// channel. It reports samples/s, the live heap after a GC sampled every
// simulated hour (max_heap_MB, which must stay flat: it does not grow with
// the hours pushed), and the mean cost of a Push (push_us: the latency a
// caller sees after a window closes is at most one Push, plus the families'
// decision delays documented on Stream).
func BenchmarkStreamDay(b *testing.B) { benchStream(b, 86400) }

// BenchmarkStreamHour is BenchmarkStreamDay over the first hour; its
// row_lag_s metrics (seconds of data pushed after a row's time before the
// row is released) show the latency of the slowest family.
func BenchmarkStreamHour(b *testing.B) { benchStream(b, 3600) }

func benchStream(b *testing.B, dur int) {
	rec := dayRecording(b)
	n := 0
	for _, c := range rec.Channels {
		n += int(float64(dur) * c.RateHz)
	}
	var ms runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&ms)
	base := ms.HeapAlloc
	b.ResetTimer()
	var maxHeap, firstHeap uint64
	pushes := 0
	var lagSum, lagMax float64
	lagN := 0
	for range b.N {
		s, err := NewStream(rec, Config{})
		if err != nil {
			b.Fatal(err)
		}
		for sec := 0; sec < dur; sec++ {
			for ci, c := range rec.Channels {
				lo, hi := int(float64(sec)*c.RateHz), int(float64(sec+1)*c.RateHz)
				if err := s.Push(ci, c.Samples[lo:min(hi, len(c.Samples))]); err != nil {
					b.Fatal(err)
				}
				pushes++
			}
			for r := range s.Ready() {
				lag := float64(sec+1) - r.Offset
				lagSum += lag
				lagMax = max(lagMax, lag)
				lagN++
			}
			if sec%3600 == 3599 {
				b.StopTimer()
				runtime.GC()
				runtime.ReadMemStats(&ms)
				h := ms.HeapAlloc - min(base, ms.HeapAlloc)
				if sec == 3599 {
					firstHeap = h
				}
				maxHeap = max(maxHeap, h)
				b.StartTimer()
			}
		}
		if err := s.Close(); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds(), "samples/s")
	b.ReportMetric(float64(maxHeap)/(1<<20), "max_heap_MB")
	b.ReportMetric(float64(firstHeap)/(1<<20), "hour1_heap_MB")
	b.ReportMetric(b.Elapsed().Seconds()*1e6/float64(pushes), "push_us")
	b.ReportMetric(lagSum/float64(max(lagN, 1)), "mean_row_lag_s")
	b.ReportMetric(lagMax, "max_row_lag_s")
}

// samplePeak records the largest heap in use (including the recording
// itself) every 5 ms until stop is closed.
func samplePeak(stop chan struct{}, out chan uint64) {
	var ms runtime.MemStats
	var m uint64
	for {
		select {
		case <-stop:
			out <- m
			return
		default:
		}
		runtime.ReadMemStats(&ms)
		m = max(m, ms.HeapInuse)
		time.Sleep(5 * time.Millisecond)
	}
}
