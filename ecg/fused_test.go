package ecg

import (
	"math"
	"math/rand/v2"
	"testing"
)

// refValidity is the sample-by-sample validity rule written plainly: NaN,
// infinite or clipped samples are bad; a run of at least flatN identical
// finite samples inside the rails is bad as a whole. validate's eight-at-a-time short path must
// give exactly these flags (a self-consistency check of the fast path; the
// rule itself is documented on Options.FlatS and the clip rails).
func refValidity(x []float64, flatN int, lo, hi float64, clip bool) []bool {
	bad := make([]bool, len(x))
	run, prevOK := 0, false // prevOK: the previous sample was finite and inside the rails
	for i, v := range x {
		b := math.IsNaN(v) || math.IsInf(v, 0) || (clip && (v >= hi || v <= lo))
		if !b && prevOK && v == x[i-1] {
			run++
		} else {
			run = 1
		}
		prevOK = !b
		bad[i] = b
		if !b && run >= flatN {
			for j := i - run + 1; j <= i; j++ {
				bad[j] = true
			}
		}
	}
	return bad
}

func TestValidateFastPath(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for trial := 0; trial < 200; trial++ {
		n := 50 + rng.IntN(3000)
		x := make([]float64, n)
		for i := range x {
			x[i] = math.Round(rng.NormFloat64()*20) / 200 // quantised, some repeats
		}
		// Flat runs, NaN/Inf, signed zeros, huge values.
		for k := 0; k < 4; k++ {
			p, l := rng.IntN(n), rng.IntN(300)
			v := x[p]
			for j := p; j < min(n, p+l); j++ {
				x[j] = v
			}
		}
		special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, math.Copysign(0, -1), 1e308, -1e308, 1e-310}
		for k := 0; k < rng.IntN(20); k++ {
			x[rng.IntN(n)] = special[rng.IntN(len(special))]
		}
		clip := trial%3 == 0
		o := Options{FlatS: 0.05 + 0.2*rng.Float64()}
		if clip {
			o.ClipLowmV, o.ClipHighmV = -0.2, 0.2
		}
		d, err := NewDetector(250, o)
		if err != nil {
			t.Fatal(err)
		}
		c := &d.c
		// Feed in random pieces; pendBad then covers the not yet processed
		// samples, so compare each piece's flags as soon as they are final
		// by collecting them before processing.
		var got []bool
		for p := 0; p < n; {
			k := min(n-p, 1+rng.IntN(700))
			c.validate(x[p : p+k])
			p += k
			if done := len(c.pendBad) - c.flatN; done > 0 {
				got = append(got, c.pendBad[:done]...)
				m := copy(c.pendBad, c.pendBad[done:])
				c.pendBad = c.pendBad[:m]
				c.pendStart += done
			}
		}
		got = append(got, c.pendBad...)
		want := refValidity(x, c.flatN, o.ClipLowmV, o.ClipHighmV, clip)
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("trial %d: sample %d (%v): bad %v, want %v", trial, i, x[i], got[i], want[i])
			}
		}
	}
}
