package hrv

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

var origin = time.Date(2026, 6, 1, 6, 0, 0, 0, time.UTC)

func sameFloat(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

// Stream and Windowed share one core: identical windows and values for any
// chunking of the same data (house rule: streaming equals batch).
func TestStreamEqualsBatch(t *testing.T) {
	nn, end := restingNN(7, 2200) // ~30 min
	corr := make([]bool, len(nn))
	for i := 5; i < len(corr); i += 97 {
		corr[i] = true
	}
	gaps := []window.Interval{{Start: 700, End: 760}}
	last := end[len(end)-1] + 0.5
	g, err := window.NewGrid(window.Spec{Length: 5 * time.Minute, Step: 30 * time.Second}, origin)
	if err != nil {
		t.Fatal(err)
	}
	opt := Options{Corrected: corr}
	seq, err := Windowed(g, end, nn, last, gaps, opt)
	if err != nil {
		t.Fatal(err)
	}
	type row struct {
		w window.Window
		v []float64
	}
	var batch []row
	for w, m := range seq {
		batch = append(batch, row{w, m.Values()})
	}
	if len(batch) < 50 {
		t.Fatalf("%d windows", len(batch))
	}
	rng := rand.New(rand.NewPCG(8, 8))
	for trial := 0; trial < 4; trial++ {
		s, err := NewStream(g, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var got []row
		drain := func() {
			for w, m := range s.Ready() {
				got = append(got, row{w, m.Values()})
			}
		}
		gapDone := false
		for i := 0; i < len(nn); {
			k := min(len(nn), i+1+rng.IntN(300))
			var items []Interval
			for j := i; j < k; j++ {
				if !gapDone && end[j] >= gaps[0].Start {
					if err := s.Push(items...); err != nil {
						t.Fatal(err)
					}
					items = items[:0]
					if err := s.Gap(gaps[0]); err != nil {
						t.Fatal(err)
					}
					gapDone = true
				}
				items = append(items, Interval{EndS: end[j], NNms: nn[j], Corrected: corr[j]})
			}
			if err := s.Push(items...); err != nil {
				t.Fatal(err)
			}
			drain()
			i = k
		}
		if err := s.Advance(last); err != nil {
			t.Fatal(err)
		}
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		drain()
		if len(got) != len(batch) {
			t.Fatalf("trial %d: stream %d windows, batch %d", trial, len(got), len(batch))
		}
		for i := range got {
			if got[i].w != batch[i].w {
				t.Fatalf("trial %d window %d: %+v vs %+v", trial, i, got[i].w, batch[i].w)
			}
			for c := range got[i].v {
				if !sameFloat(got[i].v[c], batch[i].v[c]) {
					t.Fatalf("trial %d window %d %s: stream %v batch %v", trial, i, Columns()[c], got[i].v[c], batch[i].v[c])
				}
			}
		}
	}
}

// An NN interval belongs to a window only if both its beats do (methods.md
// section 7): the interval that straddles the window start is left out, the
// one ending just before the window end is kept.
func TestWindowMembership(t *testing.T) {
	g, _ := window.NewGrid(window.Spec{Length: 10 * time.Second, Step: 10 * time.Second, Anchor: window.AnchorStart, MinCoverage: 0.1}, origin)
	// beats every 0.8 s starting at 0.5 s
	var beats []float64
	for b := 0.5; b < 40; b += 0.8 {
		beats = append(beats, b)
	}
	nn, end, err := NNFromBeats(beats, nil)
	if err != nil {
		t.Fatal(err)
	}
	seq, err := Windowed(g, end, nn, 40, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for w, m := range seq {
		want := 0
		for i := 1; i < len(beats); i++ {
			if beats[i-1] >= w.Start && beats[i] < w.End {
				want++
			}
		}
		if m.N != want {
			t.Errorf("window [%v, %v): %d intervals, want %d (both beats inside)", w.Start, w.End, m.N, want)
		}
	}
}

func TestNNFromBeats(t *testing.T) {
	beats := []float64{1, 1.8, 2.6, 3.1, 4.2, 5.0}
	normal := []bool{true, true, true, false, true, true}
	nn, end, err := NNFromBeats(beats, normal)
	if err != nil {
		t.Fatal(err)
	}
	if len(nn) != 3 || !near(nn[0], 800, 1e-9) || !near(nn[1], 800, 1e-9) || !near(nn[2], 800, 1e-9) || end[2] != 5.0 {
		t.Errorf("NN %v at %v, want 800 800 800 ending 1.8 2.6 5.0 (intervals touching the ectopic beat dropped)", nn, end)
	}
	if _, _, err := NNFromBeats([]float64{1, 1}, nil); !errors.Is(err, ErrInput) {
		t.Errorf("repeated beat: %v", err)
	}
	if _, _, err := NNFromBeats([]float64{1, 2}, []bool{true}); !errors.Is(err, ErrInput) {
		t.Errorf("flag length: %v", err)
	}
}

func TestWindowedBadInput(t *testing.T) {
	g, _ := window.NewGrid(window.Spec{Length: time.Minute, Step: time.Minute}, origin)
	if _, err := Windowed(g, []float64{1, 2}, []float64{800}, 10, nil, Options{}); !errors.Is(err, ErrInput) {
		t.Errorf("length mismatch: %v", err)
	}
	if _, err := Windowed(g, []float64{2, 1}, []float64{800, 800}, 10, nil, Options{}); !errors.Is(err, window.ErrOrder) {
		t.Errorf("order: %v", err)
	}
	s, _ := NewStream(g, Options{})
	if err := s.Push(Interval{EndS: 1, NNms: math.NaN()}); !errors.Is(err, ErrInput) {
		t.Errorf("stream NaN: %v", err)
	}
}
