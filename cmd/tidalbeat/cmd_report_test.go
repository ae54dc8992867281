package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/features/report"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/internal/sim"
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
		{"one weight", []string{"report", "a", "-rib-weight", "1"}, 2},
		{"weights and vref", []string{"report", "a", "-rib-weight", "1", "-abd-weight", "1", "-vref-annotations"}, 2},
		{"bad qdc", []string{"report", "a", "-qdc", "10"}, 2},
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

// TestReportCalibrationFlag: an EDF+ recording of simulated bands
// (internal/sim.BreathSimulate) with reference breaths annotated
// "vref=<V> L" gets a breathing axis in litres with -vref-annotations (the
// calibration "tidalbeat features -vref-annotations" applies) and in
// arbitrary units without it.
func TestReportCalibrationFlag(t *testing.T) {
	b, err := sim.BreathSimulate(sim.BreathConfig{RateHz: 50, Seed: 21, Segments: []sim.BreathSegment{
		{Label: "calibration", DurationS: 120, RatePerMin: 10, TidalL: 0.8, TidalCV: 0.25, RibShareSD: 0.1},
		{Label: "quiet", DurationS: 120, RatePerMin: 14, TidalL: 0.5},
	}})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "bands", Start: time.Date(2026, 5, 2, 7, 0, 0, 0, time.UTC), StartKnown: true, Channels: []recording.Channel{
		{Name: "rib", Unit: "mV", RateHz: 50, Samples: b.Rib, Role: recording.RoleRibCage},
		{Name: "abd", Unit: "mV", RateHz: 50, Samples: b.Abd, Role: recording.RoleAbdomen},
	}}
	for _, tb := range b.Breaths[1:13] {
		rec.Annotations = append(rec.Annotations, recording.Annotation{Time: tb.Onset, Duration: tb.EndExp - tb.Onset, Sample: -1, Text: fmt.Sprintf("vref=%.2f L", tb.TidalL)})
	}
	dir := t.TempDir()
	edf := filepath.Join(dir, "bands.edf")
	if err := writeDemoEDF(edf, rec); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		flags []string
		axis  string
	}{
		{[]string{"-vref-annotations"}, "volume (L)"},
		{nil, "volume (AU)"},
	} {
		out := filepath.Join(dir, "r.html")
		var so, se bytes.Buffer
		if code := run(append([]string{"report", edf, "-o", out}, c.flags...), &so, &se); code != 0 {
			t.Fatalf("%v: exit %d: %s", c.flags, code, se.String())
		}
		html, err := os.ReadFile(out)
		if err != nil {
			t.Fatal(err)
		}
		s := string(html)
		i := strings.Index(s, `<figure id="fig-breathing">`)
		if i < 0 {
			t.Fatalf("%v: no breathing figure", c.flags)
		}
		fig := s[i:]
		if j := strings.Index(fig, "</figure>"); j >= 0 {
			fig = fig[:j]
		}
		if !strings.Contains(fig, c.axis) {
			t.Errorf("%v: breathing figure lacks the axis label %q", c.flags, c.axis)
		}
	}
}
