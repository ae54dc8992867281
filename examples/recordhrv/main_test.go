package main

import (
	"bytes"
	"strconv"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// TestRecord100 runs the example on MIT-BIH record 100 (skipped when
// ../shared is absent) and checks the heart rate it prints: 2273 beats in
// 30 min 5.6 s (MIT-BIH directory, record 100) is 75.5 beats/min on
// average, derived; every full window must lie within 10 % of it.
func TestRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	var out bytes.Buffer
	if err := run([]string{strings.TrimSuffix(hea, ".hea"), "atr"}, &out); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	if len(lines) < 50 || lines[0] != "t_s\tmean_hr_bpm\tsdnn_ms\trmssd_ms\tlf_hf_ratio" {
		t.Fatalf("output:\n%s", out.String())
	}
	n := 0
	for _, l := range lines[1:] {
		f := strings.Split(l, "\t")
		hr, err := strconv.ParseFloat(f[1], 64)
		if err != nil || hr != hr { // NaN: window not fully covered
			continue
		}
		if hr < 75.5*0.9 || hr > 75.5*1.1 {
			t.Errorf("line %q: heart rate %v", l, hr)
		}
		n++
	}
	if n < 45 {
		t.Errorf("only %d windows with a heart rate", n)
	}
}

func TestUsage(t *testing.T) {
	if err := run(nil, &bytes.Buffer{}); err == nil {
		t.Error("no arguments accepted")
	}
}
