package hrv

import (
	"cmp"
	"errors"
	"math"
	"math/rand/v2"
	"slices"
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

// TestSortTemplatesMatchesSort checks the bucketed template order used by
// the entropy grids against one comparison sort by (cell, second
// coordinate, index), the order the grid walk is defined on (common
// practice: a total order has one sorted result), with ties and with cell
// ranges wide enough to take the plain-sort path.
func TestSortTemplatesMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	for trial := 0; trial < 300; trial++ {
		n := rng.IntN(400)
		x := make([]float64, n+1)
		for i := range x {
			x[i] = float64(rng.IntN(20)) // many ties
			if trial%2 == 0 {
				x[i] = rng.NormFloat64()
			}
		}
		spread := []int64{3, 30, int64(10 * (n + 10))}[rng.IntN(3)]
		cell := make([]int64, n)
		for i := range cell {
			cell[i] = rng.Int64N(spread)
		}
		want := make([]int32, n)
		for i := range want {
			want[i] = int32(i)
		}
		slices.SortFunc(want, func(p, q int32) int {
			if cell[p] != cell[q] {
				return cmp.Compare(cell[p], cell[q])
			}
			if c := cmp.Compare(x[p+1], x[q+1]); c != 0 {
				return c
			}
			return cmp.Compare(p, q)
		})
		got := sortTemplates(x, cell)
		if !slices.Equal(got, want) {
			t.Fatalf("trial %d (n %d spread %d): order differs", trial, n, spread)
		}
	}
}
