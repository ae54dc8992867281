package report_test

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/features/report"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// Record 100 of the MIT-BIH Arrhythmia Database (PhysioNet): 2273 reference
// beats in 30:05 of two leads, no accelerometer, no bands. The report must
// detect about that many beats on the ECG, draw them, and say that the
// other modalities are missing.
func TestAnalyzeRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec, err := recording.Open(hea)
	if err != nil {
		t.Fatal(err)
	}
	a, err := report.Analyze(rec, report.Options{})
	if err != nil {
		t.Fatal(err)
	}
	// 2273 beats: MIT-BIH Arrhythmia Database directory, record 100; the
	// detector's own test asserts sensitivity and predictivity >= 99.9 %,
	// so allow 0.2 % here.
	if n := len(a.RPeaksS); math.Abs(float64(n)-2273) > 0.002*2273 {
		t.Errorf("%d R-peaks, want 2273 +- 0.2 %%", n)
	}
	// Mean heart rate over the record: 2273 beats in 1805.6 s is 75.5
	// beats/min (derived from the database directory's counts).
	if hr := a.MeanHR(0, rec.Duration()); math.Abs(hr-75.5) > 1 {
		t.Errorf("mean HR %.2f beats/min, want 75.5 +- 1", hr)
	}
	miss := strings.Join(a.Missing, ";")
	if !strings.Contains(miss, "activity:") || !strings.Contains(miss, "breathing:") {
		t.Errorf("missing activity and breathing not reported: %v", a.Missing)
	}
	if a.Table == nil || len(a.Table.Rows) < 60 { // 30 min at one row per 30 s
		t.Errorf("feature table missing or short")
	}
	var buf bytes.Buffer
	if err := report.Write(&buf, a.Input); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), `id="fig-tachogram"`) {
		t.Error("no tachogram")
	}
}
