package recording

// Fixture generator. The small files in testdata/ are made by this file:
//
//	go test ./features/recording -run TestFixtures -update
//
// Without -update, TestFixtures checks that the files in testdata/ are
// exactly what the generator makes, so the fixtures and their description
// here cannot drift apart. Nothing in testdata/ is copied from ../shared.

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"
)

var update = flag.Bool("update", false, "rewrite the generated fixtures in testdata/")

// fixtureAmp is the sine amplitude used per format, inside each range.
var fixtureAmp = map[int]float64{8: 100, 80: 100, 16: 20000, 61: 20000, 160: 20000, 212: 1500, 310: 400, 311: 400, 24: 5e6, 32: 1e9}

const fixtureN = 50 // samples per signal in the formats record

// fixtureValue is sample i of the formats-record signal in format f: a sine
// of period 25 samples, with sample 7 set to the format's invalid value.
func fixtureValue(f, i int) int64 {
	info := wfdbFormats[f]
	if info.hasInvalid && i == 7 {
		return info.invalid
	}
	return int64(math.Round(fixtureAmp[f] * math.Sin(2*math.Pi*float64(i)/25)))
}

func checksum16(v []int64) int {
	var s int64
	for _, x := range v {
		s += x
	}
	return int(int16(uint16(s)))
}

// fixtureFiles returns every generated file by name.
func fixtureFiles() map[string][]byte {
	files := map[string][]byte{}
	// formats: one signal per format, each in its own file; the format-16
	// file has a 6-byte prolog (byte offset).
	var hea strings.Builder
	fmt.Fprintf(&hea, "# made by fixtures_test.go: go test ./features/recording -run TestFixtures -update\n")
	fmt.Fprintf(&hea, "formats %d 100 %d 12:30:05 01/06/2026\n", len(WFDBFormats()), fixtureN)
	for _, f := range WFDBFormats() {
		v := make([]int64, fixtureN)
		for i := range v {
			v[i] = fixtureValue(f, i)
		}
		stored := v
		if f == 8 {
			stored = make([]int64, fixtureN)
			prev := int64(0)
			for i, x := range v {
				stored[i] = x - prev
				prev = x
			}
		}
		dat := encodeWFDB(nil, f, stored)
		spec := fmt.Sprint(f)
		if f == 16 {
			dat = append([]byte("PROLOG"), dat...)
			spec += "+6"
		}
		name := fmt.Sprintf("formats_%d.dat", f)
		files[name] = dat
		fmt.Fprintf(&hea, "%s %s 100(0)/uV 0 0 %d %d 0 fmt%d signal\n", name, spec, v[0], checksum16(v), f)
	}
	files["formats.hea"] = []byte(strings.ReplaceAll(hea.String(), "\n", "\r\n"))

	// multi: a multi-frequency record, two signals in one format-16 file:
	// "fast" with 2 samples per frame and "slow" with 1 and a skew of 1
	// frame. Frame rate 10 Hz, 20 frames plus the skewed frame.
	var d []int64
	for f := 0; f <= 20; f++ {
		d = append(d, int64(100*f), int64(100*f+50), int64(-f)) // fast, fast, slow
	}
	files["multi.dat"] = encodeWFDB(nil, 16, d)
	fast := make([]int64, 0, 40)
	slow := make([]int64, 0, 20)
	for f := 0; f < 20; f++ {
		fast = append(fast, int64(100*f), int64(100*f+50))
		slow = append(slow, int64(-(f + 1)))
	}
	files["multi.hea"] = []byte(fmt.Sprintf("multi 2 10 20\nmulti.dat 16x2 10/mV 16 0 0 %d 0 fast\nmulti.dat 16:1 1(-5)/cm 16 0 0 %d 0 slow\n# multi-frequency fixture\n",
		checksum16(fast), checksum16(slow)))

	// annonly: an annotation-only record whose annotations use every MIT
	// pseudo-code: SKIP (a long interval), NUM, SUB, CHN and AUX.
	files["annonly.hea"] = []byte("annonly 0 250\n")
	var atr bytes.Buffer
	WriteWFDBAnnotations(&atr, fixtureAnnotations(), 250)
	files["annonly.atr"] = atr.Bytes()

	// run.edf: 4 s of an invented trail run (ECG at 100 Hz, rib-cage band
	// at 10 Hz) with two annotations, written by WriteEDF; used by the
	// examples.
	run := &Recording{Name: "run", Start: time.Date(2026, 6, 1, 6, 30, 0, 0, time.UTC), StartKnown: true}
	ecg := make([]float64, 400)
	for i := range ecg {
		ecg[i] = math.Round(1000*math.Exp(-math.Pow(math.Mod(float64(i)/100, 0.5)-0.25, 2)/0.0005)) / 1000
	}
	rc := make([]float64, 40)
	for i := range rc {
		rc[i] = math.Round(1000*math.Sin(2*math.Pi*0.5*float64(i)/10)) / 1000
	}
	run.Channels = []Channel{{Name: "ECG", Unit: "mV", RateHz: 100, Samples: ecg}, {Name: "Resp chest", Unit: "V", RateHz: 10, Samples: rc}}
	run.Annotations = []Annotation{{Time: 0.5, Sample: -1, Text: "interval start"}, {Time: 3, Duration: 1, Sample: -1, Text: "cool-down"}}
	var edf bytes.Buffer
	if err := WriteEDF(&edf, run, EDFWriteOptions{}); err != nil {
		panic(err)
	}
	files["run.edf"] = edf.Bytes()

	// watch.csv: an invented watch export with jittered timestamps.
	var csvb strings.Builder
	csvb.WriteString("# made by fixtures_test.go: go test ./features/recording -run TestFixtures -update\n")
	csvb.WriteString("timestamp,acc_x[m/s2],acc_y[m/s2],acc_z[m/s2],activity\n")
	base := time.Date(2026, 6, 1, 6, 45, 0, 0, time.UTC)
	jitter := []int{0, 0, 0, 3, 0, 0, 0, -2, 0, 0}
	for i := 0; i < 50; i++ {
		ts := base.Add(time.Duration(i*20+jitter[i%10]) * time.Millisecond)
		act := "walk"
		if i >= 25 {
			act = "run"
		}
		fmt.Fprintf(&csvb, "%s,%.3f,%.3f,%.3f,%s\n", ts.Format("2006-01-02T15:04:05.000Z"), 0.1*float64(i%5), 0.2, 9.81, act)
	}
	files["watch.csv"] = []byte(csvb.String())
	return files
}

func fixtureAnnotations() []Annotation {
	return []Annotation{
		{Sample: 10, Code: "N"},
		{Sample: 300, Code: "V", Num: 2},
		{Sample: 300 + 5000, Code: "+", Text: "(AFIB"}, // 5000 > 1023: SKIP
		{Sample: 5400, Code: "~", Channel: 1, Subtype: 3},
		{Sample: 5401, Code: "A", Channel: 1, Text: "odd"},
		{Sample: 5401, Code: "\"", Text: "note"},
		{Sample: 9000, Code: "45"}, // a user-defined code (no mnemonic)
	}
}

func TestFixtures(t *testing.T) {
	files := fixtureFiles()
	names := make([]string, 0, len(files))
	for n := range files {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		p := filepath.Join("testdata", n)
		if *update {
			if err := os.WriteFile(p, files[n], 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		got, err := os.ReadFile(p)
		if err != nil {
			t.Fatalf("%v (run go test ./features/recording -run TestFixtures -update)", err)
		}
		if !bytes.Equal(got, files[n]) {
			t.Errorf("%s differs from the generator's output (run with -update)", p)
		}
	}
}
