package resp_test

import (
	"fmt"
	"math"
	"time"

	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// Two bands breathing together at 15 breaths/min for two minutes.
func exampleBands() (rib, abd []float64) {
	const fs = 25.0
	for i := 0; i < 120*fs; i++ {
		s := math.Sin(2 * math.Pi * 0.25 * float64(i) / fs)
		rib = append(rib, 0.4*s)
		abd = append(abd, 0.6*s)
	}
	return rib, abd
}

func ExampleDetect() {
	rib, abd := exampleBands()
	// 30 cycles: the breath still in progress at the end is not counted.
	r, err := resp.Detect(rib, abd, resp.Options{RateHz: 25})
	if err != nil {
		fmt.Println(err)
		return
	}
	b := r.Breaths[5]
	fmt.Printf("%d breaths; breath 5: Ti %.1f s, Te %.1f s, %.0f/min, Vt %.2f AU (litres: %v)\n",
		len(r.Breaths), b.TiS, b.TeS, b.RatePerMin, b.VtAU, b.VtL)
	// Output: 29 breaths; breath 5: Ti 2.0 s, Te 2.0 s, 15/min, Vt 2.00 AU (litres: NaN)
}

func ExampleStream() {
	rib, abd := exampleBands()
	s, _ := resp.NewStream(resp.Options{RateHz: 25})
	var breaths []resp.Breath
	for i := 0; i < len(rib); i += 100 { // chunks of 4 s, as from a device
		j := min(i+100, len(rib))
		_ = s.Push(rib[i:j], abd[i:j])
		breaths, _, _ = s.Drain(breaths, nil, nil)
	}
	_ = s.Close()
	breaths, _, _ = s.Drain(breaths, nil, nil)
	fmt.Println(len(breaths), "breaths, the same as Detect")
	// Output: 29 breaths, the same as Detect
}

func ExampleQDCFromRises() {
	// Constant 500 mL breaths whose rib-cage share varies: the rib band reads
	// half its volume, the abdominal band all of its own (methods 5.1).
	var rc, ab []float64
	for i := 0; i <= 10; i++ {
		p := 0.3 + 0.04*float64(i)
		rc = append(rc, p*500/2)
		ab = append(ab, (1-p)*500)
	}
	q, err := resp.QDCFromRises(rc, ab, resp.QDCOptions{Selection: resp.SelectAll})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("K = %.3f from %d of %d breaths\n", q.K, q.Used, q.Total)
	// Output: K = 2.000 from 11 of 11 breaths
}

func ExampleDetectEvents() {
	// Two minutes of breathing (volume 0..1 AU from the trough), then 20 s
	// in which the sum stays at the trough while the bands keep moving in
	// antiphase (efforts against a closed airway), then recovery.
	const fs = 25.0
	var rib, abd []float64
	for i := 0; i < 200*fs; i++ {
		t := float64(i) / fs
		v := 0.5 * (1 + math.Sin(2*math.Pi*0.25*t)) // troughs at t = 3 + 4k s
		if t >= 119 && t < 139 {
			rib, abd = append(rib, -0.5*v), append(abd, 0.5*v)
			continue
		}
		rib, abd = append(rib, 0.4*v), append(abd, 0.6*v)
	}
	r, _ := resp.Detect(rib, abd, resp.Options{RateHz: fs})
	ev, _ := resp.DetectEvents(r, resp.EventOptions{})
	// The event runs from where the sum comes within 1 % of its amplitude of
	// the trough to where it leaves it: a little longer than the 20 s.
	for _, e := range ev {
		fmt.Printf("candidate %v %v from %.1f s for %.1f s\n", e.Class, e.Kind, e.Start, e.DurationS)
	}
	// Output: candidate obstructive apnea from 118.9 s for 20.2 s
}

func ExampleWindows() {
	rib, abd := exampleBands()
	// Absolute calibration: here the bands are taken to read litres.
	r, _ := resp.Detect(rib, abd, resp.Options{RateHz: 25, Calibration: resp.Calibration{RibWeight: 0.25, AbdWeight: 0.25, Litres: true}})
	g, _ := window.NewGrid(window.Spec{Length: time.Minute, Step: time.Minute, Anchor: window.AnchorStart}, time.Date(2026, 5, 16, 7, 0, 0, 0, time.UTC))
	ws, _ := resp.Windows(g, r, nil, 120, resp.SummaryOptions{})
	v, _ := ws[1].Value("ve_l_min")
	rate, _ := ws[1].Value("resp_rate_per_min")
	fmt.Printf("%s: %.1f breaths/min, ve_l_min %.1f\n", ws[1].Window.StartUTC.Format("15:04"), rate, v)
	// Output: 07:01: 15.0 breaths/min, ve_l_min 7.5
}

func ExamplePhaseLissajous() {
	// The rib cage leads the abdomen by 150 degrees: the loop width alone
	// says 30 or 150; the downward slope of the loop picks 150.
	var rc, ab []float64
	for i := 0; i < 100; i++ {
		w := 2 * math.Pi * float64(i) / 100
		rc = append(rc, math.Sin(w+150*math.Pi/180))
		ab = append(ab, math.Sin(w))
	}
	lis, _ := resp.PhaseLissajous(rc, ab)
	xc, _ := resp.PhaseXcorr(rc, ab, 25, 4)
	fmt.Printf("Lissajous %.0f deg, cross-correlation %.0f deg\n", lis, xc)
	// Output: Lissajous 150 deg, cross-correlation 150 deg
}

func ExampleEDR() {
	// R-peak amplitudes (mV) of a heart at 70 beats/min whose QRS grows and
	// shrinks with breathing at 12 breaths/min.
	var times, amp []float64
	for t := 0.5; t < 180; t += 60.0 / 70 {
		times = append(times, t)
		amp = append(amp, 1.2+0.1*math.Sin(2*math.Pi*0.2*t))
	}
	r, err := resp.EDR(times, amp, resp.EDROptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("ECG-derived breathing rate %.1f/min from %d beats\n", r.RatePerMin, r.Beats)
	// Output: ECG-derived breathing rate 12.0/min from 210 beats
}

func ExampleCalibrateAbsolute() {
	// Five breaths into a 0.8 L calibration bag: the band rises of each
	// (Breath.RibRise, AbdRise) and the bag volume. With fewer than
	// MinTwoWeightRefs breaths the QDC ratio K is kept and one factor fitted.
	refs := []resp.Reference{
		{RibRise: 0.50, AbdRise: 0.52, VolumeL: 0.8},
		{RibRise: 0.42, AbdRise: 0.61, VolumeL: 0.8},
		{RibRise: 0.58, AbdRise: 0.43, VolumeL: 0.8},
		{RibRise: 0.47, AbdRise: 0.55, VolumeL: 0.8},
		{RibRise: 0.53, AbdRise: 0.49, VolumeL: 0.8},
	}
	cal, err := resp.CalibrateAbsolute(1.1, refs)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s: %.3f L per rib unit, %.3f L per abdominal unit, residual %.3f L, volumes in %s\n",
		cal.Method, cal.RibWeight, cal.AbdWeight, cal.ResidualL, cal.VolumeUnit())
	// Output: qdc+volume: 0.822 L per rib unit, 0.748 L per abdominal unit, residual 0.002 L, volumes in L
}
