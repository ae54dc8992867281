package hrv_test

import (
	"fmt"
	"math"
	"time"

	"github.com/tidalbeat/tidalbeat/features/hrv"
	"github.com/tidalbeat/tidalbeat/window"
)

func ExampleRMSSD() {
	// NN intervals (ms) alternating 800 and 850: every successive
	// difference is 50 ms.
	nn := []float64{800, 850, 800, 850, 800, 850}
	v, err := hrv.RMSSD(nn)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("RMSSD %.1f ms\n", v)
	_, err = hrv.RMSSD(nn[:1])
	fmt.Println(err)
	// Output:
	// RMSSD 50.0 ms
	// hrv: RMSSD of 1 intervals: too few intervals
}

// A trail runner's 5-minute cool-down: NN slowly lengthening, modulated by
// breathing at 0.25 Hz (15 breaths/min) and a 0.1 Hz rhythm.
func ExampleCompute() {
	var nn, end []float64
	t := 0.0
	for t < 300 {
		v := 700 + 0.2*t + 30*math.Sin(2*math.Pi*0.25*t) + 20*math.Sin(2*math.Pi*0.1*t)
		t += v / 1000
		nn = append(nn, v)
		end = append(end, t)
	}
	m := hrv.Compute(nn, end, hrv.Options{WindowS: 300})
	// LF ~ 20^2/2 = 200 ms2 and HF ~ 30^2/2 = 450 ms2 (methods.md 2.7, derived).
	fmt.Printf("N %d, coverage %.2f\n", m.N, m.NNCoverage)
	fmt.Printf("mean HR %.0f bpm, RMSSD %.0f ms\n", m.MeanHRbpm, m.RMSSDms)
	fmt.Printf("LF %.0f ms2, HF %.0f ms2, LF/HF %.2f\n", m.LFms2, m.HFms2, m.LFHF)
	fmt.Printf("HF peak %.2f Hz\n", m.HFPeakHz)
	fmt.Printf("DFA alpha2: %v (%s)\n", m.DFAAlpha2, m.Reasons["dfa_alpha2"])
	// Output:
	// N 412, coverage 1.00
	// mean HR 82 bpm, RMSSD 24 ms
	// LF 197 ms2, HF 447 ms2, LF/HF 0.44
	// HF peak 0.25 Hz
	// DFA alpha2: NaN (412 intervals, dfa_alpha2 needs 1000)
}

func ExampleSampleEntropy() {
	// Exact small case (Richman and Moorman 2000 definition): A = 5, B = 8.
	x := []float64{1, 2, 3, 1, 2, 3, 1, 2, 4, 1, 2, 3}
	v, _ := hrv.SampleEntropy(x, 2, 0.5)
	fmt.Printf("%.6f\n", v)
	// Output: 0.470004
}

func ExampleColumns() {
	cols := hrv.Columns()
	fmt.Println(len(cols), cols[0], cols[1], cols[10])
	// Output: 42 hrv_n_nn hrv_nn_coverage_frac rmssd_ms
}

func ExampleWindowed() {
	// Beats every 0.8 s for 10 minutes; 5-minute windows every 5 minutes.
	var beats []float64
	for b := 0.0; b < 600; b += 0.8 {
		beats = append(beats, b)
	}
	nn, end, _ := hrv.NNFromBeats(beats, nil)
	g, _ := window.NewGrid(window.Spec{Length: 5 * time.Minute, Step: 5 * time.Minute, Anchor: window.AnchorStart},
		time.Date(2026, 6, 1, 14, 0, 0, 0, time.UTC))
	seq, _ := hrv.Windowed(g, end, nn, 600, nil, hrv.Options{})
	for w, m := range seq {
		fmt.Printf("%s  N %d  mean NN %.0f ms  SDNN %.0f ms\n", w.StartUTC.Format("15:04"), m.N, m.MeanNNms, m.SDNNms)
	}
	// Output:
	// 14:00  N 374  mean NN 800 ms  SDNN 0 ms
	// 14:05  N 374  mean NN 800 ms  SDNN 0 ms
}

// The PSD behind the frequency measures, for plotting: 30 ms of respiratory
// modulation at 0.25 Hz shows as the HF peak, with HF ~ 30^2/2 = 450 ms2
// (methods.md 2.7, derived).
func ExampleSpectrum() {
	var nn, end []float64
	t := 0.0
	for t < 300 {
		v := 900 + 30*math.Sin(2*math.Pi*0.25*t)
		t += v / 1000
		nn = append(nn, v)
		end = append(end, t)
	}
	psd, err := hrv.Spectrum(nn, end, hrv.SpectrumOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s: %d bins of %.4f Hz, resolution %.4f Hz\n", psd.Estimator, len(psd.FreqHz), psd.StepHz, psd.ResolutionHz)
	fmt.Printf("peak %.3f Hz, HF %.0f ms2\n", psd.Peak(hrv.TaskForceBands.HF), psd.BandPower(hrv.TaskForceBands.HF))
	// Output:
	// welch: 513 bins of 0.0039 Hz, resolution 0.0156 Hz
	// peak 0.250 Hz, HF 442 ms2
}

// Live use: push intervals as beats arrive, read windows as they close.
func ExampleStream() {
	g, _ := window.NewGrid(window.Spec{Length: time.Minute, Step: time.Minute, Anchor: window.AnchorStart},
		time.Date(2026, 6, 1, 7, 30, 0, 0, time.UTC))
	s, _ := hrv.NewStream(g, hrv.Options{})
	t := 0.0
	for i := 0; t < 180; i++ {
		v := 750.0
		if i%2 == 1 {
			v = 790
		}
		t += v / 1000
		_ = s.Push(hrv.Interval{EndS: t, NNms: v})
		for w, m := range s.Ready() {
			fmt.Printf("%s RMSSD %.0f ms\n", w.EndUTC.Format("15:04"), m.RMSSDms)
		}
	}
	// Output:
	// 07:31 RMSSD 40 ms
	// 07:32 RMSSD 40 ms
	// 07:33 RMSSD 40 ms
}
