package ecg_test

import (
	"math/rand/v2"
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// simRTimes returns the simulator's true R-peak times of the beats that are
// not hidden in a lead-off gap.
func simRTimes(s sim.ECGSignal) []float64 {
	var out []float64
	for _, b := range s.Beats {
		if !b.Hidden {
			out = append(out, b.TimeS)
		}
	}
	return out
}

// simAtRate simulates 60 s at 250 Hz of a steady heart rate with mild RSA,
// RR jitter, baseline wander and white noise.
func simAtRate(t *testing.T, hr float64, seed uint64) sim.ECGSignal {
	t.Helper()
	s, err := sim.ECGSimulate(sim.ECGConfig{
		RateHz: 250, DurationS: 60, MeanHR: hr,
		RSAFraction: 0.03, JitterFraction: 0.02,
		NoisemV: 0.05, WandermV: 0.1, Seed: seed,
	})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func TestEnvelopeDetectorHeartRateSweep(t *testing.T) {
	// Simulator ground truth (McSharry et al. 2003 model): the true R-peak
	// times of internal/sim. The detector must keep Se and +P >= 99 % from
	// rest to exercise rates; the old median noise floor lost every beat
	// above about 155 beats/min.
	for hr := 40.0; hr <= 200; hr += 10 {
		for _, seed := range []uint64{1, 2} {
			s := simAtRate(t, hr, seed)
			res, err := ecg.DetectEnvelope(s.Samples, s.RateHz)
			if err != nil {
				t.Fatal(err)
			}
			sc, err := ecg.MatchBeats(simRTimes(s), ecg.BeatTimes(res.Beats), 0)
			if err != nil {
				t.Fatal(err)
			}
			if sc.Sensitivity() < 0.99 || sc.PositivePredictivity() < 0.99 {
				t.Errorf("%v beats/min, seed %d: TP %d FN %d FP %d, Se %.4f +P %.4f, want both >= 0.99",
					hr, seed, sc.TP, sc.FN, sc.FP, sc.Sensitivity(), sc.PositivePredictivity())
			}
		}
	}
}

func TestEnvelopeDetectorExerciseRates(t *testing.T) {
	// Simulator ground truth (McSharry et al. 2003 model) at the exercise
	// rates where the median noise floor failed, plus the range ends 30 and
	// 220 beats/min, also with the polarity flipped.
	for _, hr := range []float64{30, 160, 175, 190, 220} {
		for _, inv := range []bool{false, true} {
			s, err := sim.ECGSimulate(sim.ECGConfig{RateHz: 250, DurationS: 60, MeanHR: hr,
				RSAFraction: 0.03, JitterFraction: 0.02, NoisemV: 0.05, WandermV: 0.1, Invert: inv, Seed: 3})
			if err != nil {
				t.Fatal(err)
			}
			res, err := ecg.DetectEnvelope(s.Samples, s.RateHz)
			if err != nil {
				t.Fatal(err)
			}
			sc, _ := ecg.MatchBeats(simRTimes(s), ecg.BeatTimes(res.Beats), 0)
			t.Logf("%v beats/min inverted %v: TP %d FN %d FP %d", hr, inv, sc.TP, sc.FN, sc.FP)
			if sc.Sensitivity() < 0.99 || sc.PositivePredictivity() < 0.99 {
				t.Errorf("%v beats/min inverted %v: Se %.4f +P %.4f, want both >= 0.99",
					hr, inv, sc.Sensitivity(), sc.PositivePredictivity())
			}
		}
	}
}

func TestWindowQualityBSQIExercise(t *testing.T) {
	// Li, Mark and Clifford 2008: bSQI is near 1 when two detectors agree on
	// a clean signal. Given the simulator's true beats (McSharry et al. 2003
	// model) on 10 s windows of a clean 175 beats/min ECG, bSQI must stay
	// high (it was 0 with the median noise floor).
	s := simAtRate(t, 175, 4)
	truth := simRTimes(s)
	const fs, w = 250, 10 * 250
	for st := 0; st+w <= len(s.Samples); st += w {
		t0 := float64(st) / fs
		var in []float64
		for _, b := range truth {
			if b >= t0 && b < t0+10 {
				in = append(in, b-t0)
			}
		}
		q, err := ecg.WindowQuality(s.Samples[st:st+w], fs, in, ecg.QualityOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if !(q.BSQI >= 0.95) {
			t.Errorf("window at %v s: bSQI %.3f, want >= 0.95", t0, q.BSQI)
		}
	}
}

func TestEnvelopeDetectorNoiseOnly(t *testing.T) {
	// A detector should report no beats in white noise with no ECG (common
	// practice); the noise floor (5x the 5th envelope percentile) is what
	// rejects it.
	rng := rand.New(rand.NewPCG(11, 12))
	x := make([]float64, 600*250)
	for i := range x {
		x[i] = 0.05 * rng.NormFloat64()
	}
	res, err := ecg.DetectEnvelope(x, 250)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Beats) != 0 {
		t.Errorf("white noise, 600 s: %d beats, want 0", len(res.Beats))
	}
}
