package features

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/window"
)

func walkRunSchedule() []sim.AccelSegment {
	return []sim.AccelSegment{
		{Activity: sim.AccelSitting, DurationS: 120},
		{Activity: sim.AccelWalking, DurationS: 240, CadenceSPM: 110},
		{Activity: sim.AccelRunning, DurationS: 180, CadenceSPM: 170},
		{Activity: sim.AccelSupine, DurationS: 120},
	}
}

func TestExtractGridAndMissingFamilies(t *testing.T) {
	rec, _ := simAccel(t, walkRunSchedule(), 1)
	tab, err := Extract(rec, Config{})
	if err != nil {
		t.Fatal(err)
	}
	// Rows every 30 s at whole multiples of 30 s since the Unix epoch
	// (issue 8: "default every 30 s, aligned to the Unix epoch"), from the
	// first after the start to the first at or after the end (660 s of data
	// starting 7.25 s past a grid time: 23 rows).
	if len(tab.Rows) != 23 {
		t.Fatalf("%d rows, want 23", len(tab.Rows))
	}
	for i, r := range tab.Rows {
		if r.Time.UnixNano()%int64(30*time.Second) != 0 {
			t.Fatalf("row %d at %v not on the 30-s epoch grid", i, r.Time)
		}
		if r.Seq != r.Time.Unix()/30 {
			t.Fatalf("row %d seq %d, want %d", i, r.Seq, r.Time.Unix()/30)
		}
		if got := r.Time.Sub(testStart).Seconds(); math.Abs(got-r.Offset) > 1e-9 {
			t.Fatalf("row %d offset %v, time says %v", i, r.Offset, got)
		}
	}
	// No ECG and no bands: empty columns with the reason, not an error.
	for _, name := range []string{"hrv_reason", "breathing_reason"} {
		for i, s := range tab.Strings(name) {
			if s == "" {
				t.Fatalf("%s empty in row %d", name, i)
			}
		}
	}
	if got := tab.Strings("hrv_reason")[5]; got != "no ECG channel" {
		t.Errorf("hrv_reason = %q, want %q", got, "no ECG channel")
	}
	if got := tab.Strings("breathing_reason")[5]; got != "no respiratory band" {
		t.Errorf("breathing_reason = %q", got)
	}
	if cov := tab.Float("hrv_coverage_frac")[5]; !math.IsNaN(cov) {
		t.Errorf("hrv coverage %v for a missing family, want empty", cov)
	}
}

// TestActivityStepsAgainstSimulator checks the activity columns against the
// simulator's ground truth: internal/sim.AccelSimulate places one impact
// per step at the scheduled cadence (110 steps/min walking, 170 running: a
// typical adult walking cadence and an easy running cadence, common
// practice).
func TestActivityStepsAgainstSimulator(t *testing.T) {
	rec, a := simAccel(t, walkRunSchedule(), 2)
	tab, err := Extract(rec, Config{})
	if err != nil {
		t.Fatal(err)
	}
	steps, cad := tab.Float("n_steps"), tab.Float("cadence_spm")
	cov := tab.Float("activity_coverage_frac")
	checked := 0
	for i, r := range tab.Rows {
		if cov[i] < 1 {
			continue
		}
		lo, hi := r.Offset-30, r.Offset
		truth := 0
		for _, s := range a.Steps {
			if s >= lo && s < hi {
				truth++
			}
		}
		// Allow one step at each window edge (the detector times a step at
		// its filtered peak, a fraction of a step after the impact).
		if math.Abs(steps[i]-float64(truth)) > 2 {
			t.Errorf("row %d (%.0f s): %v steps, simulator %d", i, hi, steps[i], truth)
		}
		if lo >= 130 && hi <= 350 { // fully inside the 110 steps/min walk
			if math.Abs(cad[i]-110) > 110*0.05 {
				t.Errorf("row %d: cadence %v steps/min, simulator 110", i, cad[i])
			}
			checked++
		}
		if lo >= 370 && hi <= 530 { // inside the 170 steps/min run
			if math.Abs(cad[i]-170) > 170*0.05 {
				t.Errorf("row %d: cadence %v steps/min, simulator 170", i, cad[i])
			}
			checked++
		}
	}
	if checked < 8 {
		t.Fatalf("only %d windows inside walking/running segments", checked)
	}
	total := 0.0
	for i := range steps {
		if !math.IsNaN(steps[i]) {
			total += steps[i]
		}
	}
	if want := float64(len(a.Steps)); math.Abs(total-want) > 0.03*want {
		t.Errorf("total steps %v, simulator %v", total, want)
	}
}

