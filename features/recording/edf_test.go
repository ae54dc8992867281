package recording

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// edfSig is one signal of a hand-made EDF header.
type edfSig struct {
	label, dim             string
	pmin, pmax, dmin, dmax string
	n                      int
}

// handEDF lays out an EDF header field by field as Kemp et al. 1992 give it
// (version 8, patient 80, recording 80, date 8, time 8, header bytes 8,
// reserved 44, records 8, duration 8, signals 4, then per-signal fields in
// blocks of ns), independently of WriteEDF, followed by the data bytes.
func handEDF(version, reserved, date, clock, nrec, dur string, sigs []edfSig, data []byte) []byte {
	var b bytes.Buffer
	pad := func(s string, n int) { b.WriteString(s + strings.Repeat(" ", n-len(s))) }
	b.WriteString(version)
	pad("X X X X", 80)
	pad("Startdate 01-JUN-2026 X X X", 80)
	pad(date, 8)
	pad(clock, 8)
	pad(fmt.Sprint(256*(len(sigs)+1)), 8)
	pad(reserved, 44)
	pad(nrec, 8)
	pad(dur, 8)
	pad(fmt.Sprint(len(sigs)), 4)
	for _, f := range []struct {
		w int
		v func(s edfSig) string
	}{
		{16, func(s edfSig) string { return s.label }}, {80, func(edfSig) string { return "" }},
		{8, func(s edfSig) string { return s.dim }}, {8, func(s edfSig) string { return s.pmin }},
		{8, func(s edfSig) string { return s.pmax }}, {8, func(s edfSig) string { return s.dmin }},
		{8, func(s edfSig) string { return s.dmax }}, {80, func(edfSig) string { return "" }},
		{8, func(s edfSig) string { return fmt.Sprint(s.n) }}, {32, func(edfSig) string { return "" }},
	} {
		for _, s := range sigs {
			pad(f.v(s), f.w)
		}
	}
	b.Write(data)
	return b.Bytes()
}

func le16(v ...int) []byte {
	var b []byte
	for _, x := range v {
		b = append(b, byte(x), byte(x>>8))
	}
	return b
}

func writeTemp(t *testing.T, name string, b []byte) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, b, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestEDFHandMade(t *testing.T) {
	// One signal, 4 samples per 0.5 s record, 2 records; physical -100..100
	// over digital -2048..2047. Kemp et al. 1992: physical = pmin +
	// (digital - dmin) * (pmax - pmin) / (dmax - dmin).
	sig := []edfSig{{"Resp abdomen", "mV", "-100", "100", "-2048", "2047", 4}}
	data := le16(-2048, 2047, 0, 1000, -1, 5, 4000, -3000) // 4000 and -3000 lie outside the digital range
	p := writeTemp(t, "hand.edf", handEDF("0       ", "", "02.03.99", "23.59.58", "2", "0.5", sig, data))
	rec, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	if want := time.Date(1999, 3, 2, 23, 59, 58, 0, time.UTC); !rec.Start.Equal(want) || rec.Format != "edf" {
		t.Errorf("start %v format %s, want %v edf (yy 99 -> 1999: Kemp and Olivan 2003 clipping)", rec.Start, rec.Format, want)
	}
	c := rec.Channels[0]
	if c.RateHz != 8 || c.Role != RoleAbdomen || c.Unit != "mV" || len(c.Samples) != 8 {
		t.Fatalf("channel %+v", c)
	}
	for i, d := range []int{-2048, 2047, 0, 1000, -1, 5} {
		want := -100 + float64(d+2048)*200/4095
		if math.Abs(c.Samples[i]-want) > 1e-12 {
			t.Errorf("sample %d = %v, want %v", i, c.Samples[i], want)
		}
	}
	if !math.IsNaN(c.Samples[6]) || !math.IsNaN(c.Samples[7]) || len(c.Gaps) != 1 || c.Gaps[0] != (window.Interval{Start: 0.75, End: 1}) {
		t.Errorf("out-of-range digital values: %v, gaps %v", c.Samples[6:], c.Gaps)
	}
	if raw := c.Samples[3]*c.Gain + c.Baseline; math.Abs(raw-1000) > 1e-9 {
		t.Errorf("gain/baseline give digital %v, want 1000", raw)
	}
}

