package dsp

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/mjibson/go-dsp/spectral"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

func noise(seed uint64, n int) []float64 {
	rng := rand.New(rand.NewPCG(seed, 7))
	x := make([]float64, n)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	return x
}

func relClose(a, b, rel, abs float64) bool {
	return math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b))+abs
}

// Parseval for white noise: sum psd df ~ variance (methods 2.7, derived).
func TestWelchParseval(t *testing.T) {
	x := noise(3, 20000)
	for i := range x {
		x[i] *= 3
	}
	f, p, err := Welch(x, 4, WelchOptions{NFFT: 1024})
	if err != nil {
		t.Fatal(err)
	}
	df := f[1] - f[0]
	var s float64
	for _, v := range p {
		s += v * df
	}
	if math.Abs(s-9) > 0.3 {
		t.Errorf("sum psd df = %v, want 9 (variance, derived)", s)
	}
}

// Cross-check against scipy.signal.welch (window 'hann' periodic, detrend
// 'constant', scaling 'density', one-sided, same segment/overlap/nfft).
func TestWelchScipy(t *testing.T) {
	x := noise(4, 1200)
	for i := range x {
		x[i] = 30*x[i] + 800 + 40*math.Sin(2*math.Pi*0.1*float64(i)/4)
	}
	for _, o := range []WelchOptions{{}, {NFFT: 1024}, {Segment: 300, Overlap: 100, NFFT: 601}} {
		f, p, err := Welch(x, 4, o)
		if err != nil {
			t.Fatal(err)
		}
		seg := o.Segment
		if seg == 0 {
			seg = 256
		}
		ov := o.Overlap
		if ov == 0 {
			ov = seg / 2
		}
		nfft := o.NFFT
		if nfft == 0 {
			nfft = seg
		}
		const script = `
import json, sys
from scipy.signal import welch
d = json.load(sys.stdin)
f, p = welch(d["x"], fs=4.0, nperseg=d["seg"], noverlap=d["ov"], nfft=d["nfft"])
print(json.dumps({"f": f.tolist(), "p": p.tolist()}))
`
		var want struct{ F, P []float64 }
		refdata.Scipy(t, script, map[string]any{"x": x, "seg": seg, "ov": ov, "nfft": nfft}, &want)
		if len(want.P) != len(p) {
			t.Fatalf("%+v: %d bins, scipy %d", o, len(p), len(want.P))
		}
		peak := 0.0
		for _, v := range want.P {
			peak = math.Max(peak, v)
		}
		for k := range p {
			if !relClose(f[k], want.F[k], 1e-12, 1e-12) || !relClose(p[k], want.P[k], 1e-9, 1e-12*peak) {
				t.Fatalf("%+v: bin %d: (%v, %v), scipy.signal.welch (%v, %v)", o, k, f[k], p[k], want.F[k], want.P[k])
			}
		}
	}
}

// Cross-check against go-dsp's spectral.Pwelch. go-dsp does not detrend
// segments and its default window is the symmetric Hann, so the comparison
// uses SegmentNone and passes our periodic Hann to it; both scale by
// 1/(fs sum w^2) and double the interior bins.
func TestWelchGoDSP(t *testing.T) {
	x := noise(5, 1500)
	_, p, err := Welch(x, 4, WelchOptions{Segment: 256, Overlap: 128, Detrend: SegmentNone})
	if err != nil {
		t.Fatal(err)
	}
	want, _ := spectral.Pwelch(x, 4, &spectral.PwelchOptions{NFFT: 256, Noverlap: 128, Window: HannPeriodic})
	if len(want) != len(p) {
		t.Fatalf("%d bins, go-dsp %d", len(p), len(want))
	}
	for k := range p {
		if !relClose(p[k], want[k], 1e-9, 1e-15) {
			t.Fatalf("bin %d: %v, go-dsp Pwelch %v", k, p[k], want[k])
		}
	}
}

func TestWelchBadInput(t *testing.T) {
	for name, c := range map[string]struct {
		x  []float64
		fs float64
		o  WelchOptions
	}{
		"empty":    {nil, 4, WelchOptions{}},
		"NaN":      {[]float64{1, math.NaN(), 3}, 4, WelchOptions{}},
		"rate":     {[]float64{1, 2, 3}, 0, WelchOptions{}},
		"overlap":  {noise(1, 100), 4, WelchOptions{Segment: 10, Overlap: 10}},
		"nfft":     {noise(1, 100), 4, WelchOptions{Segment: 10, NFFT: 5}},
		"segment1": {noise(1, 100), 4, WelchOptions{Segment: 1}},
	} {
		if _, _, err := Welch(c.x, c.fs, c.o); !errors.Is(err, ErrSeries) {
			t.Errorf("%s: err = %v, want ErrSeries", name, err)
		}
	}
}
