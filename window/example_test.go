package window_test

import (
	"fmt"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// Beats placed in 10-second windows every 5 seconds, anchored to the Unix
// epoch: the recording starts 2 s after a boundary, so the first window
// straddles the start and is marked invalid.
func ExampleGrid_Events() {
	start := time.Date(2026, 6, 1, 9, 0, 2, 0, time.UTC)
	g, err := window.NewGrid(window.Spec{Length: 10 * time.Second, Step: 5 * time.Second}, start)
	if err != nil {
		panic(err)
	}
	beats := []float64{0.4, 1.3, 2.2, 3.1, 4.0, 4.9, 5.8, 6.7, 7.6, 8.5, 9.4}
	seq, err := g.Events(beats, 10, nil)
	if err != nil {
		panic(err)
	}
	for w := range seq {
		fmt.Printf("%s  beats %2d  coverage %.1f  valid %v\n", w.EndUTC.Format("15:04:05"), w.Hi-w.Lo, w.Coverage, w.Valid)
	}
	// Output:
	// 09:00:05  beats  3  coverage 0.3  valid false
	// 09:00:10  beats  9  coverage 0.8  valid true
	// 09:00:15  beats  8  coverage 0.7  valid false
	// 09:00:20  beats  2  coverage 0.2  valid false
}

// A live sample stream: push chunks as they arrive and read each window as
// soon as it closes.
func ExampleStream() {
	g, _ := window.NewGrid(window.Spec{Length: 2 * time.Second, Step: 2 * time.Second, Anchor: window.AnchorStart}, time.Date(2026, 6, 1, 9, 0, 0, 0, time.UTC))
	s, _ := window.NewSampleStream[float64](g, 4, 0) // 4 Hz
	for chunk := 0; chunk < 3; chunk++ {
		_ = s.Push(1, 2, 3) // three samples per chunk
		for w, x := range s.Ready() {
			fmt.Printf("window ending %v s: %v\n", w.End, x)
		}
	}
	_ = s.Close()
	for w, x := range s.Ready() {
		fmt.Printf("after close, window ending %v s: %v (coverage %.2f)\n", w.End, x, w.Coverage)
	}
	// Output:
	// window ending 2 s: [1 2 3 1 2 3 1 2]
	// after close, window ending 4 s: [3] (coverage 0.12)
}
