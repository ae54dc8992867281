package motion_test

import (
	"fmt"
	"math"
	"time"

	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// walkingThenLying is 60 s of 2 Hz vertical bouncing (0.3 g) while upright,
// then 30 s lying on the back, at 50 Hz in g (default chest mounting: +y up,
// +z out of the chest).
func walkingThenLying() (x, y, z []float64) {
	for i := 0; i < 90*50; i++ {
		t := float64(i) / 50
		if t < 60 {
			x, y, z = append(x, 0), append(y, 1+0.3*math.Sin(2*math.Pi*2*t)), append(z, 0)
		} else {
			x, y, z = append(x, 0), append(y, 0), append(z, 1)
		}
	}
	return
}

func ExampleEpochs() {
	x, y, z := walkingThenLying()
	start := time.Date(2026, 5, 16, 12, 0, 0, 0, time.UTC)
	spec := window.Spec{Length: 30 * time.Second, Step: 30 * time.Second}
	epochs, err := motion.Epochs(x, y, z, 50, start, spec, motion.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, e := range epochs {
		fmt.Printf("%s %3d steps %4.0f spm MAD %5.1f mg %-8s %s\n",
			e.StartUTC.Format("15:04:05"), e.Steps, e.CadenceSPM, e.MADmg, e.Intensity, e.Posture)
	}
	// Output:
	// 12:00:00  60 steps  120 spm MAD 190.7 mg moderate upright
	// 12:00:30  60 steps  120 spm MAD 190.7 mg moderate upright
	// 12:01:00   0 steps  NaN spm MAD   0.0 mg light    supine
}

func ExampleDerive() {
	x, y, z := walkingThenLying()
	tr, err := motion.Derive(x, y, z, 50, motion.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("steps:", len(tr.StepTimes))
	for _, c := range tr.Changes {
		fmt.Printf("posture change %v -> %v at %.1f s (%.0f°)\n", c.From, c.To, c.Start, c.AngleDeg)
	}
	// Output:
	// steps: 120
	// posture change upright -> supine at 60.5 s (92°)
}

func ExampleStream() {
	x, y, z := walkingThenLying()
	start := time.Date(2026, 5, 16, 12, 0, 0, 0, time.UTC)
	s, err := motion.NewStream(start, window.Spec{Length: 30 * time.Second, Step: 30 * time.Second}, 50, motion.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	// Feed one second at a time, as a live service would.
	for i := 0; i < len(x); i += 50 {
		if err := s.Push(x[i:i+50], y[i:i+50], z[i:i+50]); err != nil {
			fmt.Println(err)
			return
		}
		for _, e := range s.Ready() {
			fmt.Printf("%s: %d steps, ENMO %.1f mg, %s\n", e.StartUTC.Format("15:04:05"), e.Steps, e.ENMOmg, e.Posture)
		}
	}
	// Close releases the last epoch.
	if err := s.Close(); err != nil {
		fmt.Println(err)
	}
	for _, e := range s.Ready() {
		fmt.Printf("%s: %d steps, ENMO %.1f mg, %s\n", e.StartUTC.Format("15:04:05"), e.Steps, e.ENMOmg, e.Posture)
	}
	// Output:
	// 12:00:00: 60 steps, ENMO 95.4 mg, upright
	// 12:00:30: 60 steps, ENMO 95.4 mg, upright
	// 12:01:00: 0 steps, ENMO 0.0 mg, supine
}

func ExampleSummarize() {
	// Package features calls Summarize on windows of its own grid; here a
	// 10-s window moved by 5 s over the 90-s trace.
	x, y, z := walkingThenLying()
	tr, _ := motion.Derive(x, y, z, 50, motion.Options{})
	g, _ := window.NewGrid(window.Spec{Length: 10 * time.Second, Step: 5 * time.Second, Anchor: window.AnchorStart}, time.Unix(0, 0))
	seq, _ := g.Samples(tr.RateHz, 0, len(tr.Samples), tr.Gaps)
	for w := range seq {
		if w.Start < 50 || w.Start > 60 {
			continue
		}
		e := motion.Summarize(w, tr.Samples[w.Lo:w.Hi], tr.RateHz, motion.Options{})
		fmt.Printf("[%2.0f, %2.0f) s: %2d steps, artefact %v (%s)\n", w.Start, w.End, e.Steps, e.Artefact, e.ArtefactReason)
	}
	// Output:
	// [50, 60) s: 20 steps, artefact true (movement above the MAD limit)
	// [55, 65) s: 10 steps, artefact true (movement above the MAD limit)
	// [60, 70) s:  0 steps, artefact true (posture change)
}

func ExampleNonWear() {
	// Two hours on a table (1 mg noise), then an hour worn and walking.
	rng := newRand(2)
	var x, y, z []float64
	for i := 0; i < 3*3600*10; i++ {
		t := float64(i) / 10
		if t < 7200 {
			x, y, z = append(x, 0.001*rng.NormFloat64()), append(y, 0.001*rng.NormFloat64()), append(z, 1+0.001*rng.NormFloat64())
		} else {
			x, y, z = append(x, 0.1*math.Sin(3*t)), append(y, 1+0.3*math.Sin(11*t)), append(z, 0.05*math.Sin(7*t))
		}
	}
	iv, err := motion.NonWear(x, y, z, 10, motion.UnitG, motion.NonWearOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, v := range iv {
		fmt.Printf("not worn from %.0f s to %.0f s\n", v.Start, v.End)
	}
	// Output:
	// not worn from 0 s to 7200 s
}

func ExampleCalibrate() {
	// A device with a +0.02 g offset on y and a 3 % gain error on z, held
	// still for 20 s in each of 26 orientations (10 Hz).
	var x, y, z []float64
	for a := -1.0; a <= 1; a++ {
		for b := -1.0; b <= 1; b++ {
			for c := -1.0; c <= 1; c++ {
				n := math.Sqrt(a*a + b*b + c*c)
				if n == 0 {
					continue
				}
				for i := 0; i < 200; i++ {
					x, y, z = append(x, a/n), append(y, b/n-0.02), append(z, c/n/1.03)
				}
			}
		}
	}
	cal, err := motion.Calibrate(x, y, z, 10, motion.UnitG, motion.CalibrationOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("offset %.3f %.3f %.3f g, scale %.3f %.3f %.3f, from %d still windows\n",
		cal.OffsetG[0], cal.OffsetG[1], cal.OffsetG[2], cal.Scale[0], cal.Scale[1], cal.Scale[2], cal.Points)
	// Output:
	// offset 0.000 0.020 0.000 g, scale 1.000 1.000 1.030, from 52 still windows
}

func ExampleNonWearStream() {
	// An hour worn and walking, two hours on a table (1 mg noise), then
	// worn again, fed live in one-minute chunks.
	s, err := motion.NewNonWearStream(10, motion.UnitG, motion.NonWearOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	rng := newRand(3)
	x, y, z := make([]float64, 600), make([]float64, 600), make([]float64, 600)
	for m := range 4 * 60 {
		for i := range x {
			t := float64(m*600+i) / 10
			if t >= 3600 && t < 3*3600 {
				x[i], y[i], z[i] = 0.001*rng.NormFloat64(), 0.001*rng.NormFloat64(), 1+0.001*rng.NormFloat64()
			} else {
				x[i], y[i], z[i] = 0.1*math.Sin(3*t), 1+0.3*math.Sin(11*t), 0.05*math.Sin(7*t)
			}
		}
		if err := s.Push(x, y, z); err != nil {
			fmt.Println(err)
			return
		}
		if h := float64(m+1) / 60; h == 2.5 || h == 3.5 {
			// Live reading of the last ten minutes, decided without look-ahead.
			now := float64(m+1) * 60
			fmt.Printf("at %.1f h: last 10 min %.0f %% off the body (decided to %.0f s)\n", h, 100*s.TrailingFrac(now-600, now), s.Decided())
		}
	}
	if err := s.Close(); err != nil {
		fmt.Println(err)
		return
	}
	for _, v := range s.Periods() {
		fmt.Printf("not worn from %.0f s to %.0f s\n", v.Start, v.End)
	}
	// Output:
	// at 2.5 h: last 10 min 100 % off the body (decided to 9900 s)
	// at 3.5 h: last 10 min 0 % off the body (decided to 13500 s)
	// not worn from 3600 s to 10800 s
}
