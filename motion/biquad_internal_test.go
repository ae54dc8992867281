package motion

import (
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/dsp"
)

// The unrolled pair must filter exactly like the shared dsp.Filter (same
// TDF-II arithmetic), from zero and from steady state.
func TestPairMatchesDSP(t *testing.T) {
	c, err := dsp.ButterBandpass(2, 0.29, 1.66, 50)
	if err != nil {
		t.Fatal(err)
	}
	p, _ := newPair(c)
	f := c.NewFilter()
	p.reset(1.3)
	f.Reset(1.3)
	for i := 0; i < 2000; i++ {
		x := 1 + 0.5*math.Sin(float64(i)*0.37) + 0.1*math.Cos(float64(i)*2.1)
		if a, b := p.step(x), f.Step(x); a != b {
			t.Fatalf("sample %d: pair %v, dsp %v", i, a, b)
		}
	}
	if _, err := newPair(c[:1]); err == nil {
		t.Error("one-section cascade accepted")
	}
}
