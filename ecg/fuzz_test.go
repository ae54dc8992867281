package ecg_test

import (
	"encoding/binary"
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
)

// FuzzDetect feeds arbitrary samples (8 bytes each, any bit pattern: NaN,
// infinities, huge values) at a rate chosen from the first byte. The
// detector must not panic or hang, must return beats in order inside the
// signal and outside the gaps, and stream and batch must agree.
func FuzzDetect(f *testing.F) {
	f.Add([]byte{0})
	f.Add(make([]byte, 8*3000))
	seed := make([]byte, 1+8*2500)
	for i := 0; i < 2500; i++ {
		v := math.Sin(float64(i) / 7)
		if i%250 == 0 {
			v = 3
		}
		if i > 1200 && i < 1300 {
			v = math.NaN()
		}
		binary.LittleEndian.PutUint64(seed[1+8*i:], math.Float64bits(v))
	}
	f.Add(seed)
	f.Fuzz(func(t *testing.T, b []byte) {
		if len(b) == 0 {
			return
		}
		rate := float64(100 + int(b[0])*900/255)
		b = b[1:]
		x := make([]float64, len(b)/8)
		for i := range x {
			x[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
		}
		if len(x) == 0 {
			return
		}
		res, err := ecg.Detect(x, rate, ecg.Options{})
		if err != nil {
			t.Fatal(err)
		}
		for i, bt := range res.Beats {
			if bt.Sample < 0 || bt.Sample >= len(x) || (i > 0 && bt.Sample <= res.Beats[i-1].Sample) {
				t.Fatalf("beat %d at sample %d (n %d)", i, bt.Sample, len(x))
			}
			if v := x[bt.Sample]; math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("beat on invalid sample %d", bt.Sample)
			}
		}
		d, _ := ecg.NewDetector(rate, ecg.Options{})
		var got []ecg.Beat
		for p := 0; p < len(x); p += 97 {
			bs, _ := d.Push(x[p:min(p+97, len(x))])
			got = append(got, bs...)
		}
		bs, _ := d.Flush()
		got = append(got, bs...)
		if len(got) != len(res.Beats) {
			t.Fatalf("stream %d beats, batch %d", len(got), len(res.Beats))
		}
		for i := range got {
			if got[i].Sample != res.Beats[i].Sample {
				t.Fatalf("beat %d: stream %d batch %d", i, got[i].Sample, res.Beats[i].Sample)
			}
		}
		if _, err := ecg.DetectEnvelope(x, rate); err != nil {
			t.Fatal(err)
		}
		if _, err := ecg.WindowQuality(x, rate, ecg.BeatTimes(res.Beats), ecg.QualityOptions{}); err != nil {
			t.Fatal(err)
		}
	})
}
