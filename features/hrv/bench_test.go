package hrv

import (
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// restingNN simulates n intervals around 800 ms with respiratory (0.25 Hz)
// and baroreflex (0.1 Hz) modulation plus AR(1) noise, quantised to 1 ms as
// RR data are: a stand-in with realistic structure for the speed figures.
func restingNN(seed uint64, n int) (nn, end []float64) {
	rng := rand.New(rand.NewPCG(seed, 5))
	t, e := 0.0, 0.0
	for i := 0; i < n; i++ {
		e = 0.7*e + 15*rng.NormFloat64()
		v := math.Round(800 + 25*math.Sin(2*math.Pi*0.1*t) + 20*math.Sin(2*math.Pi*0.25*t) + e)
		t += v / 1000
		nn = append(nn, v)
		end = append(end, t)
	}
	return nn, end
}

// Target: the full metric set on one 5-min window in under 1 ms.
func BenchmarkCompute5min(b *testing.B) {
	nn, end := restingNN(1, 375) // 375 beats ~ 5 min at 75 bpm
	opt := Options{WindowS: 300}
	var w work
	for b.Loop() {
		m := w.compute(nn, end, opt)
		if m.Err != nil {
			b.Fatal(m.Err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()*1000/float64(b.N), "ms/window")
}

// The full set with the Lomb-Scargle and Burg estimators instead of Welch.
func BenchmarkCompute5minLomb(b *testing.B) { benchEstimator(b, Lomb) }

// BenchmarkCompute5minBurg: see BenchmarkCompute5minLomb.
func BenchmarkCompute5minBurg(b *testing.B) { benchEstimator(b, Burg) }

func benchEstimator(b *testing.B, e Estimator) {
	nn, end := restingNN(1, 375)
	opt := Options{WindowS: 300, Spectrum: SpectrumOptions{Estimator: e}}
	var w work
	for b.Loop() {
		if m := w.compute(nn, end, opt); m.Err != nil {
			b.Fatal(m.Err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()*1000/float64(b.N), "ms/window")
}

// Target: exact sample entropy of a 100,000-beat series in under 1 s.
func BenchmarkSampleEntropy100k(b *testing.B) {
	nn, _ := restingNN(2, 100000)
	r := 0.2 * sd(nn, Sample)
	for b.Loop() {
		if _, err := SampleEntropy(nn, 2, r); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/series")
}

// A day of 5-min windows every 30 s (2880 windows) through Windowed.
func BenchmarkDayWindows(b *testing.B) {
	nn, end := restingNN(3, 110000) // ~24.4 h at 75 bpm
	g, err := window.NewGrid(window.Spec{Length: 5 * time.Minute, Step: 30 * time.Second, Anchor: window.AnchorStart},
		time.Date(2026, 6, 1, 0, 0, 0, 0, time.UTC))
	if err != nil {
		b.Fatal(err)
	}
	day := 86400.0
	k := 0
	for k < len(end) && end[k] < day {
		k++
	}
	nn, end = nn[:k], end[:k]
	var wins int
	for b.Loop() {
		seq, err := Windowed(g, end, nn, day, nil, Options{})
		if err != nil {
			b.Fatal(err)
		}
		wins = 0
		for range seq {
			wins++
		}
	}
	b.ReportMetric(float64(wins), "windows")
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/day")
}