func TestBDFHandMade(t *testing.T) {
	// 24-bit little-endian two's complement (BDF).
	sig := []edfSig{{"ECG", "uV", "-8388608", "8388607", "-8388608", "8388607", 3}}
	data := []byte{0x56, 0x34, 0x12, 0xff, 0xff, 0xff, 0x00, 0x00, 0x80}
	p := writeTemp(t, "hand.bdf", handEDF("\xffBIOSEMI", "24BIT", "01.06.26", "10.00.00", "1", "1", sig, data))
	rec, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	c := rec.Channels[0]
	for i, want := range []float64{0x123456, -1, -8388608} {
		if math.Abs(c.Samples[i]-want) > 1e-6 {
			t.Errorf("sample %d = %v, want %v", i, c.Samples[i], want)
		}
	}
	if rec.Format != "bdf" || rec.Start.Year() != 2026 || c.Role != RoleECG {
		t.Errorf("format %s start %v role %v", rec.Format, rec.Start, c.Role)
	}
}

func TestTALs(t *testing.T) {
	// The TAL examples of Kemp and Olivan 2003 (section 2.2.2).
	b := []byte("+180\x14Lights off\x14Close door\x14\x00+1800.2\x1525.5\x14Apnea\x14\x00\x00\x00")
	tals, err := ParseTALs(b)
	if err != nil {
		t.Fatal(err)
	}
	if len(tals) != 2 || tals[0].Onset != 180 || len(tals[0].Texts) != 2 || tals[0].Texts[1] != "Close door" ||
		tals[1].Onset != 1800.2 || !tals[1].HasDuration || tals[1].Duration != 25.5 || tals[1].Texts[0] != "Apnea" {
		t.Errorf("%+v", tals)
	}
	for _, bad := range []string{"180\x14x\x14\x00", "+1\x14x", "+1\x15-2\x14x\x14\x00", "+1e3\x14x\x14\x00", "+NaN\x14\x14\x00", "+1\x00"} {
		if _, err := ParseTALs([]byte(bad)); !errors.Is(err, ErrData) {
			t.Errorf("%q: err %v, want ErrData", bad, err)
		}
	}
}

func TestEDFPlusDiscontinuous(t *testing.T) {
	// EDF+D: records at onsets 0 and 3 s (1 s each); 2..3 s is missing and
	// the time before it too: samples 2..5 of 2 Hz must be NaN, gap [1, 3).
	sig := []edfSig{{"Thorax", "mV", "-1", "1", "-32767", "32767", 2}, {"EDF Annotations", "", "-1", "1", "-32768", "32767", 16}}
	ann := func(s string) []byte { b := make([]byte, 32); copy(b, s); return b }
	var data []byte
	data = append(data, le16(0, 32767)...)
	data = append(data, ann("+0.25\x14\x14\x00+0.5\x151.5\x14lap\x14\x00")...)
	data = append(data, le16(-32767, 0)...)
	data = append(data, ann("+3.25\x14\x14\x00+3.5\x14cool-down\x14\x00")...)
	p := writeTemp(t, "d.edf", handEDF("0       ", "EDF+D", "01.06.26", "07.00.00", "2", "1", sig, data))
	rec, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	if rec.Format != "edf+d" || len(rec.Channels) != 1 {
		t.Fatalf("format %s, %d channels", rec.Format, len(rec.Channels))
	}
	// The first record's onset (0.25 s) refines the header's start time.
	if want := time.Date(2026, 6, 1, 7, 0, 0, 250e6, time.UTC); !rec.Start.Equal(want) {
		t.Errorf("start %v, want %v", rec.Start, want)
	}
	c := rec.Channels[0]
	want := []float64{0, 1, nan, nan, nan, nan, -1, 0}
	if len(c.Samples) != len(want) {
		t.Fatalf("samples %v", c.Samples)
	}
	for i := range want {
		if !(c.Samples[i] == want[i] || math.IsNaN(c.Samples[i]) && math.IsNaN(want[i])) {
			t.Errorf("sample %d = %v, want %v", i, c.Samples[i], want[i])
		}
	}
	if len(c.Gaps) != 1 || c.Gaps[0] != (window.Interval{Start: 1, End: 3}) {
		t.Errorf("gaps %v", c.Gaps)
	}
	if len(rec.Annotations) != 2 || rec.Annotations[0].Text != "lap" || rec.Annotations[0].Time != 0.25 ||
		rec.Annotations[0].Duration != 1.5 || rec.Annotations[1].Time != 3.25 || rec.Annotations[1].Sample != -1 {
		t.Errorf("annotations %+v", rec.Annotations)
	}
	// An onset far in the future must not make the reader fill gigabytes.
	bad := bytes.Replace(data, []byte("+3.25\x14\x14\x00+3.5"), []byte("+99999999\x14\x14\x00+3.5"), 1)
	p = writeTemp(t, "far.edf", handEDF("0       ", "EDF+D", "01.06.26", "07.00.00", "2", "1", sig, bad[:len(data)]))
	if _, err := Open(p); !errors.Is(err, ErrTooLarge) {
		t.Errorf("far onset: err %v, want ErrTooLarge", err)
	}
}

