package motion_test

import (
	"errors"
	"math"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// Property: the streaming driver gives the same epochs, steps and posture
// changes as the batch convenience for any chunking (house rule: one core,
// two drivers), including runs of invalid samples.
func TestStreamMatchesBatchAnyChunking(t *testing.T) {
	segs := []sim.AccelSegment{
		{Activity: sim.AccelSitting, DurationS: 40},
		{Activity: sim.AccelWalking, DurationS: 90, CadenceSPM: 112},
		{Activity: sim.AccelRunning, DurationS: 60, CadenceSPM: 170},
		{Activity: sim.AccelSupine, DurationS: 40},
		{Activity: sim.AccelLeft, DurationS: 30},
	}
	rec, err := sim.AccelSimulate(segs, sim.AccelConfig{RateHz: 50, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	x, y, z := rec.X, rec.Y, rec.Z
	for i := 3000; i < 3400; i++ { // 8 s dropout while walking
		x[i], y[i], z[i] = math.NaN(), math.NaN(), math.NaN()
	}
	z[7000] = math.Inf(-1)
	spec := window.Spec{Length: 10 * time.Second, Step: 5 * time.Second}
	opts := motion.Options{}
	tr, err := motion.Derive(x, y, z, 50, opts)
	if err != nil {
		t.Fatal(err)
	}
	want, err := motion.EpochsOf(tr, origin, spec, nil, opts)
	if err != nil {
		t.Fatal(err)
	}
	if len(tr.StepTimes) < 200 || len(tr.Changes) < 2 || len(want) < 50 {
		t.Fatalf("batch run too thin to compare: %d steps, %d posture changes, %d epochs", len(tr.StepTimes), len(tr.Changes), len(want))
	}
	rng := newRand(11)
	eq := cmpopts.EquateNaNs()
	conv, err := motion.Epochs(x, y, z, 50, origin, spec, opts)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(want, conv, eq); d != "" {
		t.Fatalf("Epochs differs from EpochsOf(Derive) (-want +got):\n%s", d)
	}
	for trial := 0; trial < 12; trial++ {
		s, err := motion.NewStream(origin, spec, 50, opts)
		if err != nil {
			t.Fatal(err)
		}
		var got []motion.Epoch
		var steps []float64
		var changes []motion.PostureChange
		maxChunk := []int{1, 7, 100, 5000}[trial%4]
		for i := 0; i < len(x); {
			j := min(len(x), i+1+rng.IntN(maxChunk))
			if err := s.Push(x[i:j], y[i:j], z[i:j]); err != nil {
				t.Fatal(err)
			}
			got = append(got, s.Ready()...)
			steps = append(steps, s.Steps()...)
			changes = append(changes, s.PostureChanges()...)
			i = j
		}
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		got = append(got, s.Ready()...)
		steps = append(steps, s.Steps()...)
		changes = append(changes, s.PostureChanges()...)
		if d := cmp.Diff(want, got, eq); d != "" {
			t.Fatalf("trial %d (chunks up to %d): epochs differ (-batch +stream):\n%s", trial, maxChunk, d)
		}
		if d := cmp.Diff(tr.StepTimes, steps); d != "" {
			t.Fatalf("trial %d: steps differ:\n%s", trial, d)
		}
		if d := cmp.Diff(tr.Changes, changes); d != "" {
			t.Fatalf("trial %d: posture changes differ:\n%s", trial, d)
		}
	}
}

func TestStreamErrors(t *testing.T) {
	spec := window.Spec{Length: 10 * time.Second, Step: 10 * time.Second}
	if _, err := motion.NewStream(origin, spec, 5, motion.Options{}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("5 Hz stream: %v", err)
	}
	if _, err := motion.NewStream(origin, window.Spec{}, 50, motion.Options{}); !errors.Is(err, window.ErrSpec) {
		t.Errorf("empty spec: %v", err)
	}
	s, err := motion.NewStream(origin, spec, 50, motion.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Push([]float64{1}, []float64{1, 2}, []float64{1}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("ragged push: %v", err)
	}
	if err := s.Push(make([]float64, 100), make([]float64, 100), make([]float64, 100)); err != nil {
		t.Fatal(err)
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	if ep := s.Ready(); len(ep) != 1 || ep[0].Valid {
		t.Errorf("2 s of data in a 10-s window: %+v", ep)
	}
	if err := s.Push([]float64{0}, []float64{1}, []float64{0}); !errors.Is(err, window.ErrClosed) {
		t.Errorf("push after close: %v", err)
	}
	if err := s.Close(); !errors.Is(err, window.ErrClosed) {
		t.Errorf("second close: %v", err)
	}
}
