package resp_test

import (
	"errors"
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/resp"
)

// shifted returns one breath period of RC = sin(wt + phi), AB = sin(wt).
func shifted(fs, rateHz, phiDeg float64, periods int) (rc, ab []float64) {
	n := int(math.Round(float64(periods) * fs / rateHz))
	phi := phiDeg * math.Pi / 180
	for i := 0; i < n; i++ {
		w := 2 * math.Pi * rateHz * float64(i) / fs
		rc = append(rc, math.Sin(w+phi))
		ab = append(ab, math.Sin(w))
	}
	return rc, ab
}

func TestPhaseKnownShifts(t *testing.T) {
	// methods reference 5.4 check values (derived): RC = sin(wt + phi),
	// AB = sin(wt) gives m/s = sin(phi) for the loop; phi = 150 needs the
	// slope rule; cross-correlation lag = phi/360 * period (Prisk et al. 2002):
	// 0.5 s for 45 degrees at 15 breaths/min.
	for _, phi := range []float64{0, 30, 45, 60, 90, 120, 150, 180} {
		rc, ab := shifted(50, 0.25, phi, 1)
		lis, err := resp.PhaseLissajous(rc, ab)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(lis-phi) > 1 {
			t.Errorf("Lissajous phase for %v deg = %v (methods 5.4, derived)", phi, lis)
		}
		xc, err := resp.PhaseXcorr(rc, ab, 50, 4)
		if err != nil {
			t.Fatal(err)
		}
		if phi == 180 {
			xc = math.Abs(xc)
		}
		if math.Abs(xc-phi) > 1 {
			t.Errorf("cross-correlation phase for %v deg = %v (Prisk et al. 2002; derived)", phi, xc)
		}
		// Abdomen leading gives the negative angle.
		if phi > 0 && phi < 180 {
			if xn, _ := resp.PhaseXcorr(ab, rc, 50, 4); math.Abs(xn+phi) > 1 {
				t.Errorf("abdomen leading by %v: %v", phi, xn)
			}
		}
	}
	rc, ab := shifted(50, 0.25, 45, 1)
	xc, _ := resp.PhaseXcorr(rc, ab, 50, 4)
	if lag := xc / 360 * 4; math.Abs(lag-0.5) > 0.01 {
		t.Errorf("lag %v s for 45 deg at 15/min, want 0.5 s (methods 5.4, derived)", lag)
	}
	// m/s values of methods 5.4: 30 -> 0.5, 45 -> 0.7071, 60 -> 0.8660, 150 -> 0.5 before the slope rule.
	for _, c := range []struct{ phi, ms float64 }{{30, 0.5}, {45, 0.7071}, {60, 0.8660}, {90, 1}, {150, 0.5}} {
		rc, ab := shifted(500, 0.25, c.phi, 1)
		lis, _ := resp.PhaseLissajous(rc, ab)
		if got := math.Sin(lis * math.Pi / 180); math.Abs(got-c.ms) > 0.002 {
			t.Errorf("phi %v: m/s = %v, want %v (methods 5.4, derived)", c.phi, got, c.ms)
		}
	}
	flat := make([]float64, 200)
	if _, err := resp.PhaseLissajous(flat, flat); !errors.Is(err, resp.ErrUndefined) {
		t.Errorf("flat loop: %v", err)
	}
	if _, err := resp.PhaseXcorr(flat, flat, 50, 4); !errors.Is(err, resp.ErrUndefined) {
		t.Errorf("flat xcorr: %v", err)
	}
}

func TestPerBreathPhaseAndParadox(t *testing.T) {
	// Breaths detected on a sum whose bands are shifted by 40 degrees (in
	// phase, no paradox) and by 160 degrees with the rib cage weaker (paradox:
	// the sum still breathes): methods 5.4, derived.
	for _, c := range []struct {
		phi     float64
		paradox bool
	}{{40, false}, {160, true}} {
		fs := 50.0
		n := int(120 * fs)
		rib := make([]float64, n)
		abd := make([]float64, n)
		for i := range rib {
			w := 2 * math.Pi * 0.25 * float64(i) / fs
			rib[i] = 0.3 * math.Sin(w+c.phi*math.Pi/180)
			abd[i] = math.Sin(w)
		}
		r, err := resp.Detect(rib, abd, resp.Options{RateHz: fs})
		if err != nil {
			t.Fatal(err)
		}
		bs := inner(r.Breaths)
		if len(bs) < 20 {
			t.Fatalf("phi %v: %d breaths", c.phi, len(r.Breaths))
		}
		for _, b := range bs {
			if math.Abs(b.PhaseXcorrDeg-c.phi) > 3 || math.Abs(b.PhaseLissajousDeg-c.phi) > 3 || b.Paradox != c.paradox {
				t.Fatalf("phi %v: breath phases %v / %v paradox %v", c.phi, b.PhaseXcorrDeg, b.PhaseLissajousDeg, b.Paradox)
			}
		}
	}
}

func TestWindowPhase(t *testing.T) {
	// A 60 s window of breathing at 15/min with the rib cage leading by 45
	// and by 135 degrees, on drifting baselines: both methods give the
	// shift (methods 5.4, derived; Prisk et al. 2002 for cross-correlation).
	for _, phi := range []float64{45, 135} {
		var rc, ab []float64
		for i := 0; i < 60*25; i++ {
			tt := float64(i) / 25
			w := 2 * math.Pi * 0.25 * tt
			rc = append(rc, math.Sin(w+phi*math.Pi/180)+0.02*tt)
			ab = append(ab, 2*math.Sin(w)-0.01*tt)
		}
		xc, lis, err := resp.WindowPhase(rc, ab, 25, 4)
		if err != nil {
			t.Fatal(err)
		}
		// Loop analysis is the less exact method (Prisk et al. 2002 found it
		// off by more than 30 degrees in some cases, cross-correlation within
		// 5): 2 degrees for cross-correlation, 5 for the loop here.
		if math.Abs(xc-phi) > 2 || math.Abs(lis-phi) > 5 {
			t.Errorf("phi %v: cross-correlation %v, Lissajous %v", phi, xc, lis)
		}
	}
	if _, _, err := resp.WindowPhase([]float64{1, math.NaN()}, []float64{1, 2}, 25, 4); !errors.Is(err, resp.ErrInput) {
		t.Errorf("NaN sample: %v", err)
	}
}
