package recording

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/tidalbeat/tidalbeat/window"
)

// TestDecodeWFDBLayouts decodes hand-made byte groups whose values follow
// from the layouts in "WFDB signal file formats" (PhysioNet documentation,
// from memory; see wfdbFormat), independently of the encoder.
func TestDecodeWFDBLayouts(t *testing.T) {
	cases := []struct {
		f    int
		b    []byte
		want []int64
	}{
		{8, []byte{0x05, 0xfe}, []int64{5, -2}},                             // differences, two's complement
		{16, []byte{0x34, 0x12, 0x00, 0x80}, []int64{4660, -32768}},         // little-endian
		{61, []byte{0x12, 0x34, 0xff, 0xfe}, []int64{4660, -2}},             // big-endian
		{80, []byte{0x00, 0x80, 0xff}, []int64{-128, 0, 127}},               // offset binary
		{160, []byte{0x00, 0x00, 0x34, 0x92}, []int64{-32768, 4660}},        // offset binary, LE
		{212, []byte{0xe3, 0x33, 0xf3}, []int64{995, 1011}},                 // first bytes of MIT-BIH 100.dat: 995, 1011
		{212, []byte{0xff, 0xff, 0xff, 0x00, 0x08}, []int64{-1, -1, -2048}}, // partial final group: 1 sample
		{24, []byte{0x56, 0x34, 0x12, 0xff, 0xff, 0xff}, []int64{1193046, -1}},
		{32, []byte{0x78, 0x56, 0x34, 0x12, 0x00, 0x00, 0x00, 0x80}, []int64{305419896, -2147483648}},
		{310, []byte{0x02, 0xf8, 0x04, 0xf8}, []int64{1, 2, -1}}, // s2 = 5 high bits of each word
		{310, []byte{0x02, 0x08, 0x04, 0x08}, []int64{1, 2, 33}}, // s2 = 1 | 1<<5
		{311, []byte{0x01, 0x08, 0x30, 0x00}, []int64{1, 2, 3}},  // bits 0-9, 10-19, 20-29
		{311, []byte{0xff, 0x03, 0xf8, 0x1f}, []int64{-1, -512, 511}},
	}
	for _, c := range cases {
		got, err := DecodeWFDB(nil, c.f, c.b)
		if err != nil {
			t.Fatal(err)
		}
		if !cmp.Equal(got, c.want) {
			t.Errorf("format %d % x: got %v, want %v", c.f, c.b, got, c.want)
		}
		if c.f != 212 || len(c.want) == 2 {
			if enc := encodeWFDB(nil, c.f, c.want); !cmp.Equal(enc, c.b) {
				t.Errorf("format %d encode %v: % x, want % x", c.f, c.want, enc, c.b)
			}
		}
	}
	if _, err := DecodeWFDB(nil, 13, []byte{1}); !errors.Is(err, ErrFormat) {
		t.Errorf("unknown format: %v", err)
	}
}

func TestWFDBAllFormats(t *testing.T) {
	rec, err := Open("testdata/formats")
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Warnings) != 0 {
		t.Errorf("warnings: %v", rec.Warnings)
	}
	if want := time.Date(2026, 6, 1, 12, 30, 5, 0, time.UTC); !rec.StartKnown || !rec.Start.Equal(want) {
		t.Errorf("start %v (known %v), want %v", rec.Start, rec.StartKnown, want)
	}
	for k, f := range WFDBFormats() {
		c := rec.Channels[k]
		if len(c.Samples) != fixtureN || c.RateHz != 100 || c.Unit != "uV" {
			t.Fatalf("format %d: %d samples at %v Hz %q", f, len(c.Samples), c.RateHz, c.Unit)
		}
		for i, s := range c.Samples {
			v := fixtureValue(f, i)
			if wfdbFormats[f].hasInvalid && i == 7 {
				if !math.IsNaN(s) {
					t.Errorf("format %d: invalid sample 7 read as %v, want NaN", f, s)
				}
				continue
			}
			if s != float64(v)/100 {
				t.Errorf("format %d sample %d = %v, want %v", f, i, s, float64(v)/100)
			}
		}
		wantGaps := []window.Interval{}
		if wfdbFormats[f].hasInvalid {
			wantGaps = []window.Interval{{Start: 0.07, End: 0.08}}
		}
		if !cmp.Equal(c.Gaps, wantGaps, cmp.Comparer(func(a, b float64) bool { return math.Abs(a-b) < 1e-12 })) && !(len(c.Gaps) == 0 && len(wantGaps) == 0) {
			t.Errorf("format %d gaps %v, want %v", f, c.Gaps, wantGaps)
		}
	}
}

