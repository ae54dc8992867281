package hrv

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// Sinusoidal NN modulation (methods.md 2.7, derived): 50 ms at 0.1 Hz gives
// LF ~ A^2/2 = 1250 ms^2, HF ~ 0, LF n.u. ~ 100; 30 ms at 0.25 Hz gives HF ~
// 450 ms^2; their sum gives LF/HF ~ 2.78 and 73.5 / 26.5 n.u. (LF+HF
// denominator). Tolerance 5 % for leakage and spline smoothing, as methods.md
// allows for Welch and Lomb-Scargle. For Burg the series carries 5 ms of
// white noise: a noiseless sinusoid drives the AR poles onto the unit circle
// and the peak becomes a line no frequency grid integrates (its power shifts
// by the noise share, ~ 25 ms^2 spread over 0-0.5 Hz, below 1 %).
func TestSinusoidBands(t *testing.T) {
	for _, est := range []Estimator{Welch, Lomb, Burg} {
		opt := Options{Spectrum: SpectrumOptions{Estimator: est}}
		t.Run(est.String(), func(t *testing.T) {
			sinusoidNN := sinusoidNN
			if est == Burg {
				rng := rand.New(rand.NewPCG(21, 1))
				sinusoidNN = func(d float64, a, f []float64) ([]float64, []float64) {
					nn, end := sinusoidNNFunc(d, a, f)
					for i := range nn {
						nn[i] += 5 * rng.NormFloat64()
					}
					return nn, end
				}
			}
			nn, end := sinusoidNN(300, []float64{50}, []float64{0.1})
			m := Compute(nn, end, opt)
			if !near(m.LFms2, 1250, 0.05*1250) || m.HFms2 > 0.02*1250 || m.LFnuSum < 95 {
				t.Errorf("0.1 Hz: LF %v HF %v LFnu %v, want 1250 +- 5 %%, ~0, ~100 (derived)", m.LFms2, m.HFms2, m.LFnuSum)
			}
			if !near(m.LFPeakHz, 0.1, 0.005) {
				t.Errorf("LF peak %v Hz, want 0.1", m.LFPeakHz)
			}
			nn, end = sinusoidNN(300, []float64{30}, []float64{0.25})
			m = Compute(nn, end, opt)
			if !near(m.HFms2, 450, 0.05*450) {
				t.Errorf("0.25 Hz: HF %v, want 450 +- 5 %% (derived)", m.HFms2)
			}
			nn, end = sinusoidNN(300, []float64{50, 30}, []float64{0.1, 0.25})
			m = Compute(nn, end, opt)
			if !near(m.LFms2, 1250, 0.05*1250) || !near(m.HFms2, 450, 0.05*450) ||
				!near(m.LFHF, 2.78, 0.05*2.78) || !near(m.LFnuSum, 73.5, 1.5) || !near(m.HFnuSum, 26.5, 1.5) {
				t.Errorf("sum: LF %v HF %v LF/HF %v nu %v/%v, want 1250 450 2.78 73.5/26.5 (derived)",
					m.LFms2, m.HFms2, m.LFHF, m.LFnuSum, m.HFnuSum)
			}
		})
	}
}

// Parseval (methods.md 2.7, derived): for white noise of variance s^2 the
// one-sided PSD integrates to ~ s^2 over (0, fs/2]. For Lomb-Scargle the
// upper limit is the mean Nyquist frequency 1/(2 T) (Laguna, Moody and Mark
// 1998).
func TestSpectrumParseval(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 3))
	var nn []float64
	for i := 0; i < 3000; i++ {
		nn = append(nn, 1000+40*rng.NormFloat64())
	}
	end := cumulative(nn)
	tbar := (end[len(end)-1] - end[0]) / float64(len(end)-1)
	p, err := Spectrum(nn, end, SpectrumOptions{Estimator: Lomb, Detrend: MeanOnly, MaxHz: 1 / (2 * tbar)})
	if err != nil {
		t.Fatal(err)
	}
	var v float64
	for _, x := range nn {
		v += (x - 1000) * (x - 1000)
	}
	v /= float64(len(nn))
	if got := p.BandPower(Band{0, 1 / (2 * tbar)}); !near(got, v, 0.05*v) {
		t.Errorf("Lomb: integral %v, variance %v (Parseval, derived)", got, v)
	}
}

