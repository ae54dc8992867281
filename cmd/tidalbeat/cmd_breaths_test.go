package main

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
)

// breathRecordCSV writes a simulated two-band record (six minutes at 25 Hz
// with an obstructive apnea) as CSV and returns its path and truth.
func breathRecordCSV(t *testing.T, dir string) (string, *sim.BreathRecording) {
	t.Helper()
	rec, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 25, Seed: 4, Segments: []sim.BreathSegment{
		{DurationS: 200, RatePerMin: 12, TidalL: 0.5, RibShareSD: 0.15, TidalCV: 0.03},
		{Kind: sim.BreathObstructiveApnea, DurationS: 20},
		{DurationS: 140},
	}})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("time_s,rib,abdomen\n")
	for i := range rec.Rib {
		fmt.Fprintf(&b, "%.2f,%.6f,%.6f\n", float64(i)/25, rec.Rib[i], rec.Abd[i])
	}
	p := filepath.Join(dir, "bands.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p, rec
}

func TestBreathsCommand(t *testing.T) {
	dir := t.TempDir()
	path, truth := breathRecordCSV(t, dir)
	evPath := filepath.Join(dir, "bands.resp")
	var out, errb bytes.Buffer
	if code := run([]string{"breaths", path, "-events", evPath, "-qdc", "180"}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	rows, err := csv.NewReader(&out).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(rows[0], ",") != strings.Join(breathColumns, ",") {
		t.Fatalf("header %v", rows[0])
	}
	// Volumes carry their unit; without reference volumes never litres.
	for _, c := range rows[0] {
		if strings.HasSuffix(c, "_l") || strings.Contains(c, "_l_") {
			t.Errorf("column %q claims litres", c)
		}
	}
	// One row per breath: the simulator's ground truth count within 3 %.
	n := len(rows) - 1
	if math.Abs(float64(n-len(truth.Breaths))) > 0.03*float64(len(truth.Breaths)) {
		t.Errorf("%d breath rows, simulator truth %d", n, len(truth.Breaths))
	}
	// Times in seconds from the record start: the first onset near the
	// truth's second breath onset or earlier, all within the record.
	for _, r := range rows[1:] {
		on, _ := strconv.ParseFloat(r[0], 64)
		ttot, _ := strconv.ParseFloat(r[6], 64)
		if on < -1 || on > truth.DurationS() || ttot < 1 || ttot > 15 {
			t.Fatalf("row %v out of range", r)
		}
	}
	if !strings.Contains(errb.String(), "QDC") || !strings.Contains(errb.String(), "constant tidal volume") {
		t.Errorf("stderr does not report QDC and its caveat: %s", errb.String())
	}
	// Events: one candidate apnea pair "(" ... ")" around 200-220 s.
	anns, err := recording.ReadWFDBAnnotations(evPath, 25)
	if err != nil {
		t.Fatal(err)
	}
	if len(anns) != 2 || anns[0].Code != "(" || anns[1].Code != ")" || !strings.HasPrefix(anns[0].Text, "apnea") ||
		math.Abs(anns[0].Time-200) > 2 || math.Abs(anns[1].Time-220) > 2 {
		t.Errorf("event annotations %+v, want one apnea 200-220 s (simulator truth)", anns)
	}
	// -o writes a file with the same content.
	outPath := filepath.Join(dir, "b.csv")
	var out2 bytes.Buffer
	if code := run([]string{"breaths", "-o", outPath, path, "-qdc", "180"}, &out2, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	got, _ := os.ReadFile(outPath)
	var want bytes.Buffer
	w := csv.NewWriter(&want)
	_ = w.WriteAll(rows)
	if !bytes.Equal(got, want.Bytes()) || out2.Len() != 0 {
		t.Errorf("-o file differs from stdout output (%d vs %d bytes)", len(got), want.Len())
	}
}

func TestBreathsCommandErrors(t *testing.T) {
	dir := t.TempDir()
	path, _ := breathRecordCSV(t, dir)
	for _, c := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"breaths"}, 2, "exactly one RECORD"},
		{[]string{"breaths", path, "-rib", "nope"}, 2, "no such channel"},
		{[]string{"breaths", path, "-rib", "abdomen"}, 2, "same channel"},
		{[]string{"breaths", path, "-qdc", "-3"}, 2, "non-negative"},
		{[]string{"breaths", filepath.Join(dir, "missing.csv")}, 1, "missing"},
	} {
		var out, errb bytes.Buffer
		code := run(c.args, &out, &errb)
		if code != c.code || !strings.Contains(errb.String(), c.msg) || strings.Count(strings.TrimSpace(errb.String()), "\n") > 20 {
			t.Errorf("%v: exit %d, stderr %q; want exit %d mentioning %q", c.args, code, errb.String(), c.code, c.msg)
		}
	}
}
