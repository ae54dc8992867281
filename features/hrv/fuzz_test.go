package hrv

import (
	"math"
	"slices"
	"testing"
)

// FuzzCompute: any interval series gives Metrics without a panic, one value
// per column, and a reason for every NaN (house rule: bad input is a clear
// error or a flagged result).
func FuzzCompute(f *testing.F) {
	f.Add([]byte{200, 3, 210, 3, 190, 3, 205, 3}, uint8(0))
	f.Add([]byte{0, 0, 255, 255, 1, 0}, uint8(1))
	f.Add([]byte{100, 3, 100, 3, 100, 3, 100, 3, 100, 3}, uint8(2))
	f.Fuzz(func(t *testing.T, data []byte, mode uint8) {
		var nn []float64
		for i := 0; i+1 < len(data); i += 2 {
			v := float64(int(data[i]) | int(data[i+1])<<8)
			if mode%4 == 3 && i == 2 {
				v = math.NaN()
			}
			nn = append(nn, v)
		}
		opt := Options{Spectrum: SpectrumOptions{Estimator: Estimator(mode % 3)}}
		if mode&4 != 0 {
			opt.WindowS = 5
		}
		m := Compute(nn, nil, opt)
		if len(m.Values()) != len(Columns()) {
			t.Fatalf("%d values", len(m.Values()))
		}
		for i, v := range m.Values() {
			if math.IsNaN(v) && m.Reasons[Columns()[i]] == "" {
				t.Fatalf("%s NaN without reason", Columns()[i])
			}
		}
	})
}

// FuzzSampleEntropyExact: the pruned counts equal the direct definition
// (Richman and Moorman 2000) for any series, m and r.
func FuzzSampleEntropyExact(f *testing.F) {
	f.Add([]byte{1, 2, 3, 1, 2, 3, 1, 2, 4, 1, 2, 3}, uint8(2), uint8(1))
	f.Add([]byte{10, 10, 10, 10, 10, 10}, uint8(2), uint8(0))
	f.Add([]byte{0, 255, 0, 255, 128, 127, 129, 0, 1, 2}, uint8(3), uint8(9))
	f.Fuzz(func(t *testing.T, data []byte, m, r uint8) {
		if len(data) > 400 {
			data = data[:400]
		}
		x := make([]float64, len(data))
		for i, b := range data {
			x[i] = float64(b) * 0.37
		}
		mm := 1 + int(m%4)
		rr := float64(r) * 0.37
		a, b, err := SampleEntropyCounts(x, mm, rr)
		if err != nil {
			return
		}
		wa, wb := sampEnDirect(x, mm, rr)
		if a != wa || b != wb {
			t.Fatalf("m=%d r=%v: A=%d B=%d, direct %d %d", mm, rr, a, b, wa, wb)
		}
		// ApEn's per-template counts: grid and sorted scan agree exactly.
		n := len(x) - mm + 1
		if g, ok := phiCountsGrid(x, n, mm, rr); ok {
			s := phiCountsSorted(x, n, mm, rr)
			slices.Sort(g)
			slices.Sort(s)
			if !slices.Equal(g, s) {
				t.Fatalf("m=%d r=%v: ApEn counts differ", mm, rr)
			}
		}
	})
}