// A constant series has zero power in every band (methods.md 2.7, derived);
// the ratios are then undefined, not 0.
func TestSpectrumConstant(t *testing.T) {
	nn := make([]float64, 300)
	for i := range nn {
		nn[i] = 1000
	}
	for _, est := range []Estimator{Welch, Lomb, Burg} {
		m := Compute(nn, nil, Options{Spectrum: SpectrumOptions{Estimator: est}})
		if m.LFms2 != 0 || m.HFms2 != 0 || m.VLFms2 != 0 || m.TotalPowerms2 != 0 {
			t.Errorf("%v: powers %v %v %v %v, want 0", est, m.VLFms2, m.LFms2, m.HFms2, m.TotalPowerms2)
		}
		if !math.IsNaN(m.LFHF) || m.Reasons["lf_hf_ratio"] == "" || !math.IsNaN(m.LFPeakHz) {
			t.Errorf("%v: LF/HF %v (%q), LF peak %v; want NaN with reasons", est, m.LFHF, m.Reasons["lf_hf_ratio"], m.LFPeakHz)
		}
	}
}

var sinusoidNNFunc = sinusoidNN

func TestSpectrumBadInput(t *testing.T) {
	if _, err := Spectrum([]float64{800, 800, 800}, nil, SpectrumOptions{}); !errors.Is(err, ErrTooFew) {
		t.Errorf("3 intervals: %v", err)
	}
	if _, err := Spectrum([]float64{800, 800, 800, 800}, []float64{1, 2, 2, 3}, SpectrumOptions{}); !errors.Is(err, ErrInput) {
		t.Errorf("repeated time: %v", err)
	}
	if _, err := Spectrum(randomNN(1, 100), nil, SpectrumOptions{Estimator: 9}); !errors.Is(err, ErrInput) {
		t.Errorf("unknown estimator: %v", err)
	}
	if _, err := Spectrum(randomNN(1, 100), nil, SpectrumOptions{Estimator: Lomb, StepHz: 1e-9}); !errors.Is(err, ErrInput) {
		t.Errorf("huge Lomb grid: %v, want ErrInput (bounded)", err)
	}
	// A day of beats: Lomb-Scargle refuses rather than run for minutes.
	if _, err := Spectrum(randomNN(2, 100000), nil, SpectrumOptions{Estimator: Lomb}); !errors.Is(err, ErrInput) {
		t.Errorf("day-long Lomb: %v, want ErrInput (bounded work)", err)
	}
}

// A band below the estimator's resolution is undefined, not 0: 64-s Welch
// segments resolve 1/64 Hz, far above the ULF band (<= 0.003 Hz).
func TestBandBelowResolution(t *testing.T) {
	nn, end := sinusoidNN(1200, []float64{20}, []float64{0.1})
	m := Compute(nn, end, Options{Min: MinData{ULFSpanS: 600}})
	if !math.IsNaN(m.ULFms2) || !strings.Contains(m.Reasons["ulf_ms2"], "resol") {
		t.Errorf("ULF %v (%q), want NaN: not resolved", m.ULFms2, m.Reasons["ulf_ms2"])
	}
	m = Compute(nn, end, Options{Min: MinData{ULFSpanS: 600}, Spectrum: SpectrumOptions{Segment: 4096}})
	if math.IsNaN(m.ULFms2) {
		t.Errorf("ULF with 1024-s segments: %v (%s), want a value", m.ULFms2, m.Reasons["ulf_ms2"])
	}
}

// Other resampling rates keep the result (methods.md 2.6: 2-10 Hz seen in
// practice): LF of the 50 ms, 0.1 Hz modulation stays A^2/2 = 1250 ms^2
// (derived), the default lambda following the rate.
func TestResampleRates(t *testing.T) {
	nn, end := sinusoidNN(300, []float64{50}, []float64{0.1})
	for _, fs := range []float64{2, 8} {
		m := Compute(nn, end, Options{Spectrum: SpectrumOptions{ResampleHz: fs}})
		if !near(m.LFms2, 1250, 0.05*1250) {
			t.Errorf("%v Hz: LF %v, want 1250 +- 5 %% (derived)", fs, m.LFms2)
		}
	}
}
