package features

import (
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/window"
)

// trailDay turns the demo scenario (internal/sim.DaySimulate: a trail
// runner's two hours of rest, warm-up, intervals, cool-down and a nap with
// obstructive apneas) into a recording with its diary and scorer labels.
func trailDay(t testing.TB) (*recording.Recording, *sim.DayRecording, []Label) {
	d, err := sim.DaySimulate(1)
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "trail_day", Start: d.Start, StartKnown: true}
	for _, s := range d.Signals() {
		c := recording.Channel{Name: s.Name, Unit: s.Unit, RateHz: s.RateHz, Samples: s.Samples, Role: recording.GuessRole(s.Name, s.Unit)}
		for _, g := range s.Gaps {
			c.Gaps = append(c.Gaps, window.Interval{Start: g.StartS, End: g.EndS})
		}
		rec.Channels = append(rec.Channels, c)
	}
	var labels []Label
	for _, l := range d.Labels() {
		labels = append(labels, Label{Name: l.Text, Start: d.Start.Add(secs(l.StartS)), End: d.Start.Add(secs(l.EndS))})
	}
	return rec, d, labels
}

// TestTrailDay checks the whole table of the demo day against the
// simulator's ground truth (DayTruth.MeanHR, BreathRate, StepsIn and the
// apnea list: the schedule follows the usual physiology of a run, heart
// rate and breathing rising with effort and falling in sleep). Windows that
// straddle a change of segment are skipped: the truth changes inside them.
func TestTrailDay(t *testing.T) {
	rec, d, labels := trailDay(t)
	for _, role := range []recording.Role{recording.RoleECG, recording.RoleRibCage, recording.RoleAbdomen, recording.RoleAccX, recording.RoleAccY, recording.RoleAccZ} {
		if _, ok := rec.Channel(role); !ok {
			t.Fatalf("no %v channel in the demo recording", role)
		}
	}
	tab, err := Extract(rec, Config{Labels: labels})
	if err != nil {
		t.Fatal(err)
	}
	tr := &d.Truth
	steady := func(lo, hi float64) bool { // inside one segment, away from interval repeats
		for _, s := range tr.Segments {
			if lo >= s.StartS && hi <= s.EndS {
				return s.Label == "rest" || s.Label == "nap" || s.Label == "cool-down" || s.Label == "warm-up"
			}
		}
		return false
	}
	hr, rate, steps := tab.Float("mean_hr_bpm"), tab.Float("resp_rate_per_min"), tab.Float("n_steps")
	apn, hyp := tab.Float("n_apneas"), tab.Float("n_hypopneas")
	var nHR, nRate, nSteps int
	for i, r := range tab.Rows {
		e := r.Offset
		if steady(e-300, e) && !math.IsNaN(hr[i]) {
			if want := tr.MeanHR(e-300, e); math.Abs(hr[i]-want) > 0.03*want {
				t.Errorf("%.0f s: mean HR %.1f, simulator %.1f beats/min", e, hr[i], want)
			}
			nHR++
		}
		if steady(e-60, e) && !nearApnea(tr, e-60, e) {
			if want := tr.BreathRate(e-60, e); math.Abs(rate[i]-want) > 0.1*want {
				t.Errorf("%.0f s: breathing rate %.1f, simulator %.1f breaths/min", e, rate[i], want)
			}
			nRate++
		}
		// Steps: skip the first window of a segment (the cadence changes
		// from running to walking there and the detector re-adapts).
		if steady(e-60, e) && e-30 >= 0 {
			if want := float64(tr.StepsIn(e-30, e)); math.Abs(steps[i]-want) > math.Max(2, 0.05*want) {
				t.Errorf("%.0f s: %v steps, simulator %v", e, steps[i], want)
			}
			nSteps++
		}
	}
	if nHR < 100 || nRate < 100 || nSteps < 150 {
		t.Errorf("checked only %d HR, %d rate, %d step rows", nHR, nRate, nSteps)
	}
	// Every simulated apnea is found (as a candidate apnea or hypopnea) in
	// a window containing its start.
	for _, a := range tr.Apneas {
		found := false
		for i, r := range tab.Rows {
			if r.Offset-60 <= a.StartS+2 && a.StartS-2 < r.Offset && (apn[i] > 0 || hyp[i] > 0) {
				found = true
			}
		}
		if !found {
			t.Errorf("apnea at %v-%v s not found", a.StartS, a.EndS)
		}
	}
	// The lead-off gap shows in the ECG quality columns.
	lead := tab.Float("ecg_lead_off_frac")
	for i, r := range tab.Rows {
		if r.Offset > tr.LeadOff[0].StartS+1 && r.Offset-30 < tr.LeadOff[0].EndS-1 && !(lead[i] > 0) {
			t.Errorf("%.0f s: lead-off fraction %v inside the simulated gap", r.Offset, lead[i])
		}
	}
	if tab.Col("label_obstructive_apnea_overlap_frac") < 0 || tab.Col("label_nap_since_s") < 0 {
		t.Errorf("label columns missing")
	}
}

func nearApnea(tr *sim.DayTruth, lo, hi float64) bool {
	for _, a := range tr.Apneas {
		if a.StartS < hi+30 && a.EndS > lo-30 {
			return true
		}
	}
	return false
}
