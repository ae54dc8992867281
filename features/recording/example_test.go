package recording_test

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"log"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
)

// Open reads any supported file into one Recording; here a small EDF+ file
// made by the fixture generator (4 s of an invented trail run).
func ExampleOpen() {
	rec, err := recording.Open("testdata/run.edf")
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(rec.Format, rec.Start.Format("2006-01-02T15:04:05Z07:00"), rec.Duration(), "s")
	for _, c := range rec.Channels {
		fmt.Printf("%s [%s] %g Hz, %d samples, role %v\n", c.Name, c.Unit, c.RateHz, len(c.Samples), c.Role)
	}
	for _, a := range rec.Annotations {
		fmt.Printf("%.1f s (+%.1f s): %s\n", a.Time, a.Duration, a.Text)
	}
	if ecg, ok := rec.Channel(recording.RoleECG); ok {
		fmt.Println("ECG lead:", ecg.Name)
	}
	// Output:
	// edf+c 2026-06-01T06:30:00Z 4 s
	// ECG [mV] 100 Hz, 400 samples, role ecg
	// Resp chest [V] 10 Hz, 40 samples, role rib_cage
	// 0.5 s (+0.0 s): interval start
	// 3.0 s (+1.0 s): cool-down
	// ECG lead: ECG
}

// OpenStream reads a recording in chunks of frames (for EDF, data records),
// so a days-long file never sits in memory whole.
func ExampleOpenStream() {
	r, err := recording.OpenStream("testdata/run.edf")
	if err != nil {
		log.Fatal(err)
	}
	defer r.Close()
	for {
		c, err := r.Next(2) // two 1-s data records at a time
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("frames %d-%d from %.0f s: %d ECG samples, %d band samples\n", c.Frame, c.Frame+int64(c.N)-1, c.Start, len(c.Samples[0]), len(c.Samples[1]))
	}
	// Output:
	// frames 0-1 from 0 s: 200 ECG samples, 20 band samples
	// frames 2-3 from 2 s: 200 ECG samples, 20 band samples
}

// A CSV export with jittered timestamps is resampled onto a uniform grid,
// and the result says so. The fixture delays sample 3 of every 10 by 3 ms
// and advances sample 7 by 2 ms: intervals of 17 to 23 ms around a 20 ms
// median, so the largest deviation is 3 ms (derived).
func ExampleOpenWith_csv() {
	rec, err := recording.OpenWith("testdata/watch.csv", recording.Options{})
	if err != nil {
		log.Fatal(err)
	}
	r := rec.Resample
	fmt.Printf("%s at %g Hz: %d rows -> %d samples, median interval %.0f ms, max jitter %.0f ms\n",
		r.Method, r.RateHz, r.SourceSamples, r.OutputSamples, r.MedianS*1000, r.MaxJitterS*1000)
	for _, c := range rec.Channels {
		fmt.Println(c.Name, c.Unit, c.Role)
	}
	for _, a := range rec.Annotations {
		fmt.Printf("%s from %.2f s for %.2f s\n", a.Text, a.Time, a.Duration)
	}
	// Output:
	// linear interpolation onto a uniform grid at 50 Hz: 50 rows -> 50 samples, median interval 20 ms, max jitter 3 ms
	// acc_x m/s2 acc_x
	// acc_y m/s2 acc_y
	// acc_z m/s2 acc_z
	// walk from 0.00 s for 0.50 s
	// run from 0.50 s for 0.48 s
}

// Beats found by a detector can be written as a WFDB annotation file that
// PhysioNet tools read, and read back.
func ExampleWriteWFDBAnnotations() {
	beats := []recording.Annotation{{Sample: 100, Code: "N"}, {Sample: 460, Code: "V"}, {Sample: 2000, Code: "N", Text: "after a pause"}}
	var buf bytes.Buffer
	if err := recording.WriteWFDBAnnotations(&buf, beats, 360); err != nil {
		log.Fatal(err)
	}
	back, err := recording.ParseWFDBAnnotations(buf.Bytes(), 360)
	if err != nil {
		log.Fatal(err)
	}
	for _, a := range back {
		fmt.Printf("%s at %.3f s beat=%v %q\n", a.Code, a.Time, a.IsBeat(), a.Text)
	}
	fmt.Println(buf.Len(), "bytes")
	// Output:
	// N at 0.278 s beat=true ""
	// V at 1.278 s beat=true ""
	// N at 5.556 s beat=true "after a pause"
	// 30 bytes
}

// A phone export without a header whose first column is a clock since boot
// in nanoseconds (the step-counter layout): name the columns, declare the
// unit and say the clock is relative; Options.Start is then the wall-clock
// time of the first row. (Undeclared, 2.46e12 would look like a Unix
// millisecond in 2047 and be reported as such in Recording.Warnings.)
func ExampleReadCSV_sinceBoot() {
	in := "2461035888559,2.29,6.77,6.65\n2461045888559,1.61,6.12,6.84\n2461055888559,1.42,5.91,7.03\n"
	start := time.Date(2017, 9, 26, 10, 57, 18, 471e6, time.UTC)
	rec, err := recording.ReadCSV(strings.NewReader(in), "walk.csv", recording.CSVOptions{
		Columns:      []string{"t[ns]", "x[m/s2]", "y[m/s2]", "z[m/s2]"},
		RelativeTime: true,
	}, start)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(rec.Start.Format(time.RFC3339Nano), len(rec.Warnings), "warnings")
	for _, c := range rec.Channels {
		fmt.Printf("%s %s %g Hz %v\n", c.Name, c.Unit, c.RateHz, c.Samples)
	}
	// Output:
	// 2017-09-26T10:57:18.471Z 0 warnings
	// x m/s2 100 Hz [2.29 1.61 1.42]
	// y m/s2 100 Hz [6.77 6.12 5.91]
	// z m/s2 100 Hz [6.65 6.84 7.03]
}

// A time column holding Unix epoch milliseconds without a declared unit is
// recognised by its magnitude; the start is set and the inference reported.
func ExampleReadCSV_epochMilliseconds() {
	in := "timestamp,acc_x\n1657533977813,1\n1657533977823,2\n1657533977833,3\n"
	rec, err := recording.ReadCSV(strings.NewReader(in), "phone.csv", recording.CSVOptions{}, time.Time{})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(rec.Start.Format(time.RFC3339Nano), rec.StartKnown, rec.Channels[0].RateHz, "Hz")
	fmt.Println(errors.Is(rec.Warnings[0], recording.ErrInferred))
	// Output:
	// 2022-07-11T10:06:17.813Z true 100 Hz
	// true
}