func TestWFDBMultiFrequencyAndSkew(t *testing.T) {
	rec, err := Open("testdata/multi.hea")
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Warnings) != 0 {
		t.Errorf("warnings: %v", rec.Warnings)
	}
	fast, slow := rec.Channels[0], rec.Channels[1]
	if fast.RateHz != 20 || len(fast.Samples) != 40 || slow.RateHz != 10 || len(slow.Samples) != 20 {
		t.Fatalf("fast %v Hz x %d, slow %v Hz x %d", fast.RateHz, len(fast.Samples), slow.RateHz, len(slow.Samples))
	}
	// WFDB header format (from memory): "16x2" stores 2 samples of the
	// signal per frame, at twice the frame rate; ":1" delays a signal by one
	// frame in the file. Stored values are those of the fixture generator.
	for i, s := range fast.Samples { // gain 10: stored 100*f, 100*f+50 per frame f
		if want := float64(50*i) / 10; s != want {
			t.Errorf("fast[%d] = %v, want %v", i, s, want)
		}
	}
	for j, s := range slow.Samples { // skew 1: time j is stored in frame j+1 (value -(j+1)), baseline -5
		if want := float64(-(j + 1) + 5); s != want {
			t.Errorf("slow[%d] = %v, want %v", j, s, want)
		}
	}
	if slow.Unit != "cm" || len(rec.Comments) != 1 {
		t.Errorf("unit %q comments %q", slow.Unit, rec.Comments)
	}
}

func TestWFDBAnnotationOnlyRecord(t *testing.T) {
	rec, err := Open("testdata/annonly")
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Channels) != 0 || len(rec.Annotations) != 7 {
		t.Fatalf("%d channels, %d annotations", len(rec.Channels), len(rec.Annotations))
	}
	want := fixtureAnnotations()
	for i := range want {
		want[i].Annotator = "atr"
		want[i].Time = float64(want[i].Sample) / 250
	}
	if d := cmp.Diff(want, rec.Annotations); d != "" {
		t.Errorf("annotations differ:\n%s", d)
	}
	if d := rec.Duration(); d != 36 {
		t.Errorf("duration %v, want 36 s", d)
	}
}

// TestMITAnnotationBytes reads hand-made annotation words (MIT annotation
// format, PhysioNet documentation, from memory).
func TestMITAnnotationBytes(t *testing.T) {
	b := []byte{
		0x0a, 0x04, // N (1) at +10
		0x00, 0xec, 0x01, 0x00, 0x00, 0x00, // SKIP 65536 (high word first)
		0x00, 0x14, // V (5) at +0
		0x02, 0xf4, // SUB 2
		0x03, 0xf8, // CHN 3
		0x07, 0xf0, // NUM 7
		0x03, 0xfc, 'a', 'b', 'c', 0x00, // AUX "abc"
		0x05, 0x04, // N at +5: keeps CHN 3 and NUM 7
		0x00, 0x00, // end
		0xff, 0xff, // ignored after the end
	}
	got, err := ParseWFDBAnnotations(b, 100)
	if err != nil {
		t.Fatal(err)
	}
	want := []Annotation{
		{Time: 0.1, Sample: 10, Code: "N"},
		{Time: 655.46, Sample: 65546, Code: "V", Subtype: 2, Channel: 3, Num: 7, Text: "abc"},
		{Time: 655.51, Sample: 65551, Code: "N", Channel: 3, Num: 7},
	}
	if d := cmp.Diff(want, got, cmp.Comparer(func(a, b float64) bool { return math.Abs(a-b) < 1e-9 })); d != "" {
		t.Errorf("differs:\n%s", d)
	}
	for _, bad := range [][]byte{{0x00, 0xfc}, {0x00, 0xec, 0x01}, {0x0a, 0x04, 0x09, 0xfc, 'x'}, {0x00, 0xd0}, {0x0a}} {
		if _, err := ParseWFDBAnnotations(bad, 100); err == nil {
			t.Errorf("% x: no error", bad)
		}
	}
	for code := 0; code <= annMax; code++ {
		m := WFDBMnemonic(code)
		if c, ok := WFDBCode(m); !ok || c != code {
			t.Errorf("code %d -> %q -> %d", code, m, c)
		}
	}
}