func TestStreamEqualsBatch(t *testing.T) {
	rec, _ := simAccel(t, walkRunSchedule(), 3)
	// Lost samples in the middle of one axis and a declared gap.
	for i := 20000; i < 20400; i++ {
		rec.Channels[1].Samples[i] = math.NaN()
	}
	cfg := Config{Labels: []Label{{Start: testStart.Add(100 * time.Second), End: testStart.Add(160 * time.Second), Name: "walk test"}}}
	want, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	for trial := range 6 {
		rng := rand.New(rand.NewPCG(uint64(trial), 99))
		got := streamRows(t, rec, cfg, rng, []float64{0.05, 1, 7, 45, 200, 2000}[trial])
		rowsEqual(t, want.Rows, got)
	}
}

func TestExtractErrors(t *testing.T) {
	rec, _ := simAccel(t, walkRunSchedule()[:1], 4)
	if _, err := Extract(nil, Config{}); !errors.Is(err, ErrInput) {
		t.Errorf("nil recording: %v", err)
	}
	for _, cfg := range []Config{
		{Step: -time.Second},
		{HRVWindow: -1},
		{Families: []string{"mood"}},
		{MinCoverage: 2},
		{Roles: map[string]recording.Role{"nope": recording.RoleECG}},
	} {
		if _, err := Extract(rec, cfg); !errors.Is(err, ErrConfig) {
			t.Errorf("config %+v: error %v, want ErrConfig", cfg, err)
		}
	}
	bad := *rec
	bad.Channels = append([]recording.Channel(nil), rec.Channels...)
	bad.Channels[0].RateHz = math.NaN()
	if _, err := Extract(&bad, Config{}); !errors.Is(err, ErrInput) {
		t.Errorf("NaN rate: %v", err)
	}
	// Role override: calling the x axis an ECG leaves activity without x.
	tab, err := Extract(rec, Config{Roles: map[string]recording.Role{"acc_x": recording.RoleUnknown}})
	if err != nil {
		t.Fatal(err)
	}
	if r := tab.Strings("activity_reason")[0]; !strings.Contains(r, "acc_x") {
		t.Errorf("activity reason %q after removing the x role", r)
	}
}

// hrvRecording is ten minutes of simulated ECG (internal/sim.ECGSimulate:
// McSharry et al. 2003 waveform, beats laid out from a constant 72
// beats/min with 5 % respiratory sinus arrhythmia at 0.25 Hz) plus the
// accelerometer, with a lead-off stretch.
func hrvRecording(t testing.TB, dur float64) (*recording.Recording, sim.ECGSignal) {
	rec, _ := simAccel(t, []sim.AccelSegment{{Activity: sim.AccelSitting, DurationS: dur}}, 5)
	e := simECG(t, rec, sim.ECGConfig{DurationS: dur, MeanHR: 72, RSAFraction: 0.05, JitterFraction: 0.01,
		NoisemV: 0.02, LeadOff: []sim.ECGInterval{{StartS: 400, EndS: 430}}, Seed: 7})
	return rec, e
}

func TestHRVStreamEqualsBatch(t *testing.T) {
	rec, _ := hrvRecording(t, 900)
	want, err := Extract(rec, Config{Families: []string{FamilyHRV}})
	if err != nil {
		t.Fatal(err)
	}
	if n := countFinite(want.Float("rmssd_ms")); n < 10 {
		t.Fatalf("only %d rows with RMSSD", n)
	}
	for trial := range 4 {
		rng := rand.New(rand.NewPCG(uint64(trial), 7))
		got := streamRows(t, rec, Config{Families: []string{FamilyHRV}}, rng, []float64{0.1, 3, 40, 1000}[trial])
		rowsEqual(t, want.Rows, got)
	}
}

