package sim

import (
	"fmt"
	"math"
	"testing"
)

// The scenario's event truth must follow the schedule it claims: these checks
// compare the generated beats, breaths and steps with the schedule's targets
// (the physiology in day.go's header; demo data, so the tolerances only say
// that the generators do what their doc comments say).
func TestDayEventsFollowSchedule(t *testing.T) {
	for seed := uint64(1); seed <= 4; seed++ {
		t.Run(fmt.Sprintf("seed %d", seed), func(t *testing.T) { checkDayEvents(t, dayEvents(seed)) })
	}
}

func checkDayEvents(t *testing.T, tr DayTruth) {
	if len(tr.Segments) != 5 {
		t.Fatalf("%d segments, want 5", len(tr.Segments))
	}
	if tr.Segments[len(tr.Segments)-1].EndS != DayDurationS {
		t.Errorf("schedule ends at %v s, want %v", tr.Segments[len(tr.Segments)-1].EndS, DayDurationS)
	}
	for i := 1; i < len(tr.Beats); i++ {
		if !(tr.Beats[i].TimeS > tr.Beats[i-1].TimeS) {
			t.Fatalf("beat %d at %v not after %v", i, tr.Beats[i].TimeS, tr.Beats[i-1].TimeS)
		}
	}
	// Heart rate in the last two minutes of rest and of the nap sits at the
	// target (kinetics settled; RSA and jitter average out): within 3 %.
	for _, c := range []struct {
		name       string
		start, end float64
		want       float64
	}{
		{"rest", 360, 480, 58},
		{"nap", 7080, 7200, 52},
	} {
		if got := tr.MeanHR(c.start, c.end); math.Abs(got-c.want) > 0.03*c.want {
			t.Errorf("%s HR = %.1f beats/min, want %.0f +- 3 %%", c.name, got, c.want)
		}
	}
	// The hard repeats reach ~185 beats/min: peak 30-beat mean HR in the
	// intervals between 175 and 195.
	peak := 0.0
	for i := 30; i < len(tr.Beats); i++ {
		if tr.Beats[i].TimeS < 1200 || tr.Beats[i].TimeS >= 2880 {
			continue
		}
		hr := 60 * 30 / (tr.Beats[i].TimeS - tr.Beats[i-30].TimeS)
		peak = math.Max(peak, hr)
	}
	if peak < 175 || peak > 195 {
		t.Errorf("peak interval HR = %.1f beats/min, want 175..195", peak)
	}
	// Breathing rate at rest and in the nap near the targets (13 and 10 /min)
	// within 8 %; minute ventilation in the last minute of a hard repeat
	// near 100 L/min (48/min x 2.1 L) within 20 %.
	if got := tr.BreathRate(240, 480); math.Abs(got-13) > 0.08*13 {
		t.Errorf("rest breathing rate %.1f/min, want 13 +- 8 %%", got)
	}
	if got := tr.BreathRate(6800, 7200); math.Abs(got-10) > 0.08*10 {
		t.Errorf("nap breathing rate %.1f/min, want 10 +- 8 %%", got)
	}
	var vol float64
	for _, b := range tr.Breaths {
		if b.OnsetS >= 1200+60+120 && b.OnsetS < 1200+60+180 { // last minute of repeat 1
			vol += b.TidalL
		}
	}
	if vol < 80 || vol > 120 {
		t.Errorf("ventilation in a hard minute = %.0f L/min, want 100 +- 20 %%", vol)
	}
	// Every apnea holds only obstructed efforts, and at least one effort.
	for _, a := range tr.Apneas {
		n := 0
		for _, b := range tr.Breaths {
			if b.OnsetS >= a.StartS && b.OnsetS < a.EndS {
				n++
				if !b.Obstructed {
					t.Errorf("apnea %v: breath at %.1f s has airflow", a, b.OnsetS)
				}
			} else if b.Obstructed {
				if _, ok := inAny(b.OnsetS, tr.Apneas); !ok {
					t.Errorf("obstructed effort at %.1f s outside every apnea", b.OnsetS)
				}
			}
		}
		if n == 0 {
			t.Errorf("apnea %v has no efforts", a)
		}
	}
	// Ectopic beats: about one in 400.
	nv := 0
	for _, b := range tr.Beats {
		if b.Kind == 'V' {
			nv++
		}
	}
	if nv < 5 || nv > 60 {
		t.Errorf("%d ventricular beats in %d, want about 1 in 400", nv, len(tr.Beats))
	}
}

func TestDayEventsDeterministic(t *testing.T) {
	a, b := dayEvents(7), dayEvents(7)
	if len(a.Beats) != len(b.Beats) || len(a.Breaths) != len(b.Breaths) || len(a.Steps) != len(b.Steps) {
		t.Fatal("same seed gave different event counts")
	}
	for i := range a.Beats {
		if a.Beats[i] != b.Beats[i] {
			t.Fatalf("beat %d differs", i)
		}
	}
	c := dayEvents(8)
	if len(c.Beats) == len(a.Beats) && c.Beats[100] == a.Beats[100] {
		t.Error("different seeds gave the same beats")
	}
}

