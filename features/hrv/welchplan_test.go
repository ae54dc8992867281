package hrv

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
)

// TestWelchPlanMatchesDSP checks Compute's reusable Welch plan against
// dsp.Welch (cross-checked against scipy.signal.welch in internal/dsp), bit
// for bit, over random segment, overlap and FFT lengths through the shared
// plan pool, and that inputs dsp.Welch rejects are rejected the same way.
func TestWelchPlanMatchesDSP(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 8))
	for trial := 0; trial < 200; trial++ {
		n := 2 + rng.IntN(1500)
		x := make([]float64, n)
		for i := range x {
			x[i] = 40*math.Sin(float64(i)/5) + rng.NormFloat64()
		}
		seg := []int{0, 256, 128, 2 + rng.IntN(400)}[rng.IntN(4)]
		ov := []int{0, -1, seg / 4}[rng.IntN(3)]
		nfft := []int{0, 1024, 512}[rng.IntN(3)]
		if trial%25 == 24 {
			x[rng.IntN(n)] = math.NaN()
		}
		if trial%40 == 39 {
			seg = 1
		}
		fs := []float64{4, 2, 7.5}[rng.IntN(3)]
		wf, wp, werr := dsp.Welch(x, fs, dsp.WelchOptions{Segment: seg, Overlap: ov, NFFT: nfft, Detrend: dsp.SegmentNone})
		gf, gp, gerr := welchNoDetrend(x, fs, seg, ov, nfft)
		if (werr == nil) != (gerr == nil) || (werr != nil && (werr.Error() != gerr.Error() || !errors.Is(gerr, dsp.ErrSeries))) {
			t.Fatalf("trial %d: error %v, want %v", trial, gerr, werr)
		}
		if len(gf) != len(wf) || len(gp) != len(wp) {
			t.Fatalf("trial %d: %d/%d bins, want %d/%d", trial, len(gf), len(gp), len(wf), len(wp))
		}
		for k := range wp {
			if gf[k] != wf[k] || gp[k] != wp[k] {
				t.Fatalf("trial %d (n %d seg %d ov %d nfft %d) bin %d: (%v, %v), want (%v, %v)", trial, n, seg, ov, nfft, k, gf[k], gp[k], wf[k], wp[k])
			}
		}
	}
}
