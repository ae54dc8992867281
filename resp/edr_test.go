package resp_test

import (
	"errors"
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/resp"
)

func TestEDRKnownModulation(t *testing.T) {
	// methods reference 5.6 check (derived): R amplitudes following
	// 1 + 0.1 sin(2 pi 0.25 t) give an EDR spectral peak at 0.25 Hz
	// (15 breaths/min); after Moody et al. 1985. Beats at ~72/min with
	// jitter, one NaN amplitude and one outlier that must be dropped.
	var times, amp []float64
	tb := 0.4
	for i := 0; tb < 300; i++ {
		times = append(times, tb)
		amp = append(amp, 1+0.1*math.Sin(2*math.Pi*0.25*tb))
		tb += 0.83 + 0.02*math.Sin(float64(i)*1.7)
	}
	amp[50] = math.NaN()
	amp[120] = 9
	r, err := resp.EDR(times, amp, resp.EDROptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.PeakHz-0.25) > 0.003 || math.Abs(r.RatePerMin-15) > 0.2 || r.Dropped != 2 || r.PeakFrac < 0.5 {
		t.Errorf("EDR peak %v Hz (%v/min), dropped %d, peak share %v; want 0.25 Hz, 15/min, 2 dropped (methods 5.6, derived)", r.PeakHz, r.RatePerMin, r.Dropped, r.PeakFrac)
	}
	if _, err := resp.EDR(times[:10], amp[:10], resp.EDROptions{}); !errors.Is(err, resp.ErrTooFew) {
		t.Errorf("10 beats: %v", err)
	}
	if _, err := resp.EDR([]float64{1, 0.5}, []float64{1, 1}, resp.EDROptions{}); !errors.Is(err, resp.ErrInput) {
		t.Errorf("decreasing times: %v", err)
	}
	flat := make([]float64, len(times))
	if _, err := resp.EDR(times, flat, resp.EDROptions{}); !errors.Is(err, resp.ErrUndefined) {
		t.Errorf("flat amplitudes: %v", err)
	}
}

func TestRSAPeakValley(t *testing.T) {
	// methods reference 5.6 check (derived): NN modulated at the breathing
	// frequency 0.25 Hz with amplitude 30 ms gives a peak-valley RSA of about
	// 60 ms (Grossman et al. 1990 method). Breathing sum = sin(2 pi 0.25 t);
	// RR = 0.5 s - 30 ms cos(2 pi 0.25 t): longest in mid-expiration,
	// shortest in mid-inspiration.
	fs := 50.0
	n := int(120 * fs)
	rib := make([]float64, n)
	abd := make([]float64, n)
	for i := range rib {
		s := math.Sin(2 * math.Pi * 0.25 * float64(i) / fs)
		rib[i], abd[i] = 0.5*s, 0.5*s
	}
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: fs})
	if err != nil {
		t.Fatal(err)
	}
	var beats []float64
	for tb := 0.1; tb < 120; {
		beats = append(beats, tb)
		tb += 0.5 - 0.030*math.Cos(2*math.Pi*0.25*(tb+0.25))
	}
	res, err := resp.RSAPeakValley(beats, inner(r.Breaths))
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("RSA %.2f ms over %d breaths", res.MeanMs, res.Breaths)
	if res.Breaths < 20 || math.Abs(res.MeanMs-60) > 6 {
		t.Errorf("RSA %v ms over %d breaths, want about 60 ms (methods 5.6, derived)", res.MeanMs, res.Breaths)
	}
	if _, err := resp.RSAPeakValley([]float64{2, 1}, r.Breaths); !errors.Is(err, resp.ErrInput) {
		t.Errorf("decreasing beats: %v", err)
	}
}

func TestEDRPeriodogramAgainstScipy(t *testing.T) {
	// The spectral step of EDR checked against scipy.signal.periodogram
	// (Debian python3-scipy) on the same band-passed series: the peak
	// frequencies agree to the 0.001 Hz grid (plus the symmetric versus
	// periodic Hann window difference).
	var times, amp []float64
	tb := 0.3
	for i := 0; tb < 240; i++ {
		times = append(times, tb)
		amp = append(amp, 1+0.08*math.Sin(2*math.Pi*0.21*tb)+0.03*math.Sin(2*math.Pi*0.33*tb+1)+0.01*math.Sin(float64(i)*2.3))
		tb += 0.9 + 0.05*math.Sin(float64(i)*0.7)
	}
	r, err := resp.EDR(times, amp, resp.EDROptions{})
	if err != nil {
		t.Fatal(err)
	}
	const script = `
import json, sys
import numpy as np
from scipy.signal import periodogram
d = json.load(sys.stdin)
x = np.asarray(d["x"]); fs = d["fs"]
f, p = periodogram(x, fs=fs, window="hann", nfft=int(round(fs / 0.0005)), detrend=False)
band = (f >= d["lo"]) & (f <= d["hi"])
print(json.dumps({"peak": float(f[band][np.argmax(p[band])])}))
`
	var out struct{ Peak float64 }
	refdata.Scipy(t, script, map[string]any{"x": r.Signal, "fs": 4.0, "lo": 5.0 / 60, "hi": 25.0 / 60}, &out)
	t.Logf("EDR peak %.4f Hz, scipy %.4f Hz", r.PeakHz, out.Peak)
	if math.Abs(out.Peak-r.PeakHz) > 0.002 || math.Abs(r.PeakHz-0.21) > 0.003 {
		t.Errorf("EDR peak %.4f Hz, scipy periodogram %.4f Hz, modulation 0.21 Hz", r.PeakHz, out.Peak)
	}
}
