package ecg

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
)

// TestQualityWelchMatchesDSP checks the quality family's reusable Welch
// workspace against dsp.Welch (itself cross-checked against
// scipy.signal.welch in internal/dsp), bit for bit, on random signals of
// several lengths and segment sizes through one reused scratch.
func TestQualityWelchMatchesDSP(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 6))
	var sc welchScratch
	for trial := 0; trial < 60; trial++ {
		fs := []float64{100, 128, 250, 360, 500}[rng.IntN(5)]
		n := int(fs*2) + rng.IntN(int(fs*30))
		seg := min(n, int(4*fs))
		if trial%3 == 0 {
			seg = 2 + rng.IntN(n-1)
		}
		x := make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64() + 0.5*math.Sin(float64(i)/7)
		}
		wf, wp, err := dsp.Welch(x, fs, dsp.WelchOptions{Segment: seg})
		if err != nil {
			t.Fatal(err)
		}
		gf, gp, err := sc.welch(x, fs, seg)
		if err != nil {
			t.Fatal(err)
		}
		if len(gf) != len(wf) || len(gp) != len(wp) {
			t.Fatalf("trial %d: %d/%d bins, want %d/%d", trial, len(gf), len(gp), len(wf), len(wp))
		}
		for k := range wp {
			if gf[k] != wf[k] || gp[k] != wp[k] {
				t.Fatalf("trial %d (n %d seg %d fs %v) bin %d: (%v, %v), want (%v, %v)", trial, n, seg, fs, k, gf[k], gp[k], wf[k], wp[k])
			}
		}
	}
}

// TestEnvelopeFiltFiltMatchesDSP checks the envelope detector's reusable
// zero-phase filter against dsp.Cascade.FiltFilt (cross-checked against
// scipy.signal.filtfilt in internal/dsp), bit for bit, through one reused
// pair of buffers, at several rates and lengths down to 2 samples.
func TestEnvelopeFiltFiltMatchesDSP(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 7))
	var dst, ext []float64
	for trial := 0; trial < 60; trial++ {
		fs := []float64{100, 128, 250, 360, 500, 1000}[rng.IntN(6)]
		c, err := dsp.ButterBandpass(1+rng.IntN(3), 8, 25, fs)
		if err != nil {
			t.Fatal(err)
		}
		n := 2 + rng.IntN(3000)
		x := make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64() + 3
		}
		want := c.FiltFilt(nil, x)
		dst, ext = filtFilt(c, dst, ext, x)
		if len(dst) != n {
			t.Fatalf("trial %d: %d samples, want %d", trial, len(dst), n)
		}
		for i := range want {
			if dst[i] != want[i] {
				t.Fatalf("trial %d (n %d fs %v) sample %d: %v, want %v", trial, n, fs, i, dst[i], want[i])
			}
		}
	}
}
