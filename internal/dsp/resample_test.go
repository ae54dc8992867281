package dsp

import (
	"errors"
	"math"
	"testing"
)

func TestResampleSine(t *testing.T) {
	// A 5 Hz sine at 360 Hz resampled to 128, 250 and 1000 Hz matches the
	// sine evaluated at the new times (derived: 5 Hz is far below every new
	// Nyquist; the Catmull-Rom error for a smooth signal is O(h^3)).
	const f = 5.0
	x := make([]float64, 3600)
	for i := range x {
		x[i] = math.Sin(2 * math.Pi * f * float64(i) / 360)
	}
	for _, to := range []float64{128, 250, 1000} {
		y, err := Resample(x, 360, to)
		if err != nil {
			t.Fatal(err)
		}
		if want := int(math.Floor(3599/360.0*to)) + 1; len(y) != want {
			t.Fatalf("%v Hz: %d samples, want %d", to, len(y), want)
		}
		worst := 0.0
		for k := 200; k < len(y)-200; k++ { // skip filter edges
			worst = math.Max(worst, math.Abs(y[k]-math.Sin(2*math.Pi*f*float64(k)/to)))
		}
		if worst > 2e-3 {
			t.Errorf("%v Hz: worst error %.2e, want < 2e-3", to, worst)
		}
	}
}

func TestResampleBadInput(t *testing.T) {
	if _, err := Resample([]float64{1, math.NaN(), 2}, 100, 50); !errors.Is(err, ErrSeries) {
		t.Errorf("NaN: %v", err)
	}
	if _, err := Resample([]float64{1}, 100, 50); !errors.Is(err, ErrSeries) {
		t.Errorf("one sample: %v", err)
	}
	if _, err := Resample([]float64{1, 2}, 0, 50); !errors.Is(err, ErrDesign) {
		t.Errorf("zero rate: %v", err)
	}
}
