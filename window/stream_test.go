package window

import (
	"math/rand/v2"
	"sort"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
)

// randomGrid draws a spec whose step may be shorter than, equal to or longer
// than its length, on an origin at an arbitrary nanosecond.
func randomGrid(t *testing.T, r *rand.Rand) Grid {
	length := time.Duration(1+r.IntN(20000)) * time.Millisecond
	var step time.Duration
	switch r.IntN(3) {
	case 0:
		step = length
	case 1:
		step = time.Duration(1+r.IntN(int(length/time.Millisecond))) * time.Millisecond
	default:
		step = length + time.Duration(r.IntN(10000))*time.Millisecond
	}
	o := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC).Add(time.Duration(r.Int64N(int64(48 * time.Hour))))
	s := Spec{Length: length, Step: step, Anchor: Anchor(r.IntN(2)), MinCoverage: []float64{0, 0.5, 1}[r.IntN(3)]}
	return mustGrid(t, s, o)
}

// randomGaps draws sorted, possibly touching gaps over [lo, hi).
func randomGaps(r *rand.Rand, lo, hi float64) []Interval {
	var gaps []Interval
	t := lo - r.Float64()*2
	for r.IntN(4) != 0 {
		t += r.ExpFloat64() * (hi - lo) / 5
		d := r.ExpFloat64() * (hi - lo) / 10
		if r.IntN(8) == 0 {
			d = 0 // empty gaps are legal and cover nothing
		}
		gaps = append(gaps, Interval{Start: t, End: t + d})
		t += d
		if r.IntN(5) == 0 {
			t -= d / 2 // overlapping gaps are merged by both drivers
		}
	}
	sort.Slice(gaps, func(i, j int) bool { return gaps[i].Start < gaps[j].Start })
	return gaps
}

// The property of the design (one core, two drivers): for the same data the
// stream and the batch iterator give identical windows and contents for any
// chunking and gap pattern. The oracle is the batch driver itself.
func TestEventStreamEqualsBatch(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 400; trial++ {
		g := randomGrid(t, r)
		n := r.IntN(300)
		span := 1 + r.Float64()*120
		times := make([]float64, n)
		for i := range times {
			times[i] = r.Float64() * span
			if i > 0 && r.IntN(10) == 0 {
				times[i] = times[i-1] // simultaneous events
			}
		}
		sort.Float64s(times)
		end := span + r.Float64()*5
		gaps := randomGaps(r, 0, end)

		var want []Window
		var wantItems [][]float64
		seq, err := g.Events(times, end, gaps)
		if err != nil {
			t.Fatal(err)
		}
		for w := range seq {
			want = append(want, w)
			wantItems = append(wantItems, times[w.Lo:w.Hi])
		}

		s, err := NewEventStream(g, func(x float64) float64 { return x })
		if err != nil {
			t.Fatal(err)
		}
		var got []Window
		var gotItems [][]float64
		drain := func() {
			for w, items := range s.Ready() {
				got = append(got, w)
				gotItems = append(gotItems, append([]float64(nil), items...))
			}
		}
		gi := 0
		for i := 0; i < n; {
			m := 1 + r.IntN(40)
			if i+m > n {
				m = n - i
			}
			chunk := times[i : i+m]
			for gi < len(gaps) && gaps[gi].Start <= chunk[m-1] {
				if err := s.Gap(gaps[gi]); err != nil {
					t.Fatalf("trial %d: %v", trial, err)
				}
				gi++
			}
			if err := s.Push(chunk...); err != nil {
				t.Fatalf("trial %d: %v", trial, err)
			}
			if r.IntN(3) != 0 {
				drain()
			}
			i += m
		}
		for ; gi < len(gaps); gi++ {
			if err := s.Gap(gaps[gi]); err != nil {
				t.Fatalf("trial %d: %v", trial, err)
			}
		}
		if err := s.Advance(end); err != nil {
			t.Fatal(err)
		}
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		drain()
		if d := cmp.Diff(want, got); d != "" {
			t.Fatalf("trial %d (spec %+v): stream differs from batch (-batch +stream):\n%s", trial, g.Spec(), d)
		}
		if d := cmp.Diff(wantItems, gotItems, cmpopts.EquateEmpty()); d != "" {
			t.Fatalf("trial %d: window contents differ:\n%s", trial, d)
		}
	}
}

func TestSampleStreamEqualsBatch(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 300; trial++ {
		g := randomGrid(t, r)
		rate := []float64{1, 4, 25, 50, 128, 250, 360, 7.3}[r.IntN(8)]
		t0 := r.Float64()*10 - 5
		n := r.IntN(int(rate*60) + 1)
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(i)
		}
		end := t0 + float64(n)/rate
		gaps := randomGaps(r, t0, end)

		var want []Window
		seq, err := g.Samples(rate, t0, n, gaps)
		if err != nil {
			t.Fatal(err)
		}
		for w := range seq {
			want = append(want, w)
		}
		s, err := NewSampleStream[float64](g, rate, t0)
		if err != nil {
			t.Fatal(err)
		}
		var got []Window
		check := func() {
			for w, items := range s.Ready() {
				got = append(got, w)
				if len(items) != w.Hi-w.Lo || (len(items) > 0 && (items[0] != x[w.Lo] || items[len(items)-1] != x[w.Hi-1])) {
					t.Fatalf("trial %d: window %d holds %d items not samples [%d,%d)", trial, w.Seq, len(items), w.Lo, w.Hi)
				}
			}
		}
		gi := 0
		for i := 0; i < n; {
			m := 1 + r.IntN(int(rate*10)+1)
			if i+m > n {
				m = n - i
			}
			next := t0 + float64(i+m)/rate
			for gi < len(gaps) && gaps[gi].Start < next {
				if err := s.Gap(gaps[gi]); err != nil {
					t.Fatalf("trial %d: %v", trial, err)
				}
				gi++
			}
			if err := s.Push(x[i : i+m]...); err != nil {
				t.Fatal(err)
			}
			if r.IntN(2) == 0 {
				check()
			}
			i += m
		}
		for ; gi < len(gaps); gi++ {
			if err := s.Gap(gaps[gi]); err != nil {
				t.Fatalf("trial %d: %v", trial, err)
			}
		}
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		check()
		if d := cmp.Diff(want, got); d != "" {
			t.Fatalf("trial %d (rate %v, n %d, spec %+v): stream differs from batch (-batch +stream):\n%s", trial, rate, n, g.Spec(), d)
		}
	}
}

// Streaming memory is bounded by the window length: after a long stream the
// buffer holds no more than one window of samples plus the compaction slack
// (a factor of two, by the design of trim).
func TestSampleStreamBufferBounded(t *testing.T) {
	g := mustGrid(t, Spec{Length: 10 * time.Second, Step: 2 * time.Second}, origin)
	const rate = 100.0
	s, _ := NewSampleStream[float64](g, rate, 0)
	chunk := make([]float64, 37)
	maxBuf := 0
	for i := 0; i < 30000; i++ {
		if err := s.Push(chunk...); err != nil {
			t.Fatal(err)
		}
		for range s.Ready() {
		}
		maxBuf = max(maxBuf, len(s.buf))
	}
	// Derived: one window is 1000 samples; a window opens every 200 samples.
	if limit := 2*(1000+200) + 2*len(chunk); maxBuf > limit {
		t.Fatalf("buffer grew to %d samples, bound %d", maxBuf, limit)
	}
	if maxBuf < 1000 {
		t.Fatalf("buffer only %d samples: windows cannot have been complete", maxBuf)
	}
}
