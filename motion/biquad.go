package motion

import (
	"fmt"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
)

// pair is a two-section cascade (the order-2 high-pass and order-2 low-pass
// of dsp.ButterBandpass) in the transposed direct form II of dsp.Filter,
// unrolled because it runs twice per sample on the hot path (a week at
// 50 Hz is 30 million samples). TestPairMatchesDSP checks it against
// dsp.Cascade.Apply.
type pair struct {
	a, b   dsp.Biquad
	za, zb [2]float64
}

func newPair(c dsp.Cascade) (*pair, error) {
	if len(c) != 2 {
		return nil, fmt.Errorf("motion: band-pass has %d sections, want 2: %w", len(c), ErrOptions)
	}
	return &pair{a: c[0], b: c[1]}, nil
}

func (f *pair) step(x float64) float64 {
	s := &f.a
	y := s.B0*x + f.za[0]
	f.za[0] = s.B1*x - s.A1*y + f.za[1]
	f.za[1] = s.B2*x - s.A2*y
	x = y
	s = &f.b
	y = s.B0*x + f.zb[0]
	f.zb[0] = s.B1*x - s.A1*y + f.zb[1]
	f.zb[1] = s.B2*x - s.A2*y
	return y
}

// reset sets the steady state for a constant input x (as dsp.Filter.Reset).
func (f *pair) reset(x float64) {
	for _, sz := range []struct {
		s *dsp.Biquad
		z *[2]float64
	}{{&f.a, &f.za}, {&f.b, &f.zb}} {
		s := sz.s
		g := (s.B0 + s.B1 + s.B2) / (1 + s.A1 + s.A2)
		y := g * x
		sz.z[1] = s.B2*x - s.A2*y
		sz.z[0] = y - s.B0*x
		x = y
	}
}
