package ecg

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

func TestNotchAgainstScipy(t *testing.T) {
	// scipy.signal.iirnotch(w0, Q, fs) with Q = f0 / width designs the same
	// second-order notch (reference library: Debian python3-scipy).
	type tc struct{ F0, BW, Fs float64 }
	cases := []tc{{50, 2, 250}, {60, 2, 360}, {50, 2, 1000}, {60, 2, 128}}
	var want [][6]float64
	refdata.Scipy(t, `
import json, sys
from scipy import signal
out = []
for c in json.load(sys.stdin):
    b, a = signal.iirnotch(c["F0"], c["F0"] / c["BW"], fs=c["Fs"])
    out.append([b[0], b[1], b[2], a[0], a[1], a[2]])
print(json.dumps(out))
`, cases, &want)
	for i, c := range cases {
		q := notch(c.F0, c.BW, c.Fs)
		got := [6]float64{q.B0, q.B1, q.B2, 1, q.A1, q.A2}
		for k := range got {
			if math.Abs(got[k]-want[i][k]) > 1e-12 {
				t.Errorf("%+v: coefficient %d = %.15g, scipy %.15g", c, k, got[k], want[i][k])
			}
		}
	}
}

func TestConditioningResponse(t *testing.T) {
	// Design properties (derived from the filter definitions): the notch
	// removes its frequency, the baseline high-pass passes QRS frequencies,
	// and the detection band peaks inside 5-15 Hz.
	for _, fs := range []float64{100, 128, 250, 360, 500, 1000} {
		o, _ := Options{}.withDefaults()
		ch, err := design(fs, o)
		if err != nil {
			t.Fatal(err)
		}
		for _, f0 := range []float64{50, 60} {
			if f0+1 >= fs/2 {
				continue // skipped by design at this rate
			}
			if g := cmplx.Abs(ch.cond.Response(f0, fs)); g > 1e-6 {
				t.Errorf("%v Hz: conditioning gain at %v Hz = %g, want 0 (notch zero on the unit circle)", fs, f0, g)
			}
		}
		for _, f := range []float64{8, 15, 20} {
			if g := cmplx.Abs(ch.cond.Response(f, fs)); math.Abs(g-1) > 0.02 {
				t.Errorf("%v Hz: conditioning gain at %v Hz = %.4f, want 1 +/- 0.02", fs, f, g)
			}
		}
		if g := cmplx.Abs(ch.cond.Response(0.05, fs)); g > 0.02 {
			t.Errorf("%v Hz: baseline gain at 0.05 Hz = %.4f, want < 0.02 (2nd order at 0.5 Hz: (0.1)^2, derived)", fs, g)
		}
		// Detection band: -3 dB at 5 and 15 Hz for the separate
		// Butterworth sections, near unity at their geometric mean.
		if g := cmplx.Abs(ch.band.Response(math.Sqrt(75), fs)); g < 0.8 {
			t.Errorf("%v Hz: band gain at 8.7 Hz = %.3f", fs, g)
		}
		for _, f := range []float64{8, 10, 15, 20} {
			// The documented conditioning delay: 0.3..2.2 ms (computed).
			if d := 1000 * groupDelay(ch.cond, f, fs) / fs; d < 0.25 || d > 2.3 {
				t.Errorf("%v Hz: conditioning group delay at %v Hz %.2f ms outside 0.25..2.3 ms", fs, f, d)
			}
		}
		if d := ch.bandDelay; d < 2 || float64(d) > 0.05*fs {
			t.Errorf("%v Hz: band delay %d samples outside 2..50 ms", fs, d)
		}
	}
}
