package features_test

import (
	"fmt"
	"math"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// walk returns a recording of a chest accelerometer: two minutes sitting,
// two minutes walking at 110 steps/min.
func walk() *recording.Recording {
	a, _ := sim.AccelSimulate([]sim.AccelSegment{
		{Activity: sim.AccelSitting, DurationS: 120},
		{Activity: sim.AccelWalking, DurationS: 120, CadenceSPM: 110},
	}, sim.AccelConfig{Seed: 1})
	rec := &recording.Recording{Name: "walk", Start: time.Date(2026, 6, 1, 8, 0, 0, 0, time.UTC), StartKnown: true}
	for i, x := range [][]float64{a.X, a.Y, a.Z} {
		rec.Channels = append(rec.Channels, recording.Channel{Name: fmt.Sprint("acc", i), Unit: "g", RateHz: a.RateHz, Samples: x,
			Role: []recording.Role{recording.RoleAccX, recording.RoleAccY, recording.RoleAccZ}[i]})
	}
	return rec
}

func ExampleExtract() {
	tab, err := features.Extract(walk(), features.Config{})
	if err != nil {
		fmt.Println(err)
		return
	}
	steps, cadence := tab.Float("n_steps"), tab.Float("cadence_spm")
	for i, r := range tab.Rows {
		fmt.Printf("%s steps %2.0f cadence %3.0f /min, hrv: %s\n", r.Time.Format("15:04:05"), steps[i], cadence[i], tab.Strings("hrv_reason")[i])
	}
	// Output:
	// 08:00:30 steps  0 cadence NaN /min, hrv: no ECG channel
	// 08:01:00 steps  0 cadence NaN /min, hrv: no ECG channel
	// 08:01:30 steps  0 cadence NaN /min, hrv: no ECG channel
	// 08:02:00 steps  0 cadence NaN /min, hrv: no ECG channel
	// 08:02:30 steps 55 cadence 110 /min, hrv: no ECG channel
	// 08:03:00 steps 55 cadence 110 /min, hrv: no ECG channel
	// 08:03:30 steps 55 cadence 110 /min, hrv: no ECG channel
	// 08:04:00 steps 54 cadence 110 /min, hrv: no ECG channel
}

func ExampleStream() {
	rec := walk()
	s, err := features.NewStream(rec, features.Config{Families: []string{features.FamilyActivity}})
	if err != nil {
		fmt.Println(err)
		return
	}
	col := -1
	for i, c := range s.Columns() {
		if c.Name == "n_steps" {
			col = i
		}
	}
	// Push one second of each axis at a time, as a device would deliver it.
	for sec := 0; sec < 240; sec++ {
		for ch, c := range rec.Channels {
			s.Push(ch, c.Samples[sec*50:(sec+1)*50])
		}
		for r := range s.Ready() {
			fmt.Printf("after %3d s: row %s, %v steps\n", sec+1, r.Time.Format("15:04:05"), r.Values[col])
		}
	}
	s.Close()
	for r := range s.Ready() {
		fmt.Printf("at close: row %s, %v steps\n", r.Time.Format("15:04:05"), r.Values[col])
	}
	// Output:
	// after  31 s: row 08:00:30, 0 steps
	// after  61 s: row 08:01:00, 0 steps
	// after  91 s: row 08:01:30, 0 steps
	// after 121 s: row 08:02:00, 0 steps
	// after 151 s: row 08:02:30, 55 steps
	// after 181 s: row 08:03:00, 55 steps
	// after 211 s: row 08:03:30, 55 steps
	// at close: row 08:04:00, 54 steps
}

func ExampleReadLabelsCSV() {
	labels, err := features.ReadLabelsCSV(strings.NewReader("start,end,label\n2026-06-01T08:02:10Z,2026-06-01T08:02:40Z,stairs\n"))
	if err != nil {
		fmt.Println(err)
		return
	}
	tab, _ := features.Extract(walk(), features.Config{Labels: labels, Families: []string{features.FamilyActivity}})
	ov, until := tab.Float("label_stairs_overlap_frac"), tab.Float("label_stairs_until_s")
	for i, r := range tab.Rows[3:6] {
		fmt.Printf("%s overlap %.2f until %v s\n", r.Time.Format("15:04:05"), ov[i+3], math.Round(until[i+3]))
	}
	// Output:
	// 08:02:00 overlap 0.00 until 10 s
	// 08:02:30 overlap 0.67 until NaN s
	// 08:03:00 overlap 0.33 until NaN s
}
