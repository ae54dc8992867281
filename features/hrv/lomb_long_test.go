package hrv

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// dayNN simulates n NN intervals (ms) with a mean of 864 ms and sinusoidal
// modulation in time: ULF (period 8 h, amplitude 50 ms), VLF (0.02 Hz,
// 20 ms), LF (0.1 Hz, 30 ms), HF (0.25 Hz, 20 ms), plus white noise of SD
// 10 ms. A sinusoid of amplitude A carries power A^2/2 (methods.md 2.6,
// derived).
func dayNN(seed uint64, n int) []float64 {
	rng := rand.New(rand.NewPCG(seed, 17))
	nn := make([]float64, n)
	ti := 0.0
	for i := range nn {
		v := 864 + 50*math.Sin(2*math.Pi*ti/(8*3600)) + 20*math.Sin(2*math.Pi*0.02*ti) +
			30*math.Sin(2*math.Pi*0.1*ti) + 20*math.Sin(2*math.Pi*0.25*ti) + 10*rng.NormFloat64()
		nn[i] = v
		ti += v / 1000
	}
	return nn
}

// LombFast through Spectrum agrees with the direct Lomb-Scargle of the same
// package on an hour of uneven beats (relative band-power error below 1e-3
// with the default extirpolation order and oversampling; the measured
// error of the dsp core is about 1e-4, internal/dsp lomb_test.go), and
// LombAuto stays direct (and identical) when the direct form fits.
func TestLombFastSpectrumMatchesDirect(t *testing.T) {
	nn := dayNN(1, 4000)
	end := cumulative(nn)
	direct, err := Spectrum(nn, end, SpectrumOptions{Estimator: Lomb})
	if err != nil {
		t.Fatal(err)
	}
	fast, err := Spectrum(nn, end, SpectrumOptions{Estimator: LombFast})
	if err != nil {
		t.Fatal(err)
	}
	if fast.Estimator != LombFast || !strings.Contains(fast.Method, "Press-Rybicki") {
		t.Errorf("fast: estimator %v, method %q", fast.Estimator, fast.Method)
	}
	if len(fast.Power) != len(direct.Power) || fast.StepHz != direct.StepHz {
		t.Fatalf("grids differ: %d/%v vs %d/%v", len(fast.Power), fast.StepHz, len(direct.Power), direct.StepHz)
	}
	b := TaskForceBands
	for _, bd := range []Band{b.VLF, b.LF, b.HF} {
		d, f := direct.BandPower(bd), fast.BandPower(bd)
		if math.Abs(f-d) > 1e-3*d {
			t.Errorf("band %v: fast %v, direct %v (rel %.2g)", bd, f, d, math.Abs(f-d)/d)
		}
	}
	auto, err := Spectrum(nn, end, SpectrumOptions{Estimator: LombAuto})
	if err != nil {
		t.Fatal(err)
	}
	if auto.Estimator != Lomb || !strings.Contains(auto.Method, "direct, chosen automatically") {
		t.Errorf("auto on an hour: estimator %v, method %q; want direct", auto.Estimator, auto.Method)
	}
	for k := range auto.Power {
		if auto.Power[k] != direct.Power[k] {
			t.Fatalf("auto differs from direct at %v Hz", auto.FreqHz[k])
		}
	}
}

// A day of beats (100,000): direct Lomb still refuses (bounded work), while
// LombAuto falls back to the fast form, says so in Method, and gives
// finite ULF/VLF/LF/HF powers through Compute. With mean-only detrending
// the band powers match the simulated sinusoids, A^2/2 each plus the white
// noise's share 2 s^2 T (band width) (methods.md 2.6, derived), within 10 %.
func TestLombDayLong(t *testing.T) {
	if testing.Short() {
		t.Skip("day-long series: skipped with -short")
	}
	nn := dayNN(2, 100000)
	end := cumulative(nn)
	if _, err := Spectrum(nn, end, SpectrumOptions{Estimator: Lomb}); !errors.Is(err, ErrInput) {
		t.Fatalf("direct Lomb on a day: %v, want ErrInput", err)
	}
	p, err := Spectrum(nn, end, SpectrumOptions{Estimator: LombAuto, Detrend: MeanOnly})
	if err != nil {
		t.Fatal(err)
	}
	if p.Estimator != LombFast || !strings.Contains(p.Method, "chosen automatically") {
		t.Errorf("auto on a day: estimator %v, method %q; want LombFast, stated", p.Estimator, p.Method)
	}
	tbar := (end[len(end)-1] - end[0]) / float64(len(end)-1)
	b := TaskForceBands
	for _, c := range []struct {
		bd   Band
		amp  float64
		name string
	}{{b.ULF, 50, "ULF"}, {b.VLF, 20, "VLF"}, {b.LF, 30, "LF"}, {b.HF, 20, "HF"}} {
		want := c.amp*c.amp/2 + 2*100*tbar*(c.bd.Hi-c.bd.Lo)
		got := p.BandPower(c.bd)
		t.Logf("%s: %.1f ms^2, expected %.1f (derived)", c.name, got, want)
		if math.Abs(got-want) > 0.1*want {
			t.Errorf("%s: %v ms^2, want %v (sinusoid A^2/2 + noise, derived)", c.name, got, want)
		}
	}
	m := Compute(nn, end, Options{Spectrum: SpectrumOptions{Estimator: LombAuto}})
	for name, v := range map[string]float64{"ULF": m.ULFms2, "VLF": m.VLFms2, "LF": m.LFms2, "HF": m.HFms2} {
		if math.IsNaN(v) || math.IsInf(v, 0) || v <= 0 {
			t.Errorf("Compute on a day: %s = %v (reasons %v)", name, v, m.Reasons)
		}
	}
	if m.PSD.Estimator != LombFast || !strings.Contains(m.PSD.Method, "fast approximation") {
		t.Errorf("Compute PSD: %v %q", m.PSD.Estimator, m.PSD.Method)
	}
}

func TestLombFastBadOptions(t *testing.T) {
	nn := dayNN(3, 500)
	if _, err := Spectrum(nn, nil, SpectrumOptions{Estimator: LombFast, LombOrder: 20}); err == nil {
		t.Error("order 20 accepted")
	}
	if _, err := Spectrum(nn, nil, SpectrumOptions{Estimator: LombFast, StepHz: 1e-9}); !errors.Is(err, ErrInput) {
		t.Errorf("huge grid: %v, want ErrInput", err)
	}
}

// BenchmarkLombDay: seconds per day-long NN series (100,000 beats) for the
// spectrum by LombAuto (falls back to the fast form), default options.
func BenchmarkLombDay(b *testing.B) {
	nn := dayNN(4, 100000)
	end := cumulative(nn)
	b.ResetTimer()
	for b.Loop() {
		if _, err := Spectrum(nn, end, SpectrumOptions{Estimator: LombAuto}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/day-series")
}