func TestEDFErrors(t *testing.T) {
	good := []edfSig{{"ECG", "mV", "-1", "1", "-32768", "32767", 2}}
	cases := []struct {
		name string
		b    []byte
		want error
		says string
	}{
		{"magic", handEDF("1       ", "", "01.06.26", "07.00.00", "1", "1", good, le16(1, 2)), ErrFormat, "version"},
		{"short", []byte("0       abc"), ErrTruncated, "fixed header"},
		{"records lie", handEDF("0       ", "", "01.06.26", "07.00.00", "99999999", "1", good, le16(1, 2)), ErrTruncated, "number of data records"},
		{"truncated record", handEDF("0       ", "", "01.06.26", "07.00.00", "2", "1", good, le16(1, 2, 3)), ErrTruncated, "number of data records"},
		{"zero duration", handEDF("0       ", "", "01.06.26", "07.00.00", "1", "0", good, le16(1, 2)), ErrHeader, "duration"},
		{"nan duration", handEDF("0       ", "", "01.06.26", "07.00.00", "1", "NaN", good, le16(1, 2)), ErrHeader, "duration"},
		{"date", handEDF("0       ", "", "32.13.26", "07.00.00", "1", "1", good, le16(1, 2)), ErrHeader, "start date"},
		{"digital", handEDF("0       ", "", "01.06.26", "07.00.00", "1", "1", []edfSig{{"ECG", "mV", "-1", "1", "5", "5", 2}}, le16(1, 2)), ErrHeader, "digital"},
		{"physical", handEDF("0       ", "", "01.06.26", "07.00.00", "1", "1", []edfSig{{"ECG", "mV", "1", "1", "0", "5", 2}}, le16(1, 2)), ErrHeader, "physical"},
		{"samples", handEDF("0       ", "", "01.06.26", "07.00.00", "1", "1", []edfSig{{"ECG", "mV", "-1", "1", "0", "5", 0}}, nil), ErrHeader, "number of samples"},
		{"huge record", handEDF("0       ", "", "01.06.26", "07.00.00", "1", "1", []edfSig{{"ECG", "mV", "-1", "1", "0", "5", 99999999}}, nil), ErrTooLarge, "data record"},
	}
	for _, c := range cases {
		p := writeTemp(t, c.name+".edf", c.b)
		_, err := Open(p)
		if !errors.Is(err, c.want) || !strings.Contains(err.Error(), c.says) || !strings.Contains(err.Error(), p) {
			t.Errorf("%s: err %v, want %v naming %q and the file", c.name, err, c.want, c.says)
		}
	}
	// The signal count lies: the header-bytes field disagrees with it.
	b := handEDF("0       ", "", "01.06.26", "07.00.00", "1", "1", good, le16(1, 2))
	copy(b[252:256], "9999")
	if _, err := Open(writeTemp(t, "ns.edf", b)); !errors.Is(err, ErrHeader) {
		t.Errorf("signal count: %v", err)
	}
}

// demoRecording is a small invented recording: a trail runner's chest strap.
func demoRecording() *Recording {
	rec := &Recording{Name: "demo", Start: time.Date(2026, 6, 1, 6, 30, 0, 0, time.UTC), StartKnown: true}
	ecg := make([]float64, 250*8)
	for i := range ecg {
		x := float64(i) / 250
		ecg[i] = 0.1*math.Sin(2*math.Pi*1.5*x) + math.Exp(-math.Pow(math.Mod(x, 0.8)-0.4, 2)/0.0002)
	}
	ecg[400], ecg[401] = nan, nan
	rc := make([]float64, 25*8)
	for i := range rc {
		rc[i] = 3.2 * math.Sin(2*math.Pi*0.3*float64(i)/25)
	}
	rec.Channels = []Channel{{Name: "ECG", Unit: "mV", RateHz: 250, Samples: ecg}, {Name: "Resp chest", Unit: "V", RateHz: 25, Samples: rc}}
	rec.Annotations = []Annotation{{Time: 1.25, Duration: 2, Sample: -1, Text: "interval 1"}, {Time: 6.5, Sample: -1, Text: "cool-down"}}
	return rec
}

