package main

import (
	"bytes"
	"fmt"
	"strings"
	"testing"
)

// TestLive runs a 7-minute session and checks that rows come out while the
// session runs (not only at the end), in order, with the simulated heart
// rate (internal/sim.ECGSimulate at 88 beats/min, its ground truth) once
// the 5-min HRV window is full.
func TestLive(t *testing.T) {
	var out bytes.Buffer
	if err := run(7, false, &out); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	if len(lines) != 14 {
		t.Fatalf("%d rows for 7 min on the 30-s grid, want 14:\n%s", len(lines), out.String())
	}
	early := 0
	prev := ""
	for _, l := range lines {
		var sec int
		var row string
		var hr float64
		if _, err := fmt.Sscanf(l, "packet %d s  row %s  hr %f", &sec, &row, &hr); err != nil {
			t.Fatalf("line %q: %v", l, err)
		}
		if row <= prev {
			t.Errorf("rows out of order: %s after %s", row, prev)
		}
		prev = row
		if sec < 7*60 {
			early++
		}
		if hr == hr && (hr < 86 || hr > 90) {
			t.Errorf("line %q: heart rate %v, simulator 88", l, hr)
		}
	}
	if early < 10 {
		t.Errorf("only %d rows released before the end of the session", early)
	}
}
