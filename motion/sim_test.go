package motion_test

import (
	"math"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// End to end on the simulator's two-hour trail day (internal/sim ground
// truth: a consistency check of the pieces together, not an outside source;
// the outside checks are the analytic and open-data tests).
func TestTrailDayAgainstSimulatorTruth(t *testing.T) {
	rec, err := sim.AccelSimulate(sim.AccelTrailDay(), sim.AccelConfig{RateHz: 50, Seed: 42})
	if err != nil {
		t.Fatal(err)
	}
	tr, err := motion.Derive(rec.X, rec.Y, rec.Z, 50, motion.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if e := pctErr(len(tr.StepTimes), len(rec.Steps)); e > 1 {
		t.Errorf("steps %d vs true %d (%.2f %%)", len(tr.StepTimes), len(rec.Steps), e)
	}
	ep, err := motion.EpochsOf(tr, origin, window.Spec{Length: 30 * time.Second, Step: 30 * time.Second}, nil, motion.Options{})
	if err != nil {
		t.Fatal(err)
	}
	wantPosture := map[sim.AccelActivity]motion.Posture{
		sim.AccelSitting: motion.PostureUpright, sim.AccelStanding: motion.PostureUpright,
		sim.AccelWalking: motion.PostureUpright, sim.AccelRunning: motion.PostureUpright,
		sim.AccelSupine: motion.PostureSupine, sim.AccelLeft: motion.PostureLeft, sim.AccelRight: motion.PostureRight,
	}
	checked := 0
	for _, e := range ep {
		a0, ok0 := rec.ActivityAt(e.Start)
		a1, ok1 := rec.ActivityAt(math.Nextafter(e.End, 0))
		if !ok0 || !ok1 || a0 != a1 || !e.Valid {
			continue // straddles a change of activity or the ends
		}
		checked++
		if e.Posture != wantPosture[a0] {
			t.Errorf("epoch at %v s (%v): posture %v", e.Start, a0, e.Posture)
		}
		switch a0 {
		case sim.AccelRunning:
			if e.Intensity != motion.IntensityVigorous || !e.Artefact {
				t.Errorf("running epoch at %v s: %v, artefact %v (MAD %.0f mg)", e.Start, e.Intensity, e.Artefact, e.MADmg)
			}
		case sim.AccelSitting, sim.AccelSupine, sim.AccelLeft, sim.AccelRight, sim.AccelStanding:
			if e.Intensity != motion.IntensityLight || e.Steps != 0 || (e.Artefact && e.PostureChanges == 0) {
				t.Errorf("still epoch at %v s (%v): %v, %d steps, artefact %v", e.Start, a0, e.Intensity, e.Steps, e.Artefact)
			}
		case sim.AccelWalking:
			// Within 2 steps, except in the first epoch after running: the
			// adaptive threshold (2 s RMS) then takes about six steps to fall
			// to walking level, a known limitation (StepOptions).
			lo := 2
			if a, ok := rec.ActivityAt(e.Start - 1); ok && a == sim.AccelRunning {
				lo = 7
			}
			if n := rec.StepsIn(e.Start, e.End); e.Steps < n-lo || e.Steps > n+2 {
				t.Errorf("walking epoch at %v s: %d steps, true %d", e.Start, e.Steps, n)
			}
		}
	}
	if checked < 200 {
		t.Fatalf("only %d epochs checked", checked)
	}
	// The nap: sitting -> supine -> left -> right -> standing are four
	// changes of at least 60°; nothing else in the day turns the trunk by
	// 30° (the schedule's lean angles differ by at most 28°).
	if len(tr.Changes) != 4 {
		t.Fatalf("posture changes %+v, want 4", tr.Changes)
	}
	wantTo := []motion.Posture{motion.PostureSupine, motion.PostureLeft, motion.PostureRight, motion.PostureUpright}
	for k, c := range tr.Changes {
		if c.To != wantTo[k] {
			t.Errorf("change %d to %v, want %v", k, c.To, wantTo[k])
		}
	}
}
