// Command livestream is a live monitoring loop: a chest device (simulated
// here: ECG at 250 Hz and a 3-axis accelerometer at 50 Hz) delivers
// one-second packets, each is pushed to a features.Stream, and every row is
// printed as soon as its windows close.
//
//	go run ./examples/livestream -minutes 12
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"time"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

func main() {
	minutes := flag.Float64("minutes", 12, "length of the simulated session")
	realtime := flag.Bool("realtime", false, "wait one second between packets, like a real device")
	flag.Parse()
	if err := run(*minutes, *realtime, os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "livestream:", err)
		os.Exit(1)
	}
}

// device simulates the session: a warm-up walk then standing still.
func device(minutes float64) (*recording.Recording, error) {
	dur := minutes * 60
	e, err := sim.ECGSimulate(sim.ECGConfig{DurationS: dur, MeanHR: 88, RSAFraction: 0.03, NoisemV: 0.02, Seed: 42})
	if err != nil {
		return nil, err
	}
	a, err := sim.AccelSimulate([]sim.AccelSegment{
		{Activity: sim.AccelWalking, DurationS: dur / 2, CadenceSPM: 112},
		{Activity: sim.AccelStanding, DurationS: dur / 2},
	}, sim.AccelConfig{Seed: 42})
	if err != nil {
		return nil, err
	}
	rec := &recording.Recording{Name: "live", Start: time.Date(2026, 6, 1, 7, 0, 0, 0, time.UTC), StartKnown: true}
	rec.Channels = []recording.Channel{
		{Name: "ECG", Unit: "mV", RateHz: e.RateHz, Samples: e.Samples, Role: recording.RoleECG},
		{Name: "ax", Unit: "g", RateHz: a.RateHz, Samples: a.X, Role: recording.RoleAccX},
		{Name: "ay", Unit: "g", RateHz: a.RateHz, Samples: a.Y, Role: recording.RoleAccY},
		{Name: "az", Unit: "g", RateHz: a.RateHz, Samples: a.Z, Role: recording.RoleAccZ},
	}
	return rec, nil
}

// run feeds the device's packets to the stream and prints rows as they are
// released.
func run(minutes float64, realtime bool, w io.Writer) error {
	dev, err := device(minutes)
	if err != nil {
		return err
	}
	// The stream needs only the channel layout; samples arrive later.
	s, err := features.NewStream(dev, features.Config{})
	if err != nil {
		return err
	}
	cols := s.Columns()
	col := func(name string) int {
		for i, c := range cols {
			if c.Name == name {
				return i
			}
		}
		return -1
	}
	hr, rmssd, steps, post := col("mean_hr_bpm"), col("rmssd_ms"), col("n_steps"), col("posture")
	print := func(r features.Row, sec int) {
		fmt.Fprintf(w, "packet %4d s  row %s  hr %5.1f bpm  rmssd %5.1f ms  steps %3.0f  %s\n",
			sec, r.Time.Format("15:04:05"), r.Values[hr], r.Values[rmssd], r.Values[steps], r.Texts[post])
	}
	for sec := 0; float64(sec) < minutes*60; sec++ {
		for ci, c := range dev.Channels {
			lo, hi := int(float64(sec)*c.RateHz), min(int(float64(sec+1)*c.RateHz), len(c.Samples))
			if err := s.Push(ci, c.Samples[lo:hi]); err != nil {
				return err
			}
		}
		for r := range s.Ready() {
			print(r, sec+1)
		}
		if realtime {
			time.Sleep(time.Second)
		}
	}
	if err := s.Close(); err != nil {
		return err
	}
	for r := range s.Ready() {
		print(r, int(minutes*60))
	}
	return nil
}
