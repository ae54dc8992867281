package recording

import (
	"bufio"
	"bytes"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// edflibTool compiles testdata/edflib_check.c against EDFlib, the EDF+
// reference library (Debian package libedf-dev), into a temporary
// directory, or skips when gcc or the library is absent.
func edflibTool(t *testing.T) string {
	t.Helper()
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("gcc not found: install gcc and libedf-dev (apt-get install -y gcc libedf-dev) for the EDFlib cross-check")
	}
	if _, err := os.Stat("/usr/include/edflib.h"); err != nil {
		t.Skip("/usr/include/edflib.h not found: apt-get install -y libedf-dev for the EDFlib cross-check")
	}
	bin := filepath.Join(t.TempDir(), "edflib_check")
	out, err := exec.Command(gcc, "-O1", "-o", bin, "testdata/edflib_check.c", "-ledf", "-lm").CombinedOutput()
	if err != nil {
		t.Skipf("compiling testdata/edflib_check.c against EDFlib failed (%v): %s", err, out)
	}
	return bin
}

// TestEDFlibWritesTidalbeatReads: EDFlib writes EDF+ and BDF+ files, this
// package reads them; the signals are the formulas in edflib_check.c.
func TestEDFlibWritesTidalbeatReads(t *testing.T) {
	tool := edflibTool(t)
	for _, kind := range []string{"edf", "bdf"} {
		p := filepath.Join(t.TempDir(), "edflib."+kind)
		if out, err := exec.Command(tool, "write", kind, p).CombinedOutput(); err != nil {
			t.Fatalf("%s: %v %s", kind, err, out)
		}
		rec, err := Open(p)
		if err != nil {
			t.Fatal(err)
		}
		if want := kind + "+c"; rec.Format != want {
			t.Errorf("format %s, want %s", rec.Format, want)
		}
		if want := time.Date(2026, 6, 1, 8, 15, 30, 0, time.UTC); !rec.Start.Equal(want) {
			t.Errorf("%s: start %v, want %v", kind, rec.Start, want)
		}
		if len(rec.Channels) != 2 {
			t.Fatalf("%s: %d channels", kind, len(rec.Channels))
		}
		bits := 16.0
		if kind == "bdf" {
			bits = 24
		}
		formulas := []func(t float64) float64{
			func(t float64) float64 { return 1000*math.Sin(2*math.Pi*1.2*t) + 200*math.Sin(2*math.Pi*7*t) },
			func(t float64) float64 { return 500 * math.Sin(2*math.Pi*0.25*t) },
		}
		for i, want := range []struct {
			name, unit string
			rate, span float64
			role       Role
		}{{"ECG", "uV", 256, 6000, RoleECG}, {"Resp chest", "mV", 32, 2000, RoleRibCage}} {
			c := rec.Channels[i]
			if c.Name != want.name || c.Unit != want.unit || c.RateHz != want.rate || len(c.Samples) != int(want.rate*10) || c.Role != want.role {
				t.Fatalf("%s channel %d: %q %q %v Hz %d samples role %v", kind, i, c.Name, c.Unit, c.RateHz, len(c.Samples), c.Role)
			}
			// Within 1.5 digital steps: EDFlib's conversion to digital
			// values may truncate (up to a step) where rounding would give half.
			step := 1.5 * want.span / math.Pow(2, bits)
			for k, v := range c.Samples {
				if x := formulas[i](float64(k) / c.RateHz); math.Abs(v-x) > step {
					t.Fatalf("%s channel %d sample %d: %v, formula %v (step %v)", kind, i, k, v, x, step)
				}
			}
		}
		// EDFlib's own reading of its file gives the same physical values.
		out, err := exec.Command(tool, "read", p).CombinedOutput()
		if err != nil {
			t.Fatalf("%v %s", err, out)
		}
		compareEDFlibSamples(t, out, rec)
		if len(rec.Annotations) != 2 || rec.Annotations[0].Text != "lap start" || rec.Annotations[0].Time != 2.5 ||
			rec.Annotations[0].Duration != 1 || rec.Annotations[1].Text != "cool-down" || rec.Annotations[1].Time != 7.25 {
			t.Errorf("%s annotations %+v", kind, rec.Annotations)
		}
	}
}

