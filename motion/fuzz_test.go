package motion_test

import (
	"encoding/binary"
	"math"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/tidalbeat/tidalbeat/motion"
	"github.com/tidalbeat/tidalbeat/window"
)

// FuzzPipeline feeds arbitrary samples (any float64 bit pattern: NaN, Inf,
// huge, subnormal) and rates through Derive, EpochsOf and ParseUnit: no
// panic, one Sample per input sample, and the batch and streaming drivers
// give the same epochs.
func FuzzPipeline(f *testing.F) {
	seed := make([]byte, 0, 24*64)
	for i := 0; i < 64; i++ {
		for _, v := range []float64{0, 1 + 0.3*math.Sin(float64(i)), 0} {
			seed = binary.LittleEndian.AppendUint64(seed, math.Float64bits(v))
		}
	}
	f.Add(seed, uint16(50), "g")
	f.Add([]byte{0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xf0, 0x7f}, uint16(10), "m/s2")
	f.Add(binary.LittleEndian.AppendUint64(nil, math.Float64bits(1e300)), uint16(500), "")
	f.Fuzz(func(t *testing.T, data []byte, rate uint16, unit string) {
		u, err := motion.ParseUnit(unit)
		if err != nil {
			u = motion.UnitG
		}
		n := len(data) / 24
		x, y, z := make([]float64, n), make([]float64, n), make([]float64, n)
		for i := 0; i < n; i++ {
			x[i] = math.Float64frombits(binary.LittleEndian.Uint64(data[24*i:]))
			y[i] = math.Float64frombits(binary.LittleEndian.Uint64(data[24*i+8:]))
			z[i] = math.Float64frombits(binary.LittleEndian.Uint64(data[24*i+16:]))
		}
		opts := motion.Options{Unit: u}
		tr, err := motion.Derive(x, y, z, float64(rate), opts)
		if err != nil {
			return // out-of-range rate: an error, not a panic
		}
		if len(tr.Samples) != n {
			t.Fatalf("%d samples for %d inputs", len(tr.Samples), n)
		}
		spec := window.Spec{Length: time.Second, Step: time.Second}
		a, err := motion.EpochsOf(tr, origin, spec, nil, opts)
		if err != nil {
			t.Fatal(err)
		}
		b, err := motion.Epochs(x, y, z, float64(rate), origin, spec, opts)
		if err != nil {
			t.Fatal(err)
		}
		if d := cmp.Diff(a, b, cmpopts.EquateNaNs()); d != "" {
			t.Fatalf("batch and stream epochs differ:\n%s", d)
		}
	})
}
