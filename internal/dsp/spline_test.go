package dsp

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// A cubic polynomial is reproduced exactly by the not-a-knot spline (the
// end condition imposes nothing a single cubic violates) - derived.
func TestSplineReproducesCubic(t *testing.T) {
	p := func(x float64) float64 { return 2 - x + 0.5*x*x - 0.25*x*x*x }
	x := []float64{0, 0.3, 1.1, 1.7, 2.0, 3.2, 4.1}
	y := make([]float64, len(x))
	for i, v := range x {
		y[i] = p(v)
	}
	s, err := NewSpline(x, y)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []float64{-0.5, 0, 0.15, 1, 2.5, 4.1, 5} {
		if got, want := s.At(q), p(q); math.Abs(got-want) > 1e-10 {
			t.Errorf("At(%v) = %v, want %v (cubic reproduced exactly, derived)", q, got, want)
		}
	}
}

// Two knots give the line and three the parabola through them (derived; the
// same special cases scipy.interpolate.CubicSpline documents).
func TestSplineFewKnots(t *testing.T) {
	s, err := NewSpline([]float64{0, 2}, []float64{1, 5})
	if err != nil {
		t.Fatal(err)
	}
	if got := s.At(1.5); math.Abs(got-4) > 1e-12 {
		t.Errorf("line At(1.5) = %v, want 4", got)
	}
	s, err = NewSpline([]float64{0, 1, 3}, []float64{0, 1, 9}) // y = x^2
	if err != nil {
		t.Fatal(err)
	}
	if got := s.At(2); math.Abs(got-4) > 1e-12 {
		t.Errorf("parabola At(2) = %v, want 4", got)
	}
}

func TestSplineBadInput(t *testing.T) {
	cases := map[string][2][]float64{
		"one knot":   {{1}, {1}},
		"mismatch":   {{1, 2}, {1}},
		"NaN":        {{0, 1, 2}, {0, math.NaN(), 1}},
		"Inf":        {{0, math.Inf(1), 2}, {0, 1, 1}},
		"not sorted": {{0, 2, 1}, {0, 1, 1}},
		"duplicate":  {{0, 1, 1}, {0, 1, 1}},
	}
	for name, c := range cases {
		if _, err := NewSpline(c[0], c[1]); !errors.Is(err, ErrSeries) {
			t.Errorf("%s: err = %v, want ErrSeries", name, err)
		}
	}
}

// Cross-check against scipy.interpolate.CubicSpline (default bc_type
// 'not-a-knot', extrapolate=True) on uneven knots shaped like a tachogram.
func TestSplineScipy(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 1))
	x := []float64{0}
	y := []float64{800}
	for i := 1; i < 120; i++ {
		x = append(x, x[i-1]+0.6+0.5*rng.Float64())
		y = append(y, 800+60*math.Sin(x[i]/4)+20*rng.NormFloat64())
	}
	s, err := NewSpline(x, y)
	if err != nil {
		t.Fatal(err)
	}
	var q []float64
	for v := -0.7; v < x[len(x)-1]+1; v += 0.25 {
		q = append(q, v)
	}
	const script = `
import json, sys
from scipy.interpolate import CubicSpline
d = json.load(sys.stdin)
print(json.dumps(CubicSpline(d["x"], d["y"])(d["q"]).tolist()))
`
	var want []float64
	refdata.Scipy(t, script, map[string]any{"x": x, "y": y, "q": q}, &want)
	if len(want) != len(q) {
		t.Fatalf("scipy returned %d values for %d points", len(want), len(q))
	}
	got := s.Sample(nil, q[0], 4, len(q))
	for i := range q {
		if d := math.Abs(got[i] - want[i]); d > 1e-9*math.Abs(want[i]) {
			t.Fatalf("t=%v: Sample %v, scipy CubicSpline %v", q[i], got[i], want[i])
		}
		if d := math.Abs(s.At(q[i]) - want[i]); d > 1e-9*math.Abs(want[i]) {
			t.Fatalf("t=%v: At %v, scipy CubicSpline %v", q[i], s.At(q[i]), want[i])
		}
	}
}

func BenchmarkSplineResample5min(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	x := []float64{0}
	y := []float64{800}
	for x[len(x)-1] < 300 {
		x = append(x, x[len(x)-1]+0.8+0.05*rng.NormFloat64())
		y = append(y, 800+30*rng.NormFloat64())
	}
	dst := make([]float64, 0, 1200)
	for b.Loop() {
		s, _ := NewSpline(x, y)
		dst = s.Sample(dst[:0], 0, 4, 1200)
	}
}
