package ecg_test

import (
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// nstdbSNR reads the signal-to-noise ratio from a MIT-BIH Noise Stress Test
// Database record name: 118e24 is 24 dB, 119e_6 is -6 dB (the database's
// naming, from memory).
var nstdbSNR = regexp.MustCompile(`e(_?)(\d{1,2})$`)

// TestNSTDBDirectory scores every record with .atr reference annotations in
// the directory named by TIDALBEAT_NSTDB (the MIT-BIH Noise Stress Test
// Database: records 118 and 119 with calibrated electrode-motion noise added
// from the fifth minute on). Beats of the first 300 s are left out, the
// learning period of ANSI/AAMI EC57 as usually quoted (from memory). For the
// records at 12 dB and above, gross Se and +P must each reach 95 %: our own
// floor, below the >= 98 % that record 100 reaches with simulated motion
// bursts at 12 dB (TestRobustness), because the database's real electrode
// motion is harder; it is not a published figure. Lower SNRs are scored and
// logged; record-by-record numbers are printed with -v.
func TestNSTDBDirectory(t *testing.T) {
	dir := refdata.EnvDir(t, refdata.NSTDBEnv, "MIT-BIH Noise Stress Test Database records (118e24 ... 119e_6 with .atr)")
	heas, _ := filepath.Glob(filepath.Join(dir, "*.hea"))
	sort.Strings(heas)
	var high []ecg.Score
	scored := 0
	for _, h := range heas {
		base := strings.TrimSuffix(h, ".hea")
		m := nstdbSNR.FindStringSubmatch(filepath.Base(base))
		if m == nil {
			continue // the noise-only records (bw, em, ma) carry no beats
		}
		if _, err := os.Stat(base + ".atr"); err != nil {
			continue
		}
		snr, _ := strconv.Atoi(m[2])
		if m[1] == "_" {
			snr = -snr
		}
		rec, err := recording.Open(h)
		if err != nil {
			t.Errorf("%s: %v", h, err)
			continue
		}
		if len(rec.Channels) == 0 {
			continue
		}
		ch := &rec.Channels[0]
		var ref []float64
		for _, a := range rec.Annotations {
			if a.IsBeat() && a.Time >= 300 {
				ref = append(ref, a.Time)
			}
		}
		res, err := ecg.Detect(ch.Samples, ch.RateHz, ecg.Options{})
		if err != nil {
			t.Errorf("%s: %v", h, err)
			continue
		}
		var test []float64
		for _, b := range res.Beats {
			if b.Time >= 300 {
				test = append(test, b.Time)
			}
		}
		s, err := ecg.MatchBeats(ref, test, 0)
		if err != nil {
			t.Fatal(err)
		}
		s.Record = rec.Name
		scored++
		t.Logf("%-7s %3d dB  TP %5d FN %4d FP %4d  Se %.4f +P %.4f", rec.Name, snr, s.TP, s.FN, s.FP, s.Sensitivity(), s.PositivePredictivity())
		if snr >= 12 {
			high = append(high, s)
		}
	}
	if scored == 0 {
		t.Fatalf("%s=%s holds no noise-stress record (NNNeSS with .atr)", refdata.NSTDBEnv, dir)
	}
	if len(high) > 0 {
		g := ecg.Summarize(high)
		t.Logf("gross at >= 12 dB over %d records: %+v", len(high), g)
		if se, pp := g.GrossSe, g.GrossPP; se < 0.95 || pp < 0.95 {
			t.Errorf("gross Se %.4f, +P %.4f at >= 12 dB: floor 0.95 each", se, pp)
		}
	}
}
