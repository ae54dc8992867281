package report

import (
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
)

// Reference-breath marks calibrate the bands (features.BreathCalibration);
// the report must not draw them as labelled segments.
func TestLabelSpansSkipReferenceBreaths(t *testing.T) {
	rec := &recording.Recording{Annotations: []recording.Annotation{
		{Time: 60, Duration: 4, Text: "vref=1.00 L"},
		{Time: 0, Duration: 480, Text: "rest"},
	}}
	spans, segs := labelSpans(rec)
	if len(spans) != 1 || spans[0].Label != "rest" || len(segs) != 1 {
		t.Fatalf("spans %+v segments %+v, want only the rest segment", spans, segs)
	}
}
