package ecg

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
)

// Filter designs of the conditioning chain. All filters are causal so that
// the batch and streaming detectors run the very same recursion.
//
//   - Baseline wander: 2nd-order Butterworth high-pass at Options.BaselineHz
//     (0.5 Hz by default, common practice for QRS detection, no source).
//   - Power line: one second-order notch per frequency in Options.NotchHz
//     (50 and 60 Hz by default), zeros on the unit circle at f0 and poles at
//     the same angle inside it, -3 dB width Options.NotchWidthHz (2 Hz by
//     default, common practice); the design of scipy.signal.iirnotch. A
//     notch is skipped when f0 + width/2 is not below the Nyquist frequency.
//   - Together the high-pass and notches delay QRS frequencies by 0.6 ms
//     (20 Hz) to 2.2 ms (8 Hz) at 128-1000 Hz, 0.3 to 1.8 ms at 100 Hz where
//     no notch fits (computed from the designs; asserted in the tests). The delay is not compensated: R-peaks on the
//     conditioned signal sit up to about 2 ms (under one sample at 500 Hz)
//     after their raw position, the same for every beat, so RR intervals
//     are unaffected.
//   - Detection band: 2nd-order Butterworth high-pass at BandLowHz followed by
//     a 2nd-order Butterworth low-pass at BandHighHz, 5-15 Hz by default, the
//     pass band Pan and Tompkins aimed at (Tompkins 1993, section 12.5.1).
//     Its group delay, 39 ms at 8 Hz to 13 ms at 20 Hz (computed), is taken
//     at 10 Hz (about 31 ms) from the design (bandDelay) and compensated when
//     the R-peak is looked up on the conditioned signal.
//   - Derivative: the 5-point (2, 1, 0, -1, -2)/8T form of Tompkins 1993
//     (exercise 12.14), delay 2 samples.
//   - Moving-window integration over Options.IntegrationS (150 ms, Pan and
//     Tompkins 1985), delay (N-1)/2 samples.

// notch returns a second-order IIR notch at f0 with -3 dB width bw for rate
// fs: H(z) = g (1 - 2cos(w0) z^-1 + z^-2) / (1 - 2r cos(w0) z^-1 + r^2 z^-2),
// normalised to unit gain at DC. The bandwidth-to-pole-radius relation is the
// bilinear-transform design of a second-order band-stop (common practice).
func notch(f0, bw, fs float64) dsp.Biquad {
	w0 := 2 * math.Pi * f0 / fs
	alpha := math.Tan(math.Pi * bw / fs) // bilinear-warped half-bandwidth
	a0 := 1 + alpha
	c := math.Cos(w0)
	return dsp.Biquad{
		B0: 1 / a0,
		B1: -2 * c / a0,
		B2: 1 / a0,
		A1: -2 * c / a0,
		A2: (1 - alpha) / a0,
	}
}

// chain holds the designed filters for one rate and option set.
type chain struct {
	cond dsp.Cascade // baseline high-pass + notches
	band dsp.Cascade // detection band-pass
	// bandDelay is the band-pass group delay at 10 Hz in samples (rounded),
	// plus the derivative's 2 samples.
	bandDelay int
}

func design(fs float64, o Options) (chain, error) {
	var ch chain
	hp, err := dsp.ButterHighpass(2, o.BaselineHz, fs)
	if err != nil {
		return ch, fmt.Errorf("ecg: baseline filter: %w: %w", ErrOptions, err)
	}
	ch.cond = append(ch.cond, hp...)
	for _, f0 := range o.NotchHz {
		if !(f0 > 0) || math.IsInf(f0, 0) {
			return ch, fmt.Errorf("ecg: notch at %v Hz: %w", f0, ErrOptions)
		}
		if f0+o.NotchWidthHz/2 >= fs/2 {
			continue
		}
		ch.cond = append(ch.cond, notch(f0, o.NotchWidthHz, fs))
	}
	bp, err := dsp.ButterBandpass(2, o.BandLowHz, o.BandHighHz, fs)
	if err != nil {
		return ch, fmt.Errorf("ecg: detection band-pass: %w: %w", ErrOptions, err)
	}
	ch.band = bp
	ch.bandDelay = int(math.Round(groupDelay(bp, 10, fs))) + 2
	if ch.bandDelay < 0 {
		ch.bandDelay = 0
	}
	return ch, nil
}

// groupDelay returns -dphi/domega of c at fHz in samples, by a central
// difference of the unwrapped phase.
func groupDelay(c dsp.Cascade, fHz, fs float64) float64 {
	const h = 0.01
	p1 := cmplx.Phase(c.Response(fHz-h, fs))
	p2 := cmplx.Phase(c.Response(fHz+h, fs))
	dp := p2 - p1
	for dp > math.Pi {
		dp -= 2 * math.Pi
	}
	for dp < -math.Pi {
		dp += 2 * math.Pi
	}
	dw := 2 * math.Pi * 2 * h / fs
	return -dp / dw
}
