// Package dsp holds the signal-processing building blocks shared by the
// modality packages: Butterworth filters as cascades of second-order sections,
// causal (streaming) and zero-phase (batch) filtering. It knows nothing about
// physiology.
package dsp

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
)

// ErrDesign reports an impossible filter design (order, cut-off or rate).
var ErrDesign = errors.New("invalid filter design")

// Biquad is one second-order section, normalised so that a0 = 1:
// H(z) = (B0 + B1 z^-1 + B2 z^-2) / (1 + A1 z^-1 + A2 z^-2).
// A first-order section has B2 = A2 = 0.
type Biquad struct {
	B0, B1, B2, A1, A2 float64
}

// Cascade is a filter made of second-order sections applied in order.
type Cascade []Biquad

// ButterLowpass designs an order-n Butterworth low-pass with -3 dB at cutHz
// for sampling rate fsHz, by the bilinear transform with frequency
// pre-warping (Oppenheim and Schafer, Discrete-Time Signal Processing,
// bilinear transformation; the section Q values are those of the Butterworth
// pole angles).
func ButterLowpass(n int, cutHz, fsHz float64) (Cascade, error) {
	return butter(n, cutHz, fsHz, false)
}

// ButterHighpass designs an order-n Butterworth high-pass with -3 dB at cutHz.
func ButterHighpass(n int, cutHz, fsHz float64) (Cascade, error) {
	return butter(n, cutHz, fsHz, true)
}

// ButterBandpass returns an order-n Butterworth high-pass at lowHz followed by
// an order-n Butterworth low-pass at highHz. For the wide physiological bands
// used here (an octave or more) this is within a fraction of a dB of the
// classical band-pass transform and is simpler to reason about; its edges are
// each -3 dB only approximately when the band is narrow.
func ButterBandpass(n int, lowHz, highHz, fsHz float64) (Cascade, error) {
	if !(lowHz < highHz) {
		return nil, fmt.Errorf("dsp: band-pass %v..%v Hz: %w", lowHz, highHz, ErrDesign)
	}
	hp, err := butter(n, lowHz, fsHz, true)
	if err != nil {
		return nil, err
	}
	lp, err := butter(n, highHz, fsHz, false)
	if err != nil {
		return nil, err
	}
	return append(hp, lp...), nil
}

func butter(n int, cutHz, fsHz float64, high bool) (Cascade, error) {
	if n < 1 || n > 16 {
		return nil, fmt.Errorf("dsp: Butterworth order %d outside 1..16: %w", n, ErrDesign)
	}
	if !(fsHz > 0) || math.IsInf(fsHz, 0) || !(cutHz > 0) || cutHz >= fsHz/2 {
		return nil, fmt.Errorf("dsp: cut-off %v Hz at rate %v Hz (needs 0 < cut-off < rate/2): %w", cutHz, fsHz, ErrDesign)
	}
	k := math.Tan(math.Pi * cutHz / fsHz) // pre-warped analogue cut-off
	var c Cascade
	if n%2 == 1 {
		a1 := (k - 1) / (k + 1)
		if high {
			b := 1 / (k + 1)
			c = append(c, Biquad{B0: b, B1: -b, A1: a1})
		} else {
			b := k / (k + 1)
			c = append(c, Biquad{B0: b, B1: b, A1: a1})
		}
	}
	for i := 0; i < n/2; i++ {
		// Pole pair at angle theta from the negative real axis; Q = 1/(2 cos theta).
		theta := math.Pi * float64(2*i+1+n%2) / float64(2*n)
		if n%2 == 1 {
			theta = math.Pi * float64(i+1) / float64(n)
		}
		q := 1 / (2 * math.Cos(theta))
		norm := 1 / (1 + k/q + k*k)
		a1 := 2 * (k*k - 1) * norm
		a2 := (1 - k/q + k*k) * norm
		if high {
			c = append(c, Biquad{B0: norm, B1: -2 * norm, B2: norm, A1: a1, A2: a2})
		} else {
			b := k * k * norm
			c = append(c, Biquad{B0: b, B1: 2 * b, B2: b, A1: a1, A2: a2})
		}
	}
	return c, nil
}