func countFinite(x []float64) int {
	n := 0
	for _, v := range x {
		if !math.IsNaN(v) {
			n++
		}
	}
	return n
}

// TestHRVAgainstSimulator compares the HRV columns with the same measures
// computed from the simulator's own beat times (internal/sim.ECGSimulate
// ground truth: 72 beats/min with 5 % respiratory sinus arrhythmia at
// 0.25 Hz, the breathing-linked RR modulation of healthy adults at rest).
// The tolerances allow for R-peak timing at 250 Hz (4 ms samples).
func TestHRVAgainstSimulator(t *testing.T) {
	rec, e := hrvRecording(t, 900)
	tab, err := Extract(rec, Config{Families: []string{FamilyHRV}})
	if err != nil {
		t.Fatal(err)
	}
	hr, rmssd, nnn := tab.Float("mean_hr_bpm"), tab.Float("rmssd_ms"), tab.Float("hrv_n_nn")
	checked := 0
	for i, r := range tab.Rows {
		if math.IsNaN(hr[i]) {
			continue
		}
		lo, hi := r.Offset-300, r.Offset
		var nn []float64
		for k := 1; k < len(e.Beats); k++ {
			a, b := e.Beats[k-1], e.Beats[k]
			if a.TimeS >= lo && b.TimeS < hi && !a.Hidden && !b.Hidden && !(a.TimeS < 430 && b.TimeS >= 400) {
				nn = append(nn, 1000*(b.TimeS-a.TimeS))
			}
		}
		mean, ss := 0.0, 0.0
		for k, v := range nn {
			mean += v
			if k > 0 {
				ss += (v - nn[k-1]) * (v - nn[k-1])
			}
		}
		mean /= float64(len(nn))
		wantHR, wantRMSSD := 60000/mean, math.Sqrt(ss/float64(len(nn)-1))
		if math.Abs(hr[i]-wantHR) > 0.3 {
			t.Errorf("row %d: mean HR %.2f, simulator %.2f beats/min", i, hr[i], wantHR)
		}
		if math.Abs(rmssd[i]-wantRMSSD) > 0.08*wantRMSSD {
			t.Errorf("row %d: RMSSD %.2f, simulator %.2f ms", i, rmssd[i], wantRMSSD)
		}
		if math.Abs(nnn[i]-float64(len(nn))) > 2 {
			t.Errorf("row %d: %v NN, simulator %d", i, nnn[i], len(nn))
		}
		checked++
	}
	if checked < 15 {
		t.Fatalf("only %d rows checked", checked)
	}
}

// breathRecording is a simulated two-band recording
// (internal/sim.BreathSimulate): 4 min at 15 breaths/min (a normal adult
// resting rate, methods reference 5.3), an obstructive apnea of 20 s, then
// 4 min at 12 breaths/min.
func breathRecording(t testing.TB) (*recording.Recording, *sim.BreathRecording) {
	b, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 11, Segments: []sim.BreathSegment{
		{Label: "rest", DurationS: 240, RatePerMin: 15},
		{Label: "apnea", Kind: sim.BreathObstructiveApnea, DurationS: 20},
		{Label: "rest2", DurationS: 240, RatePerMin: 12},
	}})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "sim_breath", Start: testStart, StartKnown: true, Channels: []recording.Channel{
		{Name: "rib", Unit: "", RateHz: b.RateHz, Samples: b.Rib, Role: recording.RoleRibCage},
		{Name: "abd", Unit: "", RateHz: b.RateHz, Samples: b.Abd, Role: recording.RoleAbdomen},
	}}
	return rec, b
}

