package hrv

import (
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// End-to-end cross-check of the Welch and Lomb-Scargle paths against scipy
// (Debian python3-scipy; skipped with a message when absent). scipy side:
// CubicSpline (not-a-knot) at 4 Hz from the first to the last beat time,
// smoothness priors solved as the sparse system (I + l^2 D2'D2) trend = z
// with scipy.sparse.linalg.spsolve (Tarvainen et al. 2002), then
// scipy.signal.welch(fs=4, nperseg=256, noverlap=128, nfft=1024,
// detrend=False, window='hann', scaling='density'); and
// scipy.signal.lombscargle(t - t0, nn - mean, 2 pi f) scaled by 2 T (our
// one-sided density convention, methods.md 2.6: scipy returns the
// unnormalised P(w)).
func TestSpectrumScipy(t *testing.T) {
	nn, end := restingNN(31, 380)
	welch, err := Spectrum(nn, end, SpectrumOptions{})
	if err != nil {
		t.Fatal(err)
	}
	lomb, err := Spectrum(nn, end, SpectrumOptions{Estimator: Lomb, Detrend: MeanOnly})
	if err != nil {
		t.Fatal(err)
	}
	const script = `
import json, sys
import numpy as np
from scipy.interpolate import CubicSpline
from scipy.signal import welch, lombscargle
from scipy.sparse import diags, identity
from scipy.sparse.linalg import spsolve
d = json.load(sys.stdin)
t = np.array(d["t"]); nn = np.array(d["nn"])
n = int(np.floor((t[-1] - t[0]) * 4.0)) + 1
ts = t[0] + np.arange(n) / 4.0
y = CubicSpline(t, nn)(ts)
lam = 500.0
D2 = diags([1.0, -2.0, 1.0], [0, 1, 2], shape=(n - 2, n))
A = (identity(n) + lam**2 * (D2.T @ D2)).tocsc()
z = y - spsolve(A, y)
f, p = welch(z, fs=4.0, window="hann", nperseg=256, noverlap=128, nfft=1024, detrend=False)
fl = np.array(d["fl"])
tbar = (t[-1] - t[0]) / (len(t) - 1)
pl = 2 * tbar * lombscargle(t - t[0], nn - nn.mean(), 2 * np.pi * fl)
print(json.dumps({"f": f.tolist(), "p": p.tolist(), "pl": pl.tolist()}))
`
	var want struct{ F, P, PL []float64 }
	refdata.Scipy(t, script, map[string]any{"t": end, "nn": nn, "fl": lomb.FreqHz}, &want)
	if len(want.P) != len(welch.Power) || len(want.PL) != len(lomb.Power) {
		t.Fatalf("bins: welch %d vs %d, lomb %d vs %d", len(welch.Power), len(want.P), len(lomb.Power), len(want.PL))
	}
	cmp := func(name string, got, ref []float64, rel float64) {
		peak := 0.0
		for _, v := range ref {
			peak = math.Max(peak, v)
		}
		for k := range got {
			if math.Abs(got[k]-ref[k]) > rel*math.Abs(ref[k])+1e-9*peak {
				t.Fatalf("%s bin %d: %v, scipy %v", name, k, got[k], ref[k])
			}
		}
	}
	for k := range welch.FreqHz {
		if math.Abs(welch.FreqHz[k]-want.F[k]) > 1e-12 {
			t.Fatalf("welch frequency %d: %v vs %v", k, welch.FreqHz[k], want.F[k])
		}
	}
	cmp("welch", welch.Power, want.P, 1e-7)
	cmp("lomb", lomb.Power, want.PL, 1e-8)
}
