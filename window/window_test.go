package window

import (
	"errors"
	"iter"
	"math"
	"testing"
	"time"
)

// The membership rule under test, start <= t < end, and epoch-aligned window
// ends are common practice (methods reference section 7: "a beat belongs to a
// window if its R time is inside [start, end)"; "align windows to absolute
// time"). Every expected value below is derived by hand from those rules.

var origin = time.Date(2026, 3, 14, 6, 0, 2, 0, time.UTC) // 2 s past a 5 s boundary

func mustGrid(t *testing.T, s Spec, o time.Time) Grid {
	t.Helper()
	g, err := NewGrid(s, o)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// collect returns a function draining a window sequence, so that
// collect(t)(g.Events(...)) checks the error and returns the windows.
func collect(t *testing.T) func(iter.Seq[Window], error) []Window {
	return func(seq iter.Seq[Window], err error) []Window {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		var ws []Window
		for w := range seq {
			ws = append(ws, w)
		}
		return ws
	}
}

func TestSpecValidate(t *testing.T) {
	cases := []struct {
		name string
		s    Spec
	}{
		{"zero length", Spec{Step: time.Second}},
		{"negative length", Spec{Length: -time.Second, Step: time.Second}},
		{"zero step", Spec{Length: time.Second}},
		{"step below 1 ms", Spec{Length: time.Second, Step: time.Microsecond}},
		{"absurd length", Spec{Length: 1000 * 24 * time.Hour, Step: time.Second}},
		{"absurd step", Spec{Length: time.Second, Step: 1000 * 24 * time.Hour}},
		{"NaN coverage", Spec{Length: time.Second, Step: time.Second, MinCoverage: math.NaN()}},
		{"coverage above 1", Spec{Length: time.Second, Step: time.Second, MinCoverage: 1.5}},
		{"negative coverage", Spec{Length: time.Second, Step: time.Second, MinCoverage: -0.1}},
		{"unknown anchor", Spec{Length: time.Second, Step: time.Second, Anchor: 7}},
	}
	for _, c := range cases {
		if err := c.s.Validate(); !errors.Is(err, ErrSpec) {
			t.Errorf("%s: err = %v, want ErrSpec", c.name, err)
		}
		if _, err := NewGrid(c.s, origin); !errors.Is(err, ErrSpec) {
			t.Errorf("%s: NewGrid err = %v, want ErrSpec", c.name, err)
		}
	}
	if err := (Spec{Length: 5 * time.Minute, Step: 30 * time.Second}).Validate(); err != nil {
		t.Errorf("ordinary spec rejected: %v", err)
	}
}

func TestEpochAnchorSharesBoundaries(t *testing.T) {
	s := Spec{Length: 10 * time.Second, Step: 5 * time.Second}
	a := mustGrid(t, s, origin)
	b := mustGrid(t, s, origin.Add(7300*time.Millisecond)) // a second recording starting later
	wa := collect(t)(a.Events(nil, 30, nil))
	wb := collect(t)(b.Events(nil, 30, nil))
	ends := map[int64]time.Time{}
	for _, w := range wa {
		ends[w.Seq] = w.EndUTC
		// Derived: every end is a whole multiple of 5 s since the Unix epoch.
		if w.EndUTC.UnixNano()%int64(5*time.Second) != 0 {
			t.Fatalf("window end %v not on the 5 s epoch grid", w.EndUTC)
		}
		if w.EndUTC.Sub(w.StartUTC) != 10*time.Second {
			t.Fatalf("window %v..%v is not 10 s long", w.StartUTC, w.EndUTC)
		}
	}
	shared := 0
	for _, w := range wb {
		if e, ok := ends[w.Seq]; ok {
			shared++
			if !e.Equal(w.EndUTC) {
				t.Fatalf("Seq %d ends at %v in one recording and %v in the other", w.Seq, e, w.EndUTC)
			}
		}
	}
	if shared == 0 {
		t.Fatal("overlapping recordings share no window")
	}
	// Derived: origin is 2 s past a boundary, so the first end is 3 s after it.
	if wa[0].End != 3 || wa[0].Start != -7 {
		t.Fatalf("first window [%v, %v), want [-7, 3)", wa[0].Start, wa[0].End)
	}
	if got, want := wa[0].Seq, origin.Add(3*time.Second).Unix()/5; got != want {
		t.Fatalf("first Seq %d, want %d (end time / step)", got, want)
	}
}

func TestAnchorStart(t *testing.T) {
	g := mustGrid(t, Spec{Length: 10 * time.Second, Step: 5 * time.Second, Anchor: AnchorStart}, origin)
	ws := collect(t)(g.Events(nil, 12, nil))
	// Derived: ends at 5, 10, 15, 20 s after the origin (windows overlapping [0, 12)).
	want := []float64{5, 10, 15, 20}
	if len(ws) != len(want) {
		t.Fatalf("%d windows, want %d", len(ws), len(want))
	}
	for i, w := range ws {
		if w.End != want[i] {
			t.Errorf("window %d ends at %v, want %v", i, w.End, want[i])
		}
	}
}

func TestEventMembershipAndCoverage(t *testing.T) {
	g := mustGrid(t, Spec{Length: 10 * time.Second, Step: 5 * time.Second, Anchor: AnchorStart}, origin)
	times := []float64{0, 1, 4.999, 5, 9.5, 10, 14}
	ws := collect(t)(g.Events(times, 17, []Interval{{Start: 11, End: 13}}))
	type want struct {
		start, end float64
		lo, hi     int
		cov        float64
		valid      bool
	}
	wants := []want{
		{-5, 5, 0, 3, 0.5, false},  // straddles the start: [0, 5) of 10 s covered
		{0, 10, 0, 5, 1, true},     // t = 5 is inside, t = 10 is the next window's
		{5, 15, 3, 7, 0.8, true},   // the 2 s gap removes 20 %
		{10, 20, 5, 7, 0.5, false}, // gap 2 s and extent ends at 17: 5 s of 10
		{15, 25, 7, 7, 0.2, false}, // empty window at the end, 2 s of extent
	}
	if len(ws) != len(wants) {
		t.Fatalf("%d windows, want %d: %+v", len(ws), len(wants), ws)
	}
	for i, w := range ws {
		x := wants[i]
		if w.Start != x.start || w.End != x.end || w.Lo != x.lo || w.Hi != x.hi || math.Abs(w.Coverage-x.cov) > 1e-12 || w.Valid != x.valid {
			t.Errorf("window %d = [%v,%v) items [%d,%d) cov %v valid %v; want %+v", i, w.Start, w.End, w.Lo, w.Hi, w.Coverage, w.Valid, x)
		}
		if !w.Valid && w.Reason == "" {
			t.Errorf("invalid window %d has no reason", i)
		}
	}
}

func TestStepLongerThanLength(t *testing.T) {
	g := mustGrid(t, Spec{Length: 2 * time.Second, Step: 5 * time.Second, Anchor: AnchorStart}, origin)
	times := []float64{0.5, 3.5, 4.5, 9}
	ws := collect(t)(g.Events(times, 12, nil))
	// Derived: windows [3,5), [8,10), [13,15) is beyond the extent; 0.5 falls in no window.
	if len(ws) != 2 || ws[0].Lo != 1 || ws[0].Hi != 3 || ws[1].Lo != 3 || ws[1].Hi != 4 {
		t.Fatalf("windows %+v", ws)
	}
}

func TestGapCoveringWholeWindows(t *testing.T) {
	g := mustGrid(t, Spec{Length: 5 * time.Second, Step: 5 * time.Second, Anchor: AnchorStart}, origin)
	ws := collect(t)(g.Samples(10, 0, 300, []Interval{{Start: 4, End: 21}}))
	if len(ws) != 6 {
		t.Fatalf("%d windows, want 6 (30 s of samples in 5 s windows)", len(ws))
	}
	for i, w := range ws {
		if w.Lo != 50*i || w.Hi != 50*(i+1) {
			t.Errorf("window %d samples [%d,%d), want [%d,%d)", i, w.Lo, w.Hi, 50*i, 50*(i+1))
		}
	}
	for _, i := range []int{1, 2, 3} {
		if ws[i].Coverage != 0 || ws[i].Valid {
			t.Errorf("window %d under the gap: coverage %v valid %v, want 0 and invalid", i, ws[i].Coverage, ws[i].Valid)
		}
	}
	if math.Abs(ws[0].Coverage-0.8) > 1e-12 || math.Abs(ws[4].Coverage-0.8) > 1e-12 {
		t.Errorf("edge coverages %v and %v, want 0.8", ws[0].Coverage, ws[4].Coverage)
	}
}

func TestSamplesBoundaryAndOffset(t *testing.T) {
	// A series at 4 Hz starting 0.1 s after the origin: samples at 0.1, 0.35, ...
	g := mustGrid(t, Spec{Length: time.Second, Step: time.Second, Anchor: AnchorStart}, origin)
	ws := collect(t)(g.Samples(4, 0.1, 8, nil))
	// Derived: [0,1) holds 0.1..0.85 (4 samples), [1,2) holds 1.1..1.85, and
	// the extent [0.1, 2.1) also touches [2,3).
	if len(ws) != 3 || ws[0].Lo != 0 || ws[0].Hi != 4 || ws[1].Lo != 4 || ws[1].Hi != 8 || ws[2].Lo != 8 || ws[2].Hi != 8 {
		t.Fatalf("windows %+v", ws)
	}
	if math.Abs(ws[0].Coverage-0.9) > 1e-12 || math.Abs(ws[2].Coverage-0.1) > 1e-12 {
		t.Fatalf("coverages %v, %v; want 0.9 and 0.1", ws[0].Coverage, ws[2].Coverage)
	}
}

func TestBadInput(t *testing.T) {
	g := mustGrid(t, Spec{Length: time.Second, Step: time.Second}, origin)
	if _, err := g.Events([]float64{1, 0.5}, 2, nil); !errors.Is(err, ErrOrder) {
		t.Errorf("unsorted events: %v, want ErrOrder", err)
	}
	if _, err := g.Events([]float64{math.NaN()}, 2, nil); !errors.Is(err, ErrInput) {
		t.Errorf("NaN event: %v, want ErrInput", err)
	}
	if _, err := g.Events([]float64{3}, 2, nil); !errors.Is(err, ErrInput) {
		t.Errorf("event past the extent: %v, want ErrInput", err)
	}
	if _, err := g.Events(nil, 2, []Interval{{Start: 1, End: math.Inf(1)}}); !errors.Is(err, ErrInput) {
		t.Errorf("infinite gap: %v, want ErrInput", err)
	}
	for _, r := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if _, err := g.Samples(r, 0, 10, nil); !errors.Is(err, ErrInput) {
			t.Errorf("rate %v: %v, want ErrInput", r, err)
		}
	}
	if _, err := (Grid{}).Events(nil, 1, nil); !errors.Is(err, ErrNotStarted) {
		t.Errorf("zero Grid: %v, want ErrNotStarted", err)
	}
	if _, err := NewGrid(Spec{Length: time.Second, Step: time.Second}, time.Date(1500, 1, 1, 0, 0, 0, 0, time.UTC)); !errors.Is(err, ErrSpec) {
		t.Errorf("origin in 1500: %v, want ErrSpec", err)
	}

	s, err := NewEventStream(g, func(x float64) float64 { return x })
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Push(2, 1); !errors.Is(err, ErrOrder) {
		t.Errorf("stream out of order: %v, want ErrOrder", err)
	}
	if err := s.Push(3); !errors.Is(err, ErrOrder) {
		t.Errorf("stream after failure: %v, want the first error", err)
	}
	s, _ = NewEventStream(g, func(x float64) float64 { return x })
	_ = s.Push(5)
	if err := s.Gap(Interval{Start: 4, End: 6}); !errors.Is(err, ErrOrder) {
		t.Errorf("gap behind pushed data: %v, want ErrOrder", err)
	}
	ss, _ := NewSampleStream[float64](g, 10, 0)
	if err := ss.Advance(3); !errors.Is(err, ErrInput) {
		t.Errorf("Advance on a sample stream: %v, want ErrInput", err)
	}
	ss, _ = NewSampleStream[float64](g, 10, 0)
	_ = ss.Close()
	if err := ss.Push(1); !errors.Is(err, ErrClosed) {
		t.Errorf("push after close: %v, want ErrClosed", err)
	}
}

func TestNormalizeGaps(t *testing.T) {
	got, err := NormalizeGaps([]Interval{{5, 6}, {1, 2}, {1.5, 3}, {3, 4}, {7, 7}})
	if err != nil {
		t.Fatal(err)
	}
	want := []Interval{{1, 4}, {5, 6}} // derived: overlapping and touching spans merge, empty ones carry no time
	if len(got) != len(want) || got[0] != want[0] || got[1] != want[1] {
		t.Fatalf("got %v, want %v", got, want)
	}
	if _, err := NormalizeGaps([]Interval{{2, 1}}); !errors.Is(err, ErrInput) {
		t.Fatalf("reversed gap: %v, want ErrInput", err)
	}
}

func TestInvalidRuns(t *testing.T) {
	x := []float64{1, math.NaN(), math.NaN(), 2, math.Inf(1), 3}
	got := InvalidRuns(nil, x, 2, 10)
	// Derived: at 2 Hz from t0 = 10 s, samples 1-2 span [10.5, 11.5) and sample 4 spans [12, 12.5).
	want := []Interval{{10.5, 11.5}, {12, 12.5}}
	if len(got) != 2 || got[0] != want[0] || got[1] != want[1] {
		t.Fatalf("got %v, want %v", got, want)
	}
}