// Response returns the complex frequency response at fHz for rate fsHz.
func (c Cascade) Response(fHz, fsHz float64) complex128 {
	z1 := cmplx.Exp(complex(0, -2*math.Pi*fHz/fsHz)) // z^-1
	z2 := z1 * z1
	h := complex(1, 0)
	for _, s := range c {
		num := complex(s.B0, 0) + complex(s.B1, 0)*z1 + complex(s.B2, 0)*z2
		den := 1 + complex(s.A1, 0)*z1 + complex(s.A2, 0)*z2
		h *= num / den
	}
	return h
}

// DCGain returns the response at 0 Hz.
func (c Cascade) DCGain() float64 {
	g := 1.0
	for _, s := range c {
		g *= (s.B0 + s.B1 + s.B2) / (1 + s.A1 + s.A2)
	}
	return g
}

// Filter is the running state of a Cascade (transposed direct form II), for
// streaming use: feeding a signal in any chunking gives the same output as
// one call over the whole signal.
type Filter struct {
	c Cascade
	z [][2]float64
}

// NewFilter returns a filter with zero initial state.
func (c Cascade) NewFilter() *Filter {
	return &Filter{c: c, z: make([][2]float64, len(c))}
}

// Step filters one sample.
func (f *Filter) Step(x float64) float64 {
	for i, s := range f.c {
		z := &f.z[i]
		y := s.B0*x + z[0]
		z[0] = s.B1*x - s.A1*y + z[1]
		z[1] = s.B2*x - s.A2*y
		x = y
	}
	return x
}

// Process filters x into dst (grown as needed; dst may alias x) and returns it.
func (f *Filter) Process(dst, x []float64) []float64 {
	dst = grow(dst, len(x))
	for i, v := range x {
		dst[i] = f.Step(v)
	}
	return dst
}

// Reset sets the state as if the input had been the constant x forever
// (steady state), so a filter started on a signal with an offset does not
// ring. Reset(0) is the zero state.
func (f *Filter) Reset(x float64) {
	for i, s := range f.c {
		g := (s.B0 + s.B1 + s.B2) / (1 + s.A1 + s.A2)
		y := g * x
		// Steady state of TDF-II: y = b0 x + z0, z0 = b1 x - a1 y + z1, z1 = b2 x - a2 y.
		f.z[i][1] = s.B2*x - s.A2*y
		f.z[i][0] = y - s.B0*x
		x = y
	}
}

// Apply filters x causally from zero state into dst and returns it.
func (c Cascade) Apply(dst, x []float64) []float64 {
	return c.NewFilter().Process(dst, x)
}

// FiltFilt filters x forwards and backwards (zero phase, squared magnitude
// response) into dst and returns it. The ends are extended by odd reflection
// of 3*(2*sections+1) samples (fewer for short input) and each pass starts
// from the steady state for its first sample, which limits edge transients;
// this is the scheme of Gustafsson-style forward-backward filtering as
// commonly implemented (common practice).
func (c Cascade) FiltFilt(dst, x []float64) []float64 {
	n := len(x)
	dst = grow(dst, n)
	if n == 0 {
		return dst
	}
	pad := 3 * (2*len(c) + 1)
	if pad > n-1 {
		pad = n - 1
	}
	ext := make([]float64, n+2*pad)
	for i := 0; i < pad; i++ {
		ext[i] = 2*x[0] - x[pad-i]
		ext[n+pad+i] = 2*x[n-1] - x[n-2-i]
	}
	copy(ext[pad:], x)
	f := c.NewFilter()
	f.Reset(ext[0])
	f.Process(ext, ext)
	for i, j := 0, len(ext)-1; i < j; i, j = i+1, j-1 {
		ext[i], ext[j] = ext[j], ext[i]
	}
	f.Reset(ext[0])
	f.Process(ext, ext)
	for i := 0; i < n; i++ {
		dst[i] = ext[len(ext)-1-pad-i]
	}
	return dst
}

func grow(dst []float64, n int) []float64 {
	if cap(dst) < n {
		return make([]float64, n)
	}
	return dst[:n]
}