// TestTidalbeatWritesEDFlibReads: WriteEDF makes a file and EDFlib must
// read the same samples, start and annotations.
func TestTidalbeatWritesEDFlibReads(t *testing.T) {
	tool := edflibTool(t)
	rec := demoRecording()
	rec.Start = rec.Start.Add(250 * time.Millisecond) // a sub-second start (EDF+ first-record onset)
	var buf bytes.Buffer
	if err := WriteEDF(&buf, rec, EDFWriteOptions{}); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "tidal.edf")
	os.WriteFile(p, buf.Bytes(), 0o644)
	out, err := exec.Command(tool, "read", p).CombinedOutput()
	if err != nil {
		t.Fatalf("EDFlib refused the file: %v %s", err, out)
	}
	mine, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	var anns []string
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(nil, 1<<24)
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		switch f[0] {
		case "filetype":
			if f[1] != "1" { // EDFLIB_FILETYPE_EDFPLUS
				t.Errorf("EDFlib file type %s, want 1 (EDF+)", f[1])
			}
		case "start":
			if f[1] != "2026-06-01" || f[2] != "06:30:00" || f[3] != "2500000" { // 0.25 s in 100 ns units
				t.Errorf("EDFlib start %v", f[1:])
			}
		case "signals":
			if f[1] != "2" {
				t.Errorf("EDFlib sees %s signals", f[1])
			}
		case "annotation":
			anns = append(anns, strings.Join(f[1:], " "))
		}
	}
	compareEDFlibSamples(t, out, mine)
	// Onsets in EDFlib's 100 ns units, relative to the start of the file
	// (the header's start plus the 0.25 s first-record onset), as
	// Tidalbeat's Annotation.Time is: 1.25 s and 6.5 s; -10000000 = no duration.
	want := []string{"12500000 20000000 interval 1", "65000000 -10000000 cool-down"}
	if strings.Join(anns, "|") != strings.Join(want, "|") {
		t.Errorf("EDFlib annotations %q, want %q", anns, want)
	}
	if !mine.Start.Equal(rec.Start) || mine.Annotations[0].Time != 1.25 {
		t.Errorf("Tidalbeat reads start %v, first annotation %v s", mine.Start, mine.Annotations[0].Time)
	}
}

// compareEDFlibSamples checks the "samples" lines printed by edflib_check
// read against rec's channels (to the 10 significant digits printed).
func compareEDFlibSamples(t *testing.T, out []byte, rec *Recording) {
	t.Helper()
	seen := 0
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(nil, 1<<24)
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		if len(f) < 2 || f[0] != "samples" {
			continue
		}
		seen++
		i, _ := strconv.Atoi(f[1])
		c := rec.Channels[i]
		if len(f)-2 != len(c.Samples) {
			t.Fatalf("signal %d: EDFlib reads %d samples, Tidalbeat %d", i, len(f)-2, len(c.Samples))
		}
		for k, s := range f[2:] {
			v, _ := strconv.ParseFloat(s, 64)
			if math.IsNaN(c.Samples[k]) {
				continue // written below the digital minimum; EDFlib shows a number there
			}
			if math.Abs(v-c.Samples[k]) > 1e-8*math.Max(1, math.Abs(v)) {
				t.Fatalf("signal %d sample %d: EDFlib %v, Tidalbeat %v", i, k, v, c.Samples[k])
			}
		}
	}
	if seen != len(rec.Channels) {
		t.Errorf("EDFlib printed %d signals, Tidalbeat has %d", seen, len(rec.Channels))
	}
}
