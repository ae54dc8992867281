package features

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// TestRecord100DetectedVsReference compares the HRV table from detected
// beats (ecg detection and NN cleaning on lead MLII) with the table from
// the record's reference beat annotations (MIT-BIH Arrhythmia Database,
// record 100, normal-to-normal pairs only), window by window. The
// reference is the cardiologists' annotation; the tolerances allow for
// R-peak timing at 360 Hz and for the 34 ectopic beats being interpolated
// by cleaning rather than skipped (see the RMSSD tolerance below).
func TestRecord100DetectedVsReference(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec, err := recording.OpenWith(strings.TrimSuffix(hea, ".hea"), recording.Options{Annotators: []string{"atr"}})
	if err != nil {
		t.Fatal(err)
	}
	det, err := Extract(rec, Config{Families: []string{FamilyHRV}})
	if err != nil {
		t.Fatal(err)
	}
	ref, err := Extract(rec, Config{Families: []string{FamilyHRV}, BeatsAnnotator: "atr"})
	if err != nil {
		t.Fatal(err)
	}
	if len(det.Rows) != len(ref.Rows) {
		t.Fatalf("%d and %d rows", len(det.Rows), len(ref.Rows))
	}
	dh, rh := det.Float("mean_hr_bpm"), ref.Float("mean_hr_bpm")
	dr, rr := det.Float("rmssd_ms"), ref.Float("rmssd_ms")
	db, rb := det.Float("hrv_n_beats"), ref.Float("hrv_n_beats")
	ect := det.Float("hrv_n_ectopic")
	n := 0
	for i := range det.Rows {
		if math.IsNaN(dh[i]) || math.IsNaN(rh[i]) {
			continue
		}
		if math.Abs(dh[i]-rh[i]) > 0.5 {
			t.Errorf("row %d: mean HR %.2f detected, %.2f reference", i, dh[i], rh[i])
		}
		// Where cleaning interpolated many intervals (the atrial premature
		// beats after 1300 s) the interpolated series is smoother than the
		// reference's N-N pairs, so RMSSD reads lower: 12 % there, 5 %
		// where at most two intervals were corrected.
		tol := 0.05
		if ect[i] > 2 {
			tol = 0.12
		}
		if math.Abs(dr[i]-rr[i]) > tol*rr[i] {
			t.Errorf("row %d: RMSSD %.2f ms detected, %.2f reference (%v intervals corrected)", i, dr[i], rr[i], ect[i])
		}
		if math.Abs(db[i]-rb[i]) > 2 {
			t.Errorf("row %d: %v beats detected, %v annotated", i, db[i], rb[i])
		}
		n++
	}
	if n < 45 {
		t.Errorf("only %d windows compared", n)
	}
}

// TestRecord100StreamEqualsBatch streams MIT-BIH record 100 (both leads,
// real noise and ectopic beats) in random chunks and requires the batch
// rows exactly.
func TestRecord100StreamEqualsBatch(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec, err := recording.Open(strings.TrimSuffix(hea, ".hea"))
	if err != nil {
		t.Fatal(err)
	}
	want, err := Extract(rec, Config{})
	if err != nil {
		t.Fatal(err)
	}
	for trial := range 2 {
		rng := rand.New(rand.NewPCG(uint64(trial), 100))
		rowsEqual(t, want.Rows, streamRows(t, rec, Config{}, rng, []float64{0.5, 20}[trial]))
	}
}
