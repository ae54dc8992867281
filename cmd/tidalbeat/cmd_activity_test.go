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
	"time"

	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/motion"
)

// writeAccCSV writes a simulated chest accelerometer as a CSV recording
// with acc_x[m/s2]-style headers and RFC 3339 times, and returns its path
// and the simulator's record.
func writeAccCSV(t *testing.T, segs []sim.AccelSegment) (string, *sim.AccelRecord) {
	t.Helper()
	rec, err := sim.AccelSimulate(segs, sim.AccelConfig{RateHz: 50, Seed: 5})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("time,acc_x[m/s2],acc_y[m/s2],acc_z[m/s2]\n")
	t0 := time.Date(2026, 5, 28, 0, 0, 0, 0, time.UTC)
	for i := range rec.X {
		g := motion.StandardGravity
		ts := t0.Add(time.Duration(i) * 20 * time.Millisecond).Format("2006-01-02T15:04:05.000Z")
		fmt.Fprintf(&b, "%s,%.5f,%.5f,%.5f\n", ts, rec.X[i]*g, rec.Y[i]*g, rec.Z[i]*g)
	}
	p := filepath.Join(t.TempDir(), "walk.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p, rec
}

func TestActivityCommand(t *testing.T) {
	path, rec := writeAccCSV(t, []sim.AccelSegment{
		{Activity: sim.AccelSitting, DurationS: 60},
		{Activity: sim.AccelWalking, DurationS: 120, CadenceSPM: 112},
		{Activity: sim.AccelSupine, DurationS: 60},
	})
	outPath := filepath.Join(t.TempDir(), "act.csv")
	var stdout, stderr bytes.Buffer
	if code := run([]string{"activity", path, "-epoch", "30s", "-o", outPath}, &stdout, &stderr); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr.String())
	}
	f, err := os.Open(outPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	head := rows[0]
	col := map[string]int{}
	for i, h := range head {
		col[h] = i
	}
	for _, want := range []string{"epoch_start_utc", "n_steps", "cadence_spm", "enmo_mg", "mad_mg", "counts_pim_mgs", "intensity_class", "posture"} {
		if _, ok := col[want]; !ok {
			t.Errorf("column %q missing from %v", want, head)
		}
	}
	if len(rows)-1 != 8 { // 240 s in 30-s epochs; the start is on a 30-s boundary
		t.Errorf("%d epochs, want 8", len(rows)-1)
	}
	// The total printed on stderr and the epoch sum agree, and are within
	// 3 % of the simulator's true steps (ground truth of internal/sim).
	var total int
	if _, err := fmt.Sscanf(stderr.String()[strings.Index(stderr.String(), "total steps:"):], "total steps: %d", &total); err != nil {
		t.Fatalf("no total on stderr: %q", stderr.String())
	}
	sum := 0
	for _, r := range rows[1:] {
		n, _ := strconv.Atoi(r[col["n_steps"]])
		sum += n
	}
	if sum != total || math.Abs(float64(total-len(rec.Steps))) > 0.03*float64(len(rec.Steps)) {
		t.Errorf("steps: epochs %d, total %d, true %d", sum, total, len(rec.Steps))
	}
	if p := rows[1][col["posture"]]; p != "upright" {
		t.Errorf("first epoch posture %q", p)
	}
	if p := rows[len(rows)-1][col["posture"]]; p != "supine" {
		t.Errorf("last epoch posture %q", p)
	}
	if !strings.HasPrefix(rows[1][col["epoch_start_utc"]], "2026-05-28T00:00:00") {
		t.Errorf("first epoch start %q", rows[1][col["epoch_start_utc"]])
	}
}

func TestActivityCommandErrors(t *testing.T) {
	path, _ := writeAccCSV(t, []sim.AccelSegment{{Activity: sim.AccelStanding, DurationS: 10}})
	for _, c := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"activity"}, 2, "one RECORD"},
		{[]string{"activity", path, "-epoch", "-3s"}, 2, "-epoch"},
		{[]string{"activity", path, "-x", "nope"}, 2, "no channel named"},
		{[]string{"activity", path, "-mount", "+x,+x,+z"}, 2, "-mount"},
		{[]string{"activity", path, "-unit", "furlong"}, 2, "-unit"},
		{[]string{"activity", filepath.Join(t.TempDir(), "missing.csv")}, 1, "missing"},
	} {
		var stdout, stderr bytes.Buffer
		if code := run(c.args, &stdout, &stderr); code != c.code || !strings.Contains(stderr.String(), c.msg) {
			t.Errorf("%v: exit %d, stderr %q; want exit %d mentioning %q", c.args, code, stderr.String(), c.code, c.msg)
		}
	}
}