// DaySimulate's signals have the scenario's lengths and rates, NaN exactly in
// the lead-off gap, and steps only while moving: the warm-up's count equals
// its cadence times its duration within 3 % (the accelerometer simulator's
// 2 % stride jitter and its half-period margins at segment edges).
func TestDaySimulate(t *testing.T) {
	d, err := DaySimulate(1)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := len(d.ECG), int(DayDurationS*DayECGRateHz); got != want {
		t.Errorf("%d ECG samples, want %d", got, want)
	}
	for _, ax := range [][]float64{d.AccX, d.AccY, d.AccZ} {
		if got, want := len(ax), int(DayDurationS*DayAccRateHz); got != want {
			t.Errorf("%d accelerometer samples, want %d", got, want)
		}
	}
	for i, v := range d.ECG {
		ts := float64(i) / DayECGRateHz
		inGap := ts >= DayLeadOff.StartS && ts < DayLeadOff.EndS
		if math.IsNaN(v) != inGap {
			t.Fatalf("ECG sample %d (%.3f s): NaN=%v, in gap=%v", i, ts, math.IsNaN(v), inGap)
		}
	}
	tr := d.Truth
	if n := tr.StepsIn(0, 480) + tr.StepsIn(3600, 7200); n != 0 {
		t.Errorf("%d steps while resting or asleep", n)
	}
	if got, want := float64(tr.StepsIn(480, 1200)), 162.0*12; math.Abs(got-want) > 0.03*want {
		t.Errorf("warm-up steps %v, want %v +- 3 %%", got, want)
	}
	// Gravity: upright at rest (+y), supine in the nap (+z), left side after
	// DayLeftSideFrom (-x), as the mounting convention of package motion says.
	mean := func(v []float64, from, to float64) float64 {
		a, b := int(from*DayAccRateHz), int(to*DayAccRateHz)
		s := 0.0
		for _, x := range v[a:b] {
			s += x
		}
		return s / float64(b-a)
	}
	if y := mean(d.AccY, 100, 400); y < 0.9 {
		t.Errorf("rest: mean y %.2f g, want upright (> 0.9 g)", y)
	}
	if z := mean(d.AccZ, 4000, 5000); z < 0.9 {
		t.Errorf("nap: mean z %.2f g, want supine (> 0.9 g)", z)
	}
	if x := mean(d.AccX, 6000, 7000); x > -0.9 {
		t.Errorf("late nap: mean x %.2f g, want left side (< -0.9 g)", x)
	}
	// Bands: the lung volume recovered with the true weights (1/gain per
	// band, the two-compartment model of Konno and Mead 1967 as the
	// breathing simulator renders it) barely moves in an obstructive apnea:
	// its peak-to-peak there is under 10 % of that of the minute before
	// (the AASM apnea criterion is a drop of at least 90 %, Berry et al.
	// 2012), while each band alone keeps moving with the effort.
	if len(d.RibCage) != int(DayDurationS*DayBandRateHz) || len(d.Abdomen) != len(d.RibCage) {
		t.Fatalf("bands: %d and %d samples, want %d", len(d.RibCage), len(d.Abdomen), int(DayDurationS*DayBandRateHz))
	}
	// ptp is the peak-to-peak after removing the least-squares line, so the
	// simulator's slow baseline drift does not count as breathing.
	ptp := func(v []float64) float64 {
		n := float64(len(v))
		var sx, sy, sxx, sxy float64
		for i, y := range v {
			x := float64(i)
			sx, sy, sxx, sxy = sx+x, sy+y, sxx+x*x, sxy+x*y
		}
		b := (n*sxy - sx*sy) / (n*sxx - sx*sx)
		c := (sy - b*sx) / n
		lo, hi := math.Inf(1), math.Inf(-1)
		for i, y := range v {
			r := y - (c + b*float64(i))
			lo, hi = math.Min(lo, r), math.Max(hi, r)
		}
		return hi - lo
	}
	vol := func(from, to float64) (sum, rib []float64) {
		for i := int(from * DayBandRateHz); i < int(to*DayBandRateHz); i++ {
			rg, ag := dayBandGains(tr.Posture[int(float64(i)/DayBandRateHz)])
			sum = append(sum, d.RibCage[i]/rg+d.Abdomen[i]/ag)
			rib = append(rib, d.RibCage[i])
		}
		return sum, rib
	}
	for _, a := range tr.Apneas {
		during, ribDuring := vol(a.StartS+1, a.EndS-1)
		before, ribBefore := vol(a.StartS-60, a.StartS)
		if r := ptp(during) / ptp(before); r > 0.1 {
			t.Errorf("apnea at %.0f s: volume peak-to-peak %.2f of the minute before, want < 0.1", a.StartS, r)
		}
		if r := ptp(ribDuring) / ptp(ribBefore); r < 0.3 {
			t.Errorf("apnea at %.0f s: rib-cage band moves only %.2f of before, want effort (> 0.3)", a.StartS, r)
		}
	}
	// The bag calibration: every breath inside it moves exactly the bag's
	// volume (the constant-volume premise of the reference calibration).
	refs := d.ReferenceBreaths()
	if len(refs) < 10 {
		t.Errorf("%d bag breaths, want at least 10 (120 s at 13/min)", len(refs))
	}
	for _, r := range refs {
		if r.Text != "vref=1.00 L" || r.StartS < DayBagCalibration.StartS || r.EndS > DayBagCalibration.EndS {
			t.Errorf("reference breath %+v", r)
		}
	}
	d2, err := DaySimulate(1)
	if err != nil {
		t.Fatal(err)
	}
	for i := range d.ECG {
		if d.ECG[i] != d2.ECG[i] && !(math.IsNaN(d.ECG[i]) && math.IsNaN(d2.ECG[i])) {
			t.Fatalf("ECG sample %d differs between runs with one seed", i)
		}
	}
}

func BenchmarkDaySimulate(b *testing.B) {
	for b.Loop() {
		if _, err := DaySimulate(1); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(DayDurationS*float64(b.N)/b.Elapsed().Seconds(), "sim_s/s")
}