func TestEDFWriteReadRoundTrip(t *testing.T) {
	rec := demoRecording()
	var buf bytes.Buffer
	if err := WriteEDF(&buf, rec, EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	p := writeTemp(t, "demo.edf", buf.Bytes())
	back, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	if back.Format != "edf+c" || !back.Start.Equal(rec.Start) || len(back.Channels) != 2 {
		t.Fatalf("format %s start %v channels %d", back.Format, back.Start, len(back.Channels))
	}
	for i, c := range rec.Channels {
		b := back.Channels[i]
		if b.Name != c.Name || b.Unit != c.Unit || b.RateHz != c.RateHz || len(b.Samples) != len(c.Samples) || b.Role != GuessRole(c.Name, c.Unit) {
			t.Fatalf("channel %d: %s %s %v %d", i, b.Name, b.Unit, b.RateHz, len(b.Samples))
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range c.Samples {
			if !math.IsNaN(v) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		step := (hi - lo) / 65534 * 1.001 // 16-bit quantisation; the written range is rounded outwards
		for k, v := range c.Samples {
			if math.IsNaN(v) != math.IsNaN(b.Samples[k]) || math.Abs(v-b.Samples[k]) > step {
				t.Fatalf("channel %d sample %d: %v read back as %v (step %v)", i, k, v, b.Samples[k], step)
			}
		}
	}
	if g := back.Channels[0].Gaps; len(g) != 1 || math.Abs(g[0].Start-1.6) > 1e-9 || math.Abs(g[0].End-1.608) > 1e-9 {
		t.Errorf("NaN samples 400-401 should read back as gap [1.6, 1.608): %v", g)
	}
	if len(back.Annotations) != 2 || back.Annotations[0].Text != "interval 1" || back.Annotations[0].Duration != 2 ||
		back.Annotations[0].Time != 1.25 || back.Annotations[1].Time != 6.5 {
		t.Errorf("annotations %+v", back.Annotations)
	}
	// Re-writing what was read gives the same bytes.
	var again bytes.Buffer
	if err := WriteEDF(&again, back, EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(again.Bytes(), buf.Bytes()) {
		t.Errorf("re-written EDF differs")
	}
}

func TestEDFWriteAnnotationOnlyAndEmpty(t *testing.T) {
	rec := &Recording{Name: "notes", Start: time.Date(2026, 6, 1, 5, 0, 0, 0, time.UTC), StartKnown: true}
	for i := 0; i < 40; i++ { // more annotations than fit one record's default space
		rec.Annotations = append(rec.Annotations, Annotation{Time: float64(i) * 0.5, Sample: -1, Text: fmt.Sprintf("split %d of the hill repeats", i)})
	}
	var buf bytes.Buffer
	if err := WriteEDF(&buf, rec, EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	back, err := Open(writeTemp(t, "notes.edf", buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if len(back.Channels) != 0 || len(back.Annotations) != 40 || back.Annotations[39].Text != "split 39 of the hill repeats" || back.Annotations[39].Time != 19.5 {
		t.Fatalf("%d channels, %d annotations", len(back.Channels), len(back.Annotations))
	}
	empty := &Recording{Name: "empty", Channels: []Channel{{Name: "ECG", Unit: "mV", RateHz: 128}}}
	buf.Reset()
	if err := WriteEDF(&buf, empty, EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	back, err = Open(writeTemp(t, "empty.edf", buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	// One record of padding, all invalid; the unknown start is written as
	// the EDF+ anonymous 01.01.85 00.00.00.
	if c := back.Channels[0]; len(c.Samples) != 128 || !math.IsNaN(c.Samples[0]) || back.Start.Year() != 1985 {
		t.Errorf("empty channel: %d samples, start %v", len(c.Samples), back.Start)
	}
	bad := &Recording{Channels: []Channel{{Name: "x", RateHz: 0.3333}}}
	if err := WriteEDF(&buf, bad, EDFWriteOptions{}); !errors.Is(err, ErrFormat) {
		t.Errorf("rate without a whole-sample record: %v", err)
	}
}
