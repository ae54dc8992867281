package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

func runInfoJSON(t *testing.T, args ...string) infoSummary {
	t.Helper()
	var out, errb bytes.Buffer
	if code := run(append([]string{"info"}, args...), &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	var s infoSummary
	if err := json.Unmarshal(out.Bytes(), &s); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out.String())
	}
	return s
}

func TestInfoRecord100(t *testing.T) {
	p := strings.TrimSuffix(refdata.Shared(t, "physionet/mitdb/100.hea"), ".hea")
	s := runInfoJSON(t, p)
	// MIT-BIH Arrhythmia Database directory, record 100: 2 leads at 360 Hz,
	// 650000 samples, 2239 N + 33 A + 1 V = 2273 beats.
	if len(s.Channels) != 2 || s.Channels[0].Name != "MLII" || s.Channels[0].RateHz != 360 || s.Channels[0].Samples != 650000 ||
		s.Channels[0].Role != "ecg" || s.Channels[1].Name != "V5" {
		t.Errorf("channels %+v", s.Channels)
	}
	if s.AnnotationCounts["N"] != 2239 || s.AnnotationCounts["A"] != 33 || s.AnnotationCounts["V"] != 1 || s.Beats != 2273 {
		t.Errorf("annotation counts %v, beats %d", s.AnnotationCounts, s.Beats)
	}
	if s.Start != nil || s.StartKnown || s.DurationS != 650000.0/360 || s.Format != "wfdb" {
		t.Errorf("start %v known %v duration %v format %s", s.Start, s.StartKnown, s.DurationS, s.Format)
	}
	// A corrupted copy still summarises, with the checksum mismatch listed
	// (WFDB header checksums of record 100: -22131 and 20052).
	dir := t.TempDir()
	hea, _ := os.ReadFile(p + ".hea")
	dat, _ := os.ReadFile(p + ".dat")
	dat[30] ^= 0x10
	os.WriteFile(filepath.Join(dir, "100.hea"), hea, 0o644)
	os.WriteFile(filepath.Join(dir, "100.dat"), dat, 0o644)
	if c := runInfoJSON(t, filepath.Join(dir, "100")); len(c.Warnings) != 1 || !strings.Contains(c.Warnings[0], "checksum") {
		t.Errorf("corrupted copy: warnings %q", c.Warnings)
	}
	// A start supplied on the command line is used (the header has none).
	s = runInfoJSON(t, p, "-start", "2026-06-01T06:00:00Z")
	if s.Start == nil || *s.Start != "2026-06-01T06:00:00Z" || s.StartKnown {
		t.Errorf("-start: %v %v", s.Start, s.StartKnown)
	}
}

func TestInfoFixturesAndEDF(t *testing.T) {
	s := runInfoJSON(t, "../../features/recording/testdata/formats.hea")
	if s.Start == nil || *s.Start != "2026-06-01T12:30:05Z" || len(s.Channels) != 10 || len(s.Gaps) != 9 {
		t.Errorf("formats fixture: start %v, %d channels, %d gaps", s.Start, len(s.Channels), len(s.Gaps))
	}
	for _, g := range s.Gaps {
		if g.StartS < 0.07-1e-9 || g.EndS > 0.08+1e-9 {
			t.Errorf("gap %+v, want [0.07, 0.08) (invalid sample 7 at 100 Hz)", g)
		}
	}
	rec := &recording.Recording{Name: "lap", Start: time.Date(2026, 6, 1, 7, 0, 0, 0, time.UTC), StartKnown: true,
		Channels:    []recording.Channel{{Name: "Resp abdomen", Unit: "V", RateHz: 25, Samples: make([]float64, 250)}},
		Annotations: []recording.Annotation{{Time: 2, Text: "lap", Sample: -1}, {Time: 4, Text: "lap", Sample: -1}}}
	var b bytes.Buffer
	if err := recording.WriteEDF(&b, rec, recording.EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "lap.edf")
	os.WriteFile(p, b.Bytes(), 0o644)
	s = runInfoJSON(t, p)
	if s.Format != "edf+c" || s.Channels[0].Role != "abdomen" || s.Channels[0].Samples != 250 || s.AnnotationCounts["lap"] != 2 || s.DurationS != 10 {
		t.Errorf("EDF summary %+v", s)
	}
}

func TestInfoBadFiles(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "bad.edf"), []byte("not an EDF file at all"), 0o644)
	os.WriteFile(filepath.Join(dir, "lie.hea"), []byte("lie 1 360 1000000\nlie.dat 212\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "lie.dat"), []byte{1, 2, 3}, 0o644)
	for _, c := range []struct {
		args []string
		code int
		says string
	}{
		{[]string{filepath.Join(dir, "bad.edf")}, 1, "bad.edf"},
		{[]string{filepath.Join(dir, "lie")}, 1, "number of samples"},
		{[]string{filepath.Join(dir, "missing")}, 1, "not found"},
		{[]string{}, 2, "usage"},
		{[]string{"a", "b"}, 2, "usage"},
		{[]string{"-start", "yesterday", "x"}, 2, "RFC 3339"},
	} {
		var out, errb bytes.Buffer
		code := run(append([]string{"info"}, c.args...), &out, &errb)
		msg := errb.String()
		if code != c.code || !strings.Contains(msg, c.says) || strings.Count(strings.TrimSpace(msg), "\n") != 0 || out.Len() != 0 {
			t.Errorf("info %v: exit %d, stderr %q (want exit %d, one line naming %q)", c.args, code, msg, c.code, c.says)
		}
	}
}
