package report

import (
	"bytes"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/sim"
	"github.com/tidalbeat/tidalbeat/window"
)

// dayRecording wraps the simulated trail-running day (internal/sim) in the
// recording model, as the demo command does.
func dayRecording(t *testing.T) *recording.Recording {
	t.Helper()
	d, err := sim.DaySimulate(1)
	if err != nil {
		t.Fatal(err)
	}
	rec := &recording.Recording{Name: "trail-day", Start: d.Start, StartKnown: true}
	for _, s := range d.Signals() {
		var gaps []window.Interval
		for _, g := range s.Gaps {
			gaps = append(gaps, window.Interval{Start: g.StartS, End: g.EndS})
		}
		rec.Channels = append(rec.Channels, recording.Channel{Name: s.Name, Unit: s.Unit, RateHz: s.RateHz,
			Samples: s.Samples, Gaps: gaps, Role: recording.GuessRole(s.Name, s.Unit)})
	}
	for _, l := range d.Labels() {
		rec.Annotations = append(rec.Annotations, recording.Annotation{Time: l.StartS, Duration: l.EndS - l.StartS, Sample: -1, Text: l.Text})
	}
	return rec
}

// On a recording with every modality, every figure carries data: an empty
// figure has at most 9 drawn elements (title and the "no data" note, see
// TestWriteEmptyInput), so 20 is a floor that only a drawn figure reaches.
// The document parses as XML and reaches nothing outside itself.
func TestDayReportDrawsEveryFigure(t *testing.T) {
	a, err := Analyze(dayRecording(t), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(a.Missing) != 0 {
		t.Errorf("modalities reported missing: %v", a.Missing)
	}
	var buf bytes.Buffer
	if err := Write(&buf, a.Input); err != nil {
		t.Fatal(err)
	}
	st := checkDocument(t, buf.Bytes())
	for _, id := range FigureIDs {
		if n := st.figures[id]; n < 20 {
			t.Errorf("figure %s: %d drawn elements, want a drawn figure (>= 20)", id, n)
		}
	}
	if bytes.Contains(buf.Bytes(), []byte("(no data:")) {
		t.Error("a figure says it has no data")
	}
}
