package ecg

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/sim"
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

// TestFusedMatchesGeneral runs the same signals through the fused path (the
// default chain) and through the general block path with the very same
// filters, and requires the same beats: identical samples and search-back
// flags, times and amplitudes equal to rounding (the fused path reassociates
// the biquad state updates). Self-consistency of two implementations of the
// one design; the design itself is checked against MIT-BIH record 100 and
// scipy elsewhere.
func TestFusedMatchesGeneral(t *testing.T) {
	for _, fs := range []float64{128, 250, 360, 500, 1000} {
		s, err := sim.ECGSimulate(sim.ECGConfig{RateHz: fs, DurationS: 120,
			HeartRate:   func(t float64) float64 { return 90 + 50*math.Sin(2*math.Pi*t/120) },
			RSAFraction: 0.05, NoisemV: 0.08, WandermV: 0.4, Seed: uint64(fs)})
		if err != nil {
			t.Fatal(err)
		}
		x := s.Samples
		for _, p := range []int{int(20 * fs), int(61 * fs)} { // two lead-off gaps
			for j := p; j < p+int(1.5*fs); j++ {
				x[j] = math.NaN()
			}
		}
		run := func(fused bool) []Beat {
			d, err := NewDetector(fs, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if !d.c.fused {
				t.Fatalf("%v Hz: default options did not select the fused path", fs)
			}
			d.c.fused = fused
			b1, _ := d.Push(x)
			b2, _ := d.Flush()
			return append(b1, b2...)
		}
		f, g := run(true), run(false)
		if len(f) != len(g) || len(f) < 100 {
			t.Fatalf("%v Hz: fused %d beats, general %d", fs, len(f), len(g))
		}
		for i := range f {
			a, b := f[i], g[i]
			if a.Sample != b.Sample || a.SearchBack != b.SearchBack ||
				math.Abs(a.Time-b.Time) > 1e-9 || math.Abs(a.AmplitudemV-b.AmplitudemV) > 1e-9*math.Abs(b.AmplitudemV) {
				t.Fatalf("%v Hz beat %d: fused %+v, general %+v", fs, i, a, b)
			}
		}
	}
}

// TestExtremaHelpers checks finalize's branch-free extrema against plain
// loops (self-consistency), on data with signed zeros, infinities and NaN.
func TestExtremaHelpers(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	special := []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), 1e-310, -1e-310, math.MaxFloat64, -math.MaxFloat64}
	same := func(a, b float64) bool { return a == b && math.Signbit(a) == math.Signbit(b) || a != a && b != b }
	for trial := 0; trial < 2000; trial++ {
		s := make([]float64, 1+rng.IntN(40))
		for i := range s {
			s[i] = rng.NormFloat64()
			if rng.IntN(6) == 0 {
				s[i] = special[rng.IntN(len(special))]
			}
		}
		if trial%5 == 0 {
			s[rng.IntN(len(s))] = math.NaN()
		}
		for _, v := range s {
			if k := keyValue(orderKey(v)); math.Float64bits(k) != math.Float64bits(v) {
				t.Fatalf("key round trip %v -> %v", v, k)
			}
		}
		hasNaN, am, lo, hi := false, 0.0, s[0], s[0]
		for _, v := range s {
			hasNaN = hasNaN || v != v
			am = max(am, math.Abs(v))
		}
		for _, v := range s[1:] {
			if v < lo || v == lo && math.Signbit(v) {
				lo = v
			}
			if v > hi || v == hi && !math.Signbit(v) {
				hi = v
			}
		}
		gl, gh := minMax(s)
		ga := absMax(s)
		if hasNaN {
			if ga == ga || gl == gl && gh == gh {
				t.Fatalf("NaN not reported: absMax %v minMax %v %v", ga, gl, gh)
			}
			continue
		}
		if !same(ga, am) || !same(gl, lo) || !same(gh, hi) {
			t.Fatalf("%v: absMax %v want %v; minMax %v %v want %v %v", s, ga, am, gl, gh, lo, hi)
		}
	}
}