func TestWFDBHeaderErrors(t *testing.T) {
	cases := []struct {
		hea   string
		field string
		want  error
	}{
		{"r 1 0\nr.dat 16\n", "sampling frequency", ErrHeader},
		{"r 1 NaN\nr.dat 16\n", "sampling frequency", ErrHeader},
		{"r 1 -360\nr.dat 16\n", "sampling frequency", ErrHeader},
		{"r 1 360\nr.dat 17\n", "format 17", ErrFormat},
		{"r 1 360\nr.dat 16 -200\n", "gain", ErrHeader},
		{"r 3 360\nr.dat 16\n", "declares 3 signals", ErrHeader},
		{"r 99999 360\n", "number of signals", ErrHeader},
		{"r/2 0 360\n", "multi-segment", ErrFormat},
		{"r 1 360 10 25:99:00\nr.dat 16\n", "base time", ErrHeader},
		{"r 1 360 10 10:00:00 31/31/2020\nr.dat 16\n", "base date", ErrHeader},
		{"r 1 360 x\nr.dat 16\n", "number of samples", ErrHeader},
		{"r 1 360\nr.dat 16x0\n", "samples per frame", ErrHeader},
		{"# only a comment\n", "no record line", ErrHeader},
	}
	for _, c := range cases {
		_, err := ParseWFDBHeader(strings.NewReader(c.hea), "test.hea")
		if !errors.Is(err, c.want) || !strings.Contains(err.Error(), c.field) || !strings.Contains(err.Error(), "test.hea") {
			t.Errorf("%q: err %v, want %v naming %q", c.hea, err, c.want, c.field)
		}
	}
}

func TestWFDBFileErrors(t *testing.T) {
	dir := t.TempDir()
	write := func(name, s string) {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	// A header claiming a billion samples over a 4-byte file: refused
	// before anything is allocated.
	write("big.hea", "big 1 360 1000000000\nbig.dat 16\n")
	write("big.dat", "abcd")
	if _, err := Open(filepath.Join(dir, "big")); !errors.Is(err, ErrTruncated) || !strings.Contains(err.Error(), "number of samples") {
		t.Errorf("lying sample count: %v", err)
	}
	write("esc.hea", "esc 1 360\n../esc.dat 16\n")
	if _, err := Open(filepath.Join(dir, "esc")); !errors.Is(err, ErrHeader) {
		t.Errorf("escaping file name: %v", err)
	}
	write("nofile.hea", "nofile 1 360\nmissing.dat 16\n")
	if _, err := Open(filepath.Join(dir, "nofile")); !errors.Is(err, ErrNotFound) {
		t.Errorf("missing signal file: %v", err)
	}
	if _, err := Open(filepath.Join(dir, "absent")); !errors.Is(err, ErrNotFound) {
		t.Errorf("missing header: %v", err)
	}
	if _, err := OpenWith("testdata/formats", Options{Annotators: []string{"qrs"}}); !errors.Is(err, ErrNotFound) {
		t.Errorf("missing annotator: %v", err)
	}
	// Without a sample count, the length comes from the file (5 samples).
	write("nolen.hea", "nolen 1 100\nnolen.dat 16 1/mV\n")
	write("nolen.dat", string(encodeWFDB(nil, 16, []int64{1, 2, 3, 4, 5})))
	rec, err := Open(filepath.Join(dir, "nolen"))
	if err != nil || len(rec.Channels[0].Samples) != 5 || rec.Channels[0].Samples[4] != 5 {
		t.Errorf("no sample count: %v %v", err, rec)
	}
}

func TestOpenOptions(t *testing.T) {
	start := time.Date(2026, 3, 14, 6, 0, 0, 0, time.UTC)
	rec, err := OpenWith("testdata/multi", Options{Start: start, Roles: map[string]Role{"slow": RoleRibCage}})
	if err != nil {
		t.Fatal(err)
	}
	if rec.StartKnown || !rec.Start.Equal(start) {
		t.Errorf("start %v known %v, want the supplied %v", rec.Start, rec.StartKnown, start)
	}
	if c, ok := rec.Channel(RoleRibCage); !ok || c.Name != "slow" {
		t.Errorf("explicit role not applied: %v", rec.Channels)
	}
	// A start in the file wins over the option.
	rec, _ = OpenWith("testdata/formats", Options{Start: start})
	if rec.Start.Equal(start) {
		t.Errorf("option overrode the file's start")
	}
}

func TestMITTimeResolutionNote(t *testing.T) {
	// A leading note "## time resolution: F" gives the annotation tick
	// (WFDB high-resolution annotation files, from memory).
	anns := []Annotation{{Sample: 0, Code: "\"", Text: "## time resolution: 1000"}, {Sample: 1500, Code: "N"}}
	var b bytes.Buffer
	if err := WriteWFDBAnnotations(&b, anns, 250); err != nil {
		t.Fatal(err)
	}
	got, err := ParseWFDBAnnotations(b.Bytes(), 250)
	if err != nil {
		t.Fatal(err)
	}
	if got[1].Time != 1.5 {
		t.Errorf("beat at sample 1500 of a 1000 Hz tick: %v s, want 1.5", got[1].Time)
	}
}
