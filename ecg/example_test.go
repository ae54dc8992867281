package ecg_test

import (
	"fmt"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// Detect finds the R-peaks of a simulated minute at 72 beats/min, 250 Hz,
// with one ventricular premature beat.
func ExampleDetect() {
	s, _ := sim.ECGSimulate(sim.ECGConfig{RateHz: 250, DurationS: 60, MeanHR: 72, NoisemV: 0.02, Seed: 1,
		Ectopics: []sim.ECGEctopic{{AtS: 30, Kind: 'V'}}})
	res, err := ecg.Detect(s.Samples, 250, ecg.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d beats simulated, %d detected\n", len(s.Beats), len(res.Beats))
	fmt.Printf("first R-peak at %.3f s, amplitude %.1f mV\n", res.Beats[0].Time, res.Beats[0].AmplitudemV)
	truth := make([]float64, len(s.Beats))
	for i, b := range s.Beats {
		truth[i] = b.TimeS
	}
	sc, _ := ecg.MatchBeats(truth, ecg.BeatTimes(res.Beats), 0)
	fmt.Printf("Se %.1f %%, +P %.1f %%\n", 100*sc.Sensitivity(), 100*sc.PositivePredictivity())
	// Output:
	// 72 beats simulated, 72 detected
	// first R-peak at 0.400 s, amplitude 1.3 mV
	// Se 100.0 %, +P 100.0 %
}

// CleanRR splits an interval at a missed beat and merges two at an extra
// detection, counting both.
func ExampleCleanRR() {
	var rr []float64
	for i := 0; i < 120; i++ {
		rr = append(rr, 800+float64(i%4)*10) // a gently varying rhythm, ms
	}
	rr[40] = 1620                                                    // a missed beat: two intervals seen as one
	rr = append(rr[:80], append([]float64{330, 490}, rr[81:]...)...) // an extra detection
	t := []float64{0}
	for _, v := range rr {
		t = append(t, t[len(t)-1]+v/1000)
	}
	nn, err := ecg.CleanRR(t, nil, ecg.NNOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d RR in, %d NN out\n", nn.Counts.Intervals, len(nn.Ms))
	fmt.Printf("missed %d, extra %d, ectopic %d\n", nn.Counts.Missed, nn.Counts.Extra, nn.Counts.Ectopic)
	fmt.Printf("corrected fraction %.3f\n", nn.CorrectedFraction(0, len(nn.Ms)))
	// Output:
	// 121 RR in, 121 NN out
	// missed 1, extra 1, ectopic 0
	// corrected fraction 0.025
}
