package ecg

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// sortedWindows is the plain rule rollingSorted must reproduce: sort every
// centred window afresh.
func sortedWindows(x []float64, w int) [][]float64 {
	h := w / 2
	var out [][]float64
	for i := range x {
		lo, hi := max(0, i-h), min(len(x), i+h+1)
		s := append([]float64(nil), x[lo:hi]...)
		sort.Float64s(s)
		out = append(out, s)
	}
	return out
}

// TestRollingSortedMatchesSort checks the incremental sorted window against
// sorting each window afresh (the definition of the centred order
// statistics, common practice), value for value, on random series with many
// ties, for odd and even widths, series shorter than the window, and a NaN
// (fallback path).
func TestRollingSortedMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 4))
	for trial := 0; trial < 300; trial++ {
		n := rng.IntN(250)
		w := 1 + rng.IntN(120)
		x := make([]float64, n)
		for i := range x {
			switch rng.IntN(4) {
			case 0:
				x[i] = float64(rng.IntN(5)) // ties
			case 1:
				x[i] = math.Inf(1)
			default:
				x[i] = rng.NormFloat64() * 50
			}
		}
		if trial%10 == 9 && n > 0 {
			x[rng.IntN(n)] = math.NaN()
		}
		want := sortedWindows(x, w)
		i0 := 0
		rollingSorted(x, w, func(i int, s []float64) {
			if i != i0 {
				t.Fatalf("trial %d: called for %d, want %d", trial, i, i0)
			}
			i0++
			if len(s) != len(want[i]) {
				t.Fatalf("trial %d (n %d w %d) i %d: %d values, want %d", trial, n, w, i, len(s), len(want[i]))
			}
			for k := range s {
				a, b := s[k], want[i][k]
				if a != b && !(math.IsNaN(a) && math.IsNaN(b)) {
					t.Fatalf("trial %d (n %d w %d) i %d: s[%d] = %v, want %v", trial, n, w, i, k, a, b)
				}
			}
		})
		if i0 != n {
			t.Fatalf("trial %d: %d calls, want %d", trial, i0, n)
		}
	}
}

// TestOrderStatMatchesSort checks the selection used for the envelope
// detector's median floor against sort.Float64s (the definition: the value
// a full sort leaves at index k, common practice), for every k of random
// slices with ties, infinities and NaNs.
func TestOrderStatMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 5))
	for trial := 0; trial < 400; trial++ {
		n := 1 + rng.IntN(200)
		x := make([]float64, n)
		for i := range x {
			switch rng.IntN(5) {
			case 0:
				x[i] = float64(rng.IntN(3))
			case 1:
				x[i] = math.Inf(2*rng.IntN(2) - 1)
			default:
				x[i] = rng.ExpFloat64()
			}
		}
		if trial%8 == 7 {
			x[rng.IntN(n)] = math.NaN()
		}
		want := append([]float64(nil), x...)
		sort.Float64s(want)
		for k := 0; k < n; k++ {
			s := append([]float64(nil), x...)
			got := orderStat(s, k)
			if got != want[k] && !(math.IsNaN(got) && math.IsNaN(want[k])) {
				t.Fatalf("trial %d n %d k %d: %v, want %v", trial, n, k, got, want[k])
			}
		}
	}
}