// TestBreathingAgainstSimulator checks breathing rate and the apnea count
// against the simulator's ground truth (the scheduled rates and the one
// obstructive apnea).
func TestBreathingAgainstSimulator(t *testing.T) {
	rec, b := breathRecording(t)
	tab, err := Extract(rec, Config{Families: []string{FamilyBreathing}})
	if err != nil {
		t.Fatal(err)
	}
	rate, apn := tab.Float("resp_rate_per_min"), tab.Float("n_apneas")
	checked := 0
	for i, r := range tab.Rows {
		lo, hi := r.Offset-60, r.Offset
		var want float64
		switch {
		case lo >= 10 && hi <= 240:
			want = 15
		case lo >= 270 && hi <= 500:
			want = 12
		default:
			continue
		}
		if math.Abs(rate[i]-want) > 0.1*want {
			t.Errorf("row %d (%.0f s): %.2f breaths/min, simulator %v", i, hi, rate[i], want)
		}
		checked++
	}
	if checked < 10 {
		t.Fatalf("only %d rows checked", checked)
	}
	// The apnea starts at 240 s and is counted in every window containing
	// its start: windows are 60 s every 30 s, so two windows. The bands are
	// not calibrated (equal weights), so the apnea's paradoxical efforts do
	// not cancel in the sum and resp scores the drop as a candidate
	// hypopnea (>= 30 % but < 90 %): count both kinds.
	hyp := tab.Float("n_hypopneas")
	total := 0.0
	for i := range apn {
		for _, v := range []float64{apn[i], hyp[i]} {
			if !math.IsNaN(v) {
				total += v
			}
		}
	}
	if len(b.Events) != 1 || total != 2 {
		t.Errorf("event counted %v times over overlapping windows (want 2 = one event in two 60-s windows); simulator events %v", total, b.Events)
	}
}

func TestBreathingStreamEqualsBatch(t *testing.T) {
	rec, _ := breathRecording(t)
	for i := 15000; i < 15300; i++ {
		rec.Channels[0].Samples[i] = math.NaN()
	}
	cfg := Config{Families: []string{FamilyBreathing}}
	want, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	for trial := range 4 {
		rng := rand.New(rand.NewPCG(uint64(trial), 5))
		got := streamRows(t, rec, cfg, rng, []float64{0.2, 5, 60, 1000}[trial])
		rowsEqual(t, want.Rows, got)
	}
}

// TestECGQualityLeadOff checks the ECG quality columns against the
// simulator's lead-off stretch (internal/sim.ECGConfig.LeadOff, 400-430 s,
// samples NaN): the invalid fraction of each 30-s quality window is its
// overlap with the stretch, and on clean windows the two detectors agree
// (bSQI at least 0.9, common practice for good-quality ECG).
func TestECGQualityLeadOff(t *testing.T) {
	rec, _ := hrvRecording(t, 600)
	tab, err := Extract(rec, Config{Families: []string{FamilyHRV}})
	if err != nil {
		t.Fatal(err)
	}
	lead, bsqi, cov := tab.Float("ecg_lead_off_frac"), tab.Float("ecg_bsqi_frac"), tab.Float("ecg_quality_coverage_frac")
	if lead == nil {
		t.Fatal("no ecg_lead_off_frac column")
	}
	for i, r := range tab.Rows {
		lo, hi := math.Max(r.Offset-30, 0), math.Min(r.Offset, 600)
		if hi <= lo {
			continue
		}
		want := math.Max(0, math.Min(hi, 430)-math.Max(lo, 400)) / (hi - lo)
		if math.Abs(lead[i]-want) > 1.0/250/(hi-lo)+1e-9 {
			t.Errorf("row %d (%.2f s): lead-off fraction %v, want %v", i, r.Offset, lead[i], want)
		}
		if want == 0 && cov[i] == 1 && !(bsqi[i] >= 0.9) {
			t.Errorf("row %d: bSQI %v on clean ECG", i, bsqi[i])
		}
	}
}

