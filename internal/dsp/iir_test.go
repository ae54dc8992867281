package dsp

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// Butterworth magnitude: |H(f)|^2 = 1/(1 + (f/fc)^(2n)) for the analogue
// prototype; after the bilinear transform with pre-warping the digital
// response equals the prototype at the warped frequency tan(pi f/fs)/tan(pi fc/fs)
// (Oppenheim and Schafer, Discrete-Time Signal Processing, bilinear transform; derived).
func TestButterworthMagnitude(t *testing.T) {
	const fs = 250.0
	for n := 1; n <= 8; n++ {
		lp, err := ButterLowpass(n, 12, fs)
		if err != nil {
			t.Fatal(err)
		}
		hp, err := ButterHighpass(n, 12, fs)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range []float64{0.5, 5, 12, 20, 40, 100} {
			w := math.Tan(math.Pi*f/fs) / math.Tan(math.Pi*12/fs)
			wantLP := 1 / math.Sqrt(1+math.Pow(w, 2*float64(n)))
			wantHP := 1 / math.Sqrt(1+math.Pow(1/w, 2*float64(n)))
			if got := cmplx.Abs(lp.Response(f, fs)); math.Abs(got-wantLP) > 1e-9 {
				t.Errorf("order %d low-pass |H(%v Hz)| = %v, want %v", n, f, got, wantLP)
			}
			if got := cmplx.Abs(hp.Response(f, fs)); math.Abs(got-wantHP) > 1e-9 {
				t.Errorf("order %d high-pass |H(%v Hz)| = %v, want %v", n, f, got, wantHP)
			}
		}
	}
}

func TestDesignErrors(t *testing.T) {
	for _, c := range []struct {
		n      int
		fc, fs float64
	}{{0, 10, 100}, {17, 10, 100}, {2, 0, 100}, {2, 50, 100}, {2, 60, 100}, {2, 10, math.NaN()}, {2, math.NaN(), 100}} {
		if _, err := ButterLowpass(c.n, c.fc, c.fs); !errors.Is(err, ErrDesign) {
			t.Errorf("design %+v: err %v, want ErrDesign", c, err)
		}
	}
	if _, err := ButterBandpass(2, 10, 5, 100); !errors.Is(err, ErrDesign) {
		t.Errorf("reversed band: want ErrDesign")
	}
}

// Streaming filtering in any chunking equals one pass (the design rule of
// one core, two drivers); the oracle is Apply over the whole signal.
func TestFilterChunkingInvariant(t *testing.T) {
	c, _ := ButterBandpass(3, 0.5, 40, 360)
	r := rand.New(rand.NewPCG(7, 8))
	x := make([]float64, 5000)
	for i := range x {
		x[i] = r.NormFloat64()
	}
	want := c.Apply(nil, x)
	f := c.NewFilter()
	var got []float64
	for i := 0; i < len(x); {
		m := min(1+r.IntN(300), len(x)-i)
		got = append(got, f.Process(nil, x[i:i+m])...)
		i += m
	}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("sample %d: chunked %v, whole %v", i, got[i], want[i])
		}
	}
}

// Reset to a constant leaves a constant input at its steady state: no ringing
// (derived from the steady-state equations of the transposed direct form II).
func TestResetSteadyState(t *testing.T) {
	c, _ := ButterLowpass(4, 5, 100)
	f := c.NewFilter()
	f.Reset(3)
	for i := 0; i < 50; i++ {
		if y := f.Step(3); math.Abs(y-3) > 1e-12 {
			t.Fatalf("step %d: %v, want 3 (DC gain 1)", i, y)
		}
	}
}

// Cross-check against scipy.signal.butter(..., output='sos'), sosfilt and
// sosfiltfilt (Debian python3-scipy). The section layout differs, so the
// comparison is on the outputs, which must agree to near machine precision
// for the causal filter and closely for the zero-phase filter (both pad by
// odd reflection and start from the steady state of the first sample).
func TestAgainstScipy(t *testing.T) {
	const script = `
import json, sys
import numpy as np
from scipy import signal
d = json.load(sys.stdin)
x = np.array(d["x"])
out = {}
for name, btype, wn in (("lp", "lowpass", d["lp"]), ("hp", "highpass", d["hp"])):
    sos = signal.butter(d["order"], wn, btype=btype, fs=d["fs"], output="sos")
    out[name] = signal.sosfilt(sos, x).tolist()
    out[name + "ff"] = signal.sosfiltfilt(sos, x, padlen=3 * (2 * len(sos) + 1)).tolist()
print(json.dumps(out))
`
	r := rand.New(rand.NewPCG(9, 10))
	x := make([]float64, 2000)
	for i := range x {
		x[i] = math.Sin(2*math.Pi*1.3*float64(i)/250) + 0.3*r.NormFloat64() + 2
	}
	in := map[string]any{"x": x, "order": 4, "fs": 250.0, "lp": 15.0, "hp": 0.7}
	var out map[string][]float64
	refdata.Scipy(t, script, in, &out)
	lp, _ := ButterLowpass(4, 15, 250)
	hp, _ := ButterHighpass(4, 0.7, 250)
	cmp := func(name string, got, want []float64, tol float64) {
		if len(got) != len(want) {
			t.Fatalf("%s: %d samples vs scipy %d", name, len(got), len(want))
		}
		worst := 0.0
		for i := range got {
			worst = math.Max(worst, math.Abs(got[i]-want[i]))
		}
		if worst > tol {
			t.Errorf("%s: max |difference| from scipy %g > %g", name, worst, tol)
		}
	}
	cmp("lowpass sosfilt", lp.Apply(nil, x), out["lp"], 1e-9)
	cmp("highpass sosfilt", hp.Apply(nil, x), out["hp"], 1e-9)
	cmp("lowpass sosfiltfilt", lp.FiltFilt(nil, x), out["lpff"], 1e-6)
	cmp("highpass sosfiltfilt", hp.FiltFilt(nil, x), out["hpff"], 1e-6)
}
