package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

func TestRpeaksRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec := strings.TrimSuffix(hea, ".hea")
	var out, errb bytes.Buffer
	if code := run([]string{"rpeaks", rec, "-signal", "MLII"}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	if lines[0] != "sample,time_s" { // issue 4: header exactly sample,time_s
		t.Fatalf("header %q", lines[0])
	}
	// MIT-BIH record 100 has 2273 reference beats; the detector finds them
	// all (see ecg TestRecord100).
	if n := len(lines) - 1; n < 2270 || n > 2276 {
		t.Fatalf("%d beats, want about 2273", n)
	}
	var samples []int64
	for _, l := range lines[1:] {
		f := strings.Split(l, ",")
		s, err1 := strconv.ParseInt(f[0], 10, 64)
		ts, err2 := strconv.ParseFloat(f[1], 64)
		if err1 != nil || err2 != nil || len(f) != 2 {
			t.Fatalf("bad row %q", l)
		}
		// Sample index at 360 Hz and time in s from the start agree (no
		// interpolation at 360 Hz >= 250 Hz).
		if d := ts - float64(s)/360; d < -1e-6 || d > 1e-6 {
			t.Fatalf("row %q: time %v != sample/360", l, ts)
		}
		samples = append(samples, s)
	}

	// WFDB annotation output carries the same beats.
	dir := t.TempDir()
	atr := filepath.Join(dir, "det.atr")
	out.Reset()
	if code := run([]string{"rpeaks", rec, "-o", atr}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	anns, err := recording.ReadWFDBAnnotations(atr, 360)
	if err != nil {
		t.Fatal(err)
	}
	if len(anns) != len(samples) {
		t.Fatalf("%d annotations, %d CSV rows", len(anns), len(samples))
	}
	for i, a := range anns {
		if a.Sample != samples[i] || !a.IsBeat() {
			t.Fatalf("annotation %d: sample %d code %q, CSV sample %d", i, a.Sample, a.Code, samples[i])
		}
	}
	csvPath := filepath.Join(dir, "det.csv")
	if code := run([]string{"rpeaks", rec, "-signal", "0", "-o", csvPath}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	b, _ := os.ReadFile(csvPath)
	if !strings.HasPrefix(string(b), "sample,time_s\n") || strings.Count(string(b), "\n") != len(lines) {
		t.Errorf("-o x.csv differs from stdout output")
	}
}

func TestRpeaksErrors(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run([]string{"rpeaks"}, &out, &errb); code != 2 {
		t.Errorf("no record: exit %d, want 2", code)
	}
	if code := run([]string{"rpeaks", filepath.Join(t.TempDir(), "missing")}, &out, &errb); code != 1 {
		t.Errorf("missing record: exit %d, want 1", code)
	}
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	errb.Reset()
	if code := run([]string{"rpeaks", hea, "-signal", "nope"}, &out, &errb); code != 2 || !strings.Contains(errb.String(), "MLII") {
		t.Errorf("bad -signal: exit %d, stderr %q (want 2 and the channel names)", code, errb.String())
	}
}