// TestAllFamiliesStreamEqualsBatch feeds a recording with every modality,
// lost samples and a declared ECG gap to Stream in random chunkings and
// requires rows identical to Extract's (issue 8: "for the same data its
// rows equal the batch rows exactly").
func TestAllFamiliesStreamEqualsBatch(t *testing.T) {
	rec, _ := hrvRecording(t, 500)
	br, _ := breathRecording(t)
	rec.Channels = append(rec.Channels, br.Channels...)
	ecgCh := 3
	rec.Channels[ecgCh].Gaps = []window.Interval{{Start: 200, End: 203.5}}
	for i := 7000; i < 7100; i++ {
		rec.Channels[4].Samples[i] = math.Inf(1)
	}
	cfg := Config{Labels: []Label{{Start: testStart.Add(time.Minute), End: testStart.Add(2 * time.Minute), Name: "warm-up"}}}
	want, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	for _, fam := range []string{"hrv_coverage_frac", "ecg_quality_coverage_frac", "breathing_coverage_frac", "activity_coverage_frac"} {
		if countFinite(want.Float(fam)) == 0 {
			t.Fatalf("%s never computed", fam)
		}
	}
	for trial := range 3 {
		rng := rand.New(rand.NewPCG(uint64(trial), 1234))
		got := streamRows(t, rec, cfg, rng, []float64{0.3, 11, 400}[trial])
		rowsEqual(t, want.Rows, got)
	}
}

func TestStreamErrors(t *testing.T) {
	rec, _ := simAccel(t, walkRunSchedule()[:1], 1)
	s, err := NewStream(rec, Config{})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Push(7, []float64{1}); !errors.Is(err, ErrInput) {
		t.Errorf("push to channel 7: %v", err)
	}
	if err := s.Push(0, rec.Channels[0].Samples[:100]); err != nil {
		t.Fatal(err)
	}
	if err := s.Gap(0, window.Interval{Start: 1, End: 2}); !errors.Is(err, ErrInput) {
		t.Errorf("gap over pushed samples: %v", err)
	}
	if s.Err() == nil {
		t.Error("stream usable after a misplaced gap")
	}
	s2, _ := NewStream(rec, Config{})
	if err := s2.Gap(1, window.Interval{Start: 5, End: math.NaN()}); !errors.Is(err, ErrInput) {
		t.Errorf("NaN gap: %v", err)
	}
	s3, _ := NewStream(rec, Config{})
	if err := s3.Close(); err != nil {
		t.Fatal(err)
	}
	if n := len(slices.Collect(s3.Ready())); n != 0 {
		t.Errorf("%d rows from an empty stream", n)
	}
	if err := s3.Push(0, []float64{0}); !errors.Is(err, ErrInput) {
		t.Errorf("push after close: %v", err)
	}
	if _, err := NewStream(rec, Config{BeatsAnnotator: "atr"}); !errors.Is(err, ErrConfig) {
		t.Errorf("beats annotator in a stream: %v", err)
	}
}

func TestEmptyRecording(t *testing.T) {
	rec := &recording.Recording{Name: "empty", Start: testStart, Channels: []recording.Channel{{Name: "ECG", RateHz: 250, Role: recording.RoleECG}}}
	tab, err := Extract(rec, Config{})
	if err != nil {
		t.Fatal(err)
	}
	if len(tab.Rows) != 0 {
		t.Errorf("%d rows from a recording without samples", len(tab.Rows))
	}
}

// TestStreamEqualsBatchOtherGrid repeats the equality check on a 20-s step
// anchored at the recording start with 2-min HRV and 40-s breathing windows.
func TestStreamEqualsBatchOtherGrid(t *testing.T) {
	rec, _ := hrvRecording(t, 400)
	br, _ := breathRecording(t)
	rec.Channels = append(rec.Channels, br.Channels...)
	cfg := Config{Step: 20 * time.Second, Anchor: window.AnchorStart, HRVWindow: 2 * time.Minute, BreathingWindow: 40 * time.Second, ActivityWindow: 20 * time.Second}
	want, err := Extract(rec, cfg)
	if err != nil {
		t.Fatal(err)
	}
	if want.Rows[0].Offset != 20 || countFinite(want.Float("rmssd_ms")) < 10 {
		t.Fatalf("first row at %v s, %d RMSSD values", want.Rows[0].Offset, countFinite(want.Float("rmssd_ms")))
	}
	rng := rand.New(rand.NewPCG(3, 3))
	rowsEqual(t, want.Rows, streamRows(t, rec, cfg, rng, 9))
}
