package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/parquet-go/parquet-go"
)

// TestCohort writes the simulated cohort and reads each partition back with
// parquet-go. Cadence during the run is checked against the simulator's
// schedule (internal/sim.AccelSimulate ground truth: 158, 166 and 174
// steps/min, usual easy-running cadences).
func TestCohort(t *testing.T) {
	dir := t.TempDir()
	var out bytes.Buffer
	if err := run(dir, nil, &out); err != nil {
		t.Fatal(err)
	}
	type row struct {
		T       float64  `parquet:"t_s"`
		Cadence *float64 `parquet:"cadence_spm,optional"`
		HR      *float64 `parquet:"mean_hr_bpm,optional"`
	}
	for i, want := range []float64{158, 166, 174} {
		name := []string{"runner01", "runner02", "runner03"}[i]
		rows, err := parquet.ReadFile[row](filepath.Join(dir, "record="+name, "part-0.parquet"))
		if err != nil {
			t.Fatal(err)
		}
		if len(rows) != 20 {
			t.Errorf("%s: %d rows, want 20", name, len(rows))
		}
		for _, r := range rows {
			if r.T > 270 && r.T <= 600 && (r.Cadence == nil || math.Abs(*r.Cadence-want) > 0.05*want) {
				t.Errorf("%s at %v s: cadence %v, simulator %v", name, r.T, r.Cadence, want)
			}
			// Simulated resting heart rate 64, 70, 76 beats/min.
			if hr := 64 + 6*float64(i); r.HR != nil && math.Abs(*r.HR-hr) > 1 {
				t.Errorf("%s at %v s: heart rate %v, simulator %v", name, r.T, *r.HR, hr)
			}
		}
	}
	if _, err := os.Stat(dir + ".meta.json"); err != nil {
		t.Error(err)
	}
}
