package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

func TestScoreRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	rec := strings.TrimSuffix(hea, ".hea")
	dir := t.TempDir()
	det := filepath.Join(dir, "det.csv")
	var out, errb bytes.Buffer
	if code := run([]string{"rpeaks", rec, "-o", det}, &out, &errb); code != 0 {
		t.Fatalf("rpeaks exit %d: %s", code, errb.String())
	}
	out.Reset()
	if code := run([]string{"score", "-ref", rec, "-annotator", "atr", "-test", det, "-csv"}, &out, &errb); code != 0 {
		t.Fatalf("score exit %d: %s", code, errb.String())
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	if lines[0] != "record,ref_beats,test_beats,tp,fn,fp,se_pct,pp_pct,der_pct" {
		t.Fatalf("header %q", lines[0])
	}
	// 2273 reference beats (MIT-BIH directory, record 100); the detector
	// finds every one with no false detection (ecg TestRecord100).
	if !strings.HasPrefix(lines[1], "100,2273,2273,2273,0,0,100.000,100.000,") {
		t.Errorf("record row %q", lines[1])
	}
	// Scoring the reference against itself: perfect agreement (derived).
	out.Reset()
	if code := run([]string{"score", "-ref", rec, "-test", rec + ".atr", "-csv"}, &out, &errb); code != 0 {
		t.Fatalf("self score exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "\n100,2273,2273,2273,0,0,100.000,100.000,0.000\n") {
		t.Errorf("self score:\n%s", out.String())
	}
	// A false detection and a miss are listed.
	os.WriteFile(det, []byte("sample,time_s\n77,0.2139\n100,5.5\n"), 0o644)
	out.Reset()
	if code := run([]string{"score", "-ref", rec, "-test", det, "-list"}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "false   5.500 s") || !strings.Contains(out.String(), "missed  ") {
		t.Errorf("list output:\n%s", out.String())
	}
}

func TestScoreErrors(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run([]string{"score", "-test", "x.csv"}, &out, &errb); code != 2 {
		t.Errorf("no -ref: exit %d, want 2", code)
	}
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	bad := filepath.Join(t.TempDir(), "bad.csv")
	os.WriteFile(bad, []byte("sample,time_s\n1,abc\n"), 0o644)
	errb.Reset()
	if code := run([]string{"score", "-ref", hea, "-test", bad}, &out, &errb); code != 1 || !strings.Contains(errb.String(), "line 2") {
		t.Errorf("bad CSV: exit %d, stderr %q", code, errb.String())
	}
	os.WriteFile(bad, []byte("when\n1\n"), 0o644)
	if code := run([]string{"score", "-ref", hea, "-test", bad}, &out, &errb); code != 1 {
		t.Errorf("no time_s column: exit %d", code)
	}
}

// FuzzScoreReadTest: the detection-CSV reader never panics and returns only
// finite times.
func FuzzScoreReadTest(f *testing.F) {
	f.Add([]byte("sample,time_s\n77,0.213889\n370,1.027778\n"))
	f.Add([]byte("time_s\nNaN\n"))
	f.Add([]byte("a,b\n\"x\n"))
	f.Add([]byte(""))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, b []byte) {
		p := filepath.Join(dir, "f.csv")
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		ts, err := scoreReadTest(p, 360)
		if err != nil {
			return
		}
		for _, v := range ts {
			if v != v || v > 1e308 || v < -1e308 {
				t.Fatalf("non-finite time %v accepted", v)
			}
		}
	})
}
