package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/report"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// tidalbeat report on MIT-BIH record 100 (PhysioNet) writes one HTML file
// holding every figure and the caution.
func TestReportRecord100(t *testing.T) {
	hea := refdata.Shared(t, "physionet/mitdb/100.hea")
	out := filepath.Join(t.TempDir(), "r.html")
	var so, se bytes.Buffer
	if code := run([]string{"report", hea, "-o", out}, &so, &se); code != 0 {
		t.Fatalf("exit %d: %s", code, se.String())
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range report.FigureIDs {
		if !bytes.Contains(b, []byte(`<figure id="`+id+`">`)) {
			t.Errorf("figure %s missing", id)
		}
	}
	if !bytes.Contains(b, []byte("not a medical device")) {
		t.Error("caution missing")
	}
	if !strings.Contains(so.String(), out) {
		t.Errorf("stdout %q does not name the output", so.String())
	}
}

func TestReportErrors(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		name string
		args []string
		code int
	}{
		{"no record", []string{"report"}, 2},
		{"two records", []string{"report", "a", "b"}, 2},
		{"bad flag", []string{"report", "-nope", "a"}, 2},
		{"missing file", []string{"report", filepath.Join(dir, "nothing.edf"), "-o", filepath.Join(dir, "x.html")}, 1},
	} {
		var so, se bytes.Buffer
		if code := run(c.args, &so, &se); code != c.code {
			t.Errorf("%s: exit %d, want %d (stderr %q)", c.name, code, c.code, se.String())
		}
		if c.code == 1 && strings.Count(strings.TrimSpace(se.String()), "\n") != 0 {
			t.Errorf("%s: error is not one line: %q", c.name, se.String())
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "x.html")); err == nil {
		t.Error("a failed report left an output file")
	}
}
