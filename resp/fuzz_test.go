package resp_test

import (
	"encoding/binary"
	"math"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

// FuzzDetect feeds arbitrary band samples (any float64 bit pattern: NaN,
// Inf, huge, denormal) through detection, events and windows: never a
// panic, and the stream in two chunks equals the batch (house rules).
func FuzzDetect(f *testing.F) {
	seed := func(vals ...float64) []byte {
		b := make([]byte, 8*len(vals))
		for i, v := range vals {
			binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
		}
		return b
	}
	var sine []float64
	for i := 0; i < 400; i++ {
		sine = append(sine, math.Sin(float64(i)/4), math.Cos(float64(i)/4))
	}
	f.Add(seed(sine...), uint16(100))
	f.Add(seed(math.NaN(), 1, math.Inf(1), -1, 1e308, -1e308, 5e-324, 0), uint16(3))
	f.Add(seed(0, 0, 0, 0, 0, 0), uint16(1))
	f.Fuzz(func(t *testing.T, data []byte, cut uint16) {
		n := len(data) / 16
		if n == 0 || n > 20000 {
			return
		}
		rib, abd := make([]float64, n), make([]float64, n)
		for i := 0; i < n; i++ {
			rib[i] = math.Float64frombits(binary.LittleEndian.Uint64(data[16*i:]))
			abd[i] = math.Float64frombits(binary.LittleEndian.Uint64(data[16*i+8:]))
		}
		opt := resp.Options{RateHz: 10}
		r, err := resp.Detect(rib, abd, opt)
		if err != nil {
			t.Fatalf("valid input rejected: %v", err)
		}
		if _, err := resp.DetectEvents(r, resp.EventOptions{}); err != nil {
			t.Fatal(err)
		}
		g, _ := window.NewGrid(window.Spec{Length: 30 * time.Second, Step: 10 * time.Second, Anchor: window.AnchorStart}, time.Unix(0, 0).UTC())
		if _, err := resp.Windows(g, r, nil, float64(n)/10, resp.SummaryOptions{}); err != nil {
			t.Fatalf("windows: %v", err)
		}
		s, _ := resp.NewStream(opt)
		k := min(int(cut), n)
		_ = s.Push(rib[:k], abd[:k])
		_ = s.Push(rib[k:], abd[k:])
		_ = s.Close()
		var got resp.Result
		got.Breaths, got.Pauses, got.Gaps = s.Drain(nil, nil, nil)
		got.Discarded, got.Calibration = s.Discarded(), s.Calibration()
		if d := cmp.Diff(r, got, cmpopts.EquateNaNs(), cmpopts.EquateEmpty()); d != "" {
			t.Fatalf("stream differs from batch:\n%s", d)
		}
	})
}
