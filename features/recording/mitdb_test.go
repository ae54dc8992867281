package recording_test

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
)

// record100 returns the path of MIT-BIH record 100 (without extension).
func record100(t testing.TB) string {
	t.Helper()
	return strings.TrimSuffix(refdata.Shared(t, "physionet/mitdb/100.hea"), ".hea")
}

func TestRecord100Header(t *testing.T) {
	h, err := recording.ReadWFDBHeader(record100(t))
	if err != nil {
		t.Fatal(err)
	}
	// Values from the record's header as published in the MIT-BIH
	// Arrhythmia Database directory (record 100: 2 leads, 360 Hz,
	// 650000 samples, format 212, gain 200, 11-bit ADC, zero 1024).
	if h.NumSignals != 2 || h.FrameHz != 360 || h.Frames != 650000 {
		t.Fatalf("record line: %d signals, %v Hz, %d samples; want 2, 360, 650000", h.NumSignals, h.FrameHz, h.Frames)
	}
	want := []struct {
		desc     string
		init     int
		checksum int
	}{{"MLII", 995, -22131}, {"V5", 1011, 20052}} // MIT-BIH directory / 100.hea
	for i, w := range want {
		s := h.Signals[i]
		if s.Description != w.desc || s.Format != 212 || s.Gain != 200 || s.ADCRes != 11 || s.ADCZero != 1024 ||
			s.InitVal != w.init || !s.HasChecksum || s.Checksum != w.checksum || s.Units != "mV" {
			t.Errorf("signal %d: %+v", i, s)
		}
	}
	if len(h.Comments) != 2 || h.Comments[1] != "Aldomet, Inderal" {
		t.Errorf("comments %q", h.Comments)
	}
}

func TestRecord100Open(t *testing.T) {
	base := record100(t)
	for _, p := range []string{base, base + ".hea"} {
		rec, err := recording.Open(p)
		if err != nil {
			t.Fatal(err)
		}
		if len(rec.Warnings) != 0 {
			// The header checksums (-22131, 20052) must match the samples.
			t.Errorf("%s: warnings %v", p, rec.Warnings)
		}
		if rec.Name != "100" || len(rec.Channels) != 2 || rec.StartKnown {
			t.Fatalf("%s: name %q, %d channels, start known %v", p, rec.Name, len(rec.Channels), rec.StartKnown)
		}
		for i, first := range []float64{995, 1011} { // MIT-BIH directory: first samples of MLII and V5
			c := rec.Channels[i]
			if len(c.Samples) != 650000 || c.RateHz != 360 || c.Role != recording.RoleECG || len(c.Gaps) != 0 {
				t.Errorf("channel %d: %d samples at %v Hz, role %v, %d gaps", i, len(c.Samples), c.RateHz, c.Role, len(c.Gaps))
			}
			if raw := c.Samples[0]*c.Gain + c.Baseline; math.Abs(raw-first) > 1e-9 {
				t.Errorf("channel %d first raw sample %v, want %v", i, raw, first)
			}
			if want := (first - 1024) / 200; math.Abs(c.Samples[0]-want) > 1e-12 {
				t.Errorf("channel %d first sample %v mV, want %v", i, c.Samples[0], want)
			}
		}
		if d := rec.Duration(); math.Abs(d-650000.0/360) > 1e-9 {
			t.Errorf("duration %v s", d)
		}
		counts := map[string]int{}
		beats := 0
		for _, a := range rec.Annotations {
			if a.Annotator != "atr" {
				t.Fatalf("annotator %q", a.Annotator)
			}
			if a.IsBeat() {
				beats++
				counts[a.Code]++
			}
		}
		// MIT-BIH Arrhythmia Database directory, record 100: 2273 beats,
		// 2239 normal, 33 APC, 1 PVC.
		if beats != 2273 || counts["N"] != 2239 || counts["A"] != 33 || counts["V"] != 1 || len(counts) != 3 {
			t.Errorf("beats %d, by code %v; want 2273 = 2239 N + 33 A + 1 V", beats, counts)
		}
		if a := rec.Annotations[0]; a.Code != "+" || a.Text != "(N" || a.Sample != 18 {
			t.Errorf("first annotation %+v, want rhythm (N at sample 18 (100.atr)", a)
		}
		// First beat: N at sample 77, 0.214 s (record 100 reference
		// annotations, from memory).
		if a := rec.Annotations[1]; a.Code != "N" || a.Sample != 77 || math.Abs(a.Time-77.0/360) > 1e-12 {
			t.Errorf("first beat %+v, want N at sample 77", a)
		}
		if c, ok := rec.Channel(recording.RoleECG); !ok || c.Name != "MLII" {
			t.Errorf("Channel(RoleECG) = %v, %v", c, ok)
		}
		if c, ok := rec.ChannelByName("v5"); !ok || c.Name != "V5" {
			t.Errorf("ChannelByName(v5) = %v, %v", c, ok)
		}
	}
}

func TestRecord100AnnotationRoundTrip(t *testing.T) {
	path := record100(t) + ".atr"
	orig, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	anns, err := recording.ReadWFDBAnnotations(path, 360)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := recording.WriteWFDBAnnotations(&buf, anns, 360); err != nil {
		t.Fatal(err)
	}
	// Written from what was read, the file must equal the PhysioNet original.
	if !bytes.Equal(buf.Bytes(), orig) {
		t.Errorf("re-written 100.atr differs from the original (%d vs %d bytes)", buf.Len(), len(orig))
	}
	p2 := filepath.Join(t.TempDir(), "x.atr")
	if err := os.WriteFile(p2, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	back, err := recording.ReadWFDBAnnotations(p2, 360)
	if err != nil {
		t.Fatal(err)
	}
	for i := range back {
		back[i].Annotator = "atr"
	}
	if d := cmp.Diff(anns, back); d != "" {
		t.Errorf("round trip differs:\n%s", d)
	}
}

func TestRecord100Checksum(t *testing.T) {
	// Corrupt one sample of a copy of record 100: the header checksum must
	// no longer match (WFDB header format: 16-bit sum of the samples).
	src := record100(t)
	dir := t.TempDir()
	hea, _ := os.ReadFile(src + ".hea")
	dat, _ := os.ReadFile(src + ".dat")
	dat[3000] ^= 0x01
	os.WriteFile(filepath.Join(dir, "100.hea"), hea, 0o644)
	os.WriteFile(filepath.Join(dir, "100.dat"), dat, 0o644)
	rec, err := recording.Open(filepath.Join(dir, "100"))
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Warnings) != 1 || !errors.Is(rec.Warnings[0], recording.ErrChecksum) {
		t.Errorf("warnings %v, want one checksum mismatch", rec.Warnings)
	}
	_, err = recording.OpenWith(filepath.Join(dir, "100"), recording.Options{StrictChecksum: true})
	if !errors.Is(err, recording.ErrChecksum) {
		t.Errorf("strict: err %v, want ErrChecksum", err)
	}
	// A header claiming more samples than the file holds is refused.
	os.WriteFile(filepath.Join(dir, "100.hea"), bytes.Replace(hea, []byte("650000"), []byte("650001"), 1), 0o644)
	if _, err := recording.Open(filepath.Join(dir, "100")); !errors.Is(err, recording.ErrTruncated) {
		t.Errorf("lying sample count: err %v, want ErrTruncated", err)
	}
}
