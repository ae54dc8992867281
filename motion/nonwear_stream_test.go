package motion_test

import (
	"errors"
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// nwStreamRun feeds x, y, z to a NonWearStream in random chunks and returns
// the periods after Close.
func nwStreamRun(t *testing.T, x, y, z []float64, rate float64, o motion.NonWearOptions, seed uint64) []window.Interval {
	t.Helper()
	s, err := motion.NewNonWearStream(rate, motion.UnitG, o)
	if err != nil {
		t.Fatal(err)
	}
	rng := newRand(seed)
	for i := 0; i < len(x); {
		n := min(len(x)-i, 1+rng.IntN(20000))
		if err := s.Push(x[i:i+n], y[i:i+n], z[i:i+n]); err != nil {
			t.Fatal(err)
		}
		// Final never runs past the data pushed.
		if f := s.Final(); f > float64(i+n)/rate {
			t.Fatalf("final %v past pushed data %v s", f, float64(i+n)/rate)
		}
		i += n
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	if !math.IsInf(s.Final(), 1) {
		t.Errorf("final after close = %v, want +Inf", s.Final())
	}
	return append([]window.Interval(nil), s.Periods()...)
}

// Property (house rule: streaming equals batch): the stream's periods equal
// NonWear's for any chunking, for both rule variants (van Hees et al. 2013
// default and the 2011 variant; thresholds from memory, unverified), over
// alternating worn and still stretches with invalid samples.
func TestNonWearStreamMatchesBatch(t *testing.T) {
	const rate = 10.0
	rng := newRand(11)
	var x, y, z []float64
	for i := 0; i < 8*3600*10; i++ {
		tt := float64(i) / rate
		amp := 0.001
		if int(tt/5000)%2 == 1 {
			amp = 0.02
		}
		x, y, z = append(x, amp*rng.NormFloat64()), append(y, 1+amp*rng.NormFloat64()), append(z, amp*rng.NormFloat64())
		if i%9973 == 0 {
			y[i] = math.NaN()
		}
		if i > 100000 && i < 101000 {
			x[i] = math.Inf(1)
		}
	}
	for _, o := range []motion.NonWearOptions{{}, {WindowS: 1800, SDmg: 3, Either: true}, {WindowS: 1200, StepS: 300}} {
		want, err := motion.NonWear(x, y, z, rate, motion.UnitG, o)
		if err != nil {
			t.Fatal(err)
		}
		if len(want) == 0 {
			t.Fatalf("%+v: batch found no non-wear; the test data is wrong", o)
		}
		for seed := uint64(1); seed <= 4; seed++ {
			got := nwStreamRun(t, x, y, z, rate, o, seed)
			if len(got) != len(want) {
				t.Fatalf("%+v seed %d: stream %v, batch %v", o, seed, got, want)
			}
			for i := range want {
				if got[i] != want[i] {
					t.Errorf("%+v seed %d: period %d stream %v batch %v", o, seed, i, got[i], want[i])
				}
			}
		}
	}
}

// methods reference 6.6 derived checks through the stream (van Hees et al.
// 2011 and 2013 rules, thresholds from memory, unverified): a still device
// with 1 mg noise for 2 h is non-wear throughout (frac 1) under both
// variants; 50 mg movement on two axes is wear (frac 0).
func TestNonWearStreamDerivedChecks(t *testing.T) {
	const rate = 10.0
	rng := newRand(1)
	x, y, z := gen(rate, 7200, func(float64) (float64, float64, float64) {
		return 0.001 * rng.NormFloat64(), 1 + 0.001*rng.NormFloat64(), 0.001 * rng.NormFloat64()
	})
	for _, o := range []motion.NonWearOptions{{}, {WindowS: 1800, SDmg: 3, Either: true}} {
		p := nwStreamRun(t, x, y, z, rate, o, 2)
		if f := motion.NonWearFrac(p, 0, 7200); f != 1 {
			t.Errorf("%+v: still device frac %v (periods %v), want 1", o, f, p)
		}
	}
	x, y, z = gen(rate, 7200, func(t float64) (float64, float64, float64) {
		return 0.05 * math.Sin(0.5*t), 1 + 0.05*math.Sin(0.7*t), 0
	})
	p := nwStreamRun(t, x, y, z, rate, motion.NonWearOptions{}, 3)
	if f := motion.NonWearFrac(p, 0, 7200); f != 0 {
		t.Errorf("moving device: frac %v (periods %v), want 0", f, p)
	}
}

// NonWearFrac on hand-made periods (derived: interval arithmetic).
func TestNonWearFrac(t *testing.T) {
	p := []window.Interval{{Start: 10, End: 20}, {Start: 30, End: 40}}
	for _, c := range []struct{ s, e, want float64 }{
		{0, 10, 0}, {10, 20, 1}, {15, 35, 0.5}, {0, 40, 0.5}, {40, 50, 0},
	} {
		if got := motion.NonWearFrac(p, c.s, c.e); got != c.want {
			t.Errorf("frac [%v,%v) = %v, want %v", c.s, c.e, got, c.want)
		}
	}
	if got := motion.NonWearFrac(p, 5, 5); !math.IsNaN(got) {
		t.Errorf("empty span: %v, want NaN", got)
	}
}

func TestNonWearStreamErrors(t *testing.T) {
	if _, err := motion.NewNonWearStream(10, motion.UnitG, motion.NonWearOptions{WindowS: 1000, StepS: 300}); !errors.Is(err, motion.ErrOptions) {
		t.Errorf("untiled window: %v, want ErrOptions", err)
	}
	if _, err := motion.NewNonWearStream(1, motion.UnitG, motion.NonWearOptions{}); !errors.Is(err, motion.ErrInput) {
		t.Errorf("rate 1 Hz: %v, want ErrInput", err)
	}
	s, err := motion.NewNonWearStream(10, motion.UnitG, motion.NonWearOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Push([]float64{1}, []float64{1}, nil); !errors.Is(err, motion.ErrInput) {
		t.Errorf("unequal axes: %v, want ErrInput", err)
	}
	s, _ = motion.NewNonWearStream(10, motion.UnitG, motion.NonWearOptions{})
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	if len(s.Periods()) != 0 {
		t.Errorf("empty stream periods %v", s.Periods())
	}
	if err := s.Push([]float64{1}, []float64{1}, []float64{1}); !errors.Is(err, window.ErrClosed) {
		t.Errorf("push after close: %v, want ErrClosed", err)
	}
}

// trailingFracs feeds the samples in random chunks and, after each chunk,
// reads TrailingFrac for every 30-s span that Decided covers and that was
// not read before; it returns all of them (the live reading).
func trailingFracs(t *testing.T, x, y, z []float64, rate float64, o motion.NonWearOptions, seed uint64) []float64 {
	t.Helper()
	s, err := motion.NewNonWearStream(rate, motion.UnitG, o)
	if err != nil {
		t.Fatal(err)
	}
	rng := newRand(seed)
	dur := float64(len(x)) / rate
	var out []float64
	read := func() {
		for e := 30 * float64(len(out)+1); e <= dur && e <= s.Decided(); e += 30 {
			out = append(out, s.TrailingFrac(e-30, e))
			s.Forget(e - 30)
		}
	}
	for i := 0; i < len(x); {
		n := min(len(x)-i, 1+rng.IntN(30000))
		if err := s.Push(x[i:i+n], y[i:i+n], z[i:i+n]); err != nil {
			t.Fatal(err)
		}
		if d := s.Decided(); d > float64(i+n)/rate+o.StepS+900 {
			t.Fatalf("decided to %v s with only %v s pushed", d, float64(i+n)/rate)
		}
		i += n
		read()
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	read()
	return out
}

// The live reading is the same for any chunking (house rule), and on the
// methods reference 6.6 derived cases (van Hees et al. 2013 default and the
// 2011 variant; thresholds from memory, unverified) it reads 1 once a whole
// still window has passed (onset lag: one window plus up to one step,
// derived from the window layout) and 0 throughout 50 mg two-axis movement.
func TestNonWearTrailingFrac(t *testing.T) {
	const rate = 10.0
	rng := newRand(5)
	// 1 h worn (50 mg on two axes), 2.5 h still (1 mg noise), 1 h worn.
	x, y, z := gen(rate, 4.5*3600, func(tt float64) (float64, float64, float64) {
		if tt >= 3600 && tt < 3.5*3600 {
			return 0.001 * rng.NormFloat64(), 1 + 0.001*rng.NormFloat64(), 0.001 * rng.NormFloat64()
		}
		return 0.05 * math.Sin(0.5*tt), 1 + 0.05*math.Sin(0.7*tt), 0
	})
	for _, o := range []motion.NonWearOptions{{WindowS: 3600, StepS: 900}, {WindowS: 1800, StepS: 900, SDmg: 3, Either: true}} {
		want := trailingFracs(t, x, y, z, rate, o, 1)
		if len(want) != 540 {
			t.Fatalf("%+v: %d spans read, want 540", o, len(want))
		}
		for seed := uint64(2); seed <= 4; seed++ {
			got := trailingFracs(t, x, y, z, rate, o, seed)
			for i := range want {
				if got[i] != want[i] {
					t.Fatalf("%+v seed %d: span %d live %v, other chunking %v", o, seed, i, got[i], want[i])
				}
			}
		}
		var on, off int
		for i, f := range want {
			s := 30 * float64(i)
			switch {
			case s+30 <= 3600+o.StepS, s >= 3.5*3600+o.StepS:
				on++
				if f != 0 {
					t.Errorf("%+v: worn span at %v s reads %v, want 0", o, s, f)
				}
			case s >= 3600+o.WindowS+o.StepS && s+30 <= 3.5*3600:
				off++
				if f != 1 {
					t.Errorf("%+v: still span at %v s reads %v, want 1", o, s, f)
				}
			}
		}
		if on < 200 || off < 100 {
			t.Errorf("%+v: only %d worn and %d still spans checked", o, on, off)
		}
	}
}
