package features

import (
	"math"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
)

// TestBadInputs runs recordings with unusable signals: every case must give
// a table (no panic, no error) whose affected family says why it is empty.
func TestBadInputs(t *testing.T) {
	n := 250 * 400
	fill := func(n int, v float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = v
		}
		return x
	}
	saw := make([]float64, n)
	for i := range saw {
		saw[i] = float64(i%250) / 250
	}
	cases := []struct {
		name   string
		chans  []recording.Channel
		col    string
		reason string
	}{
		{"all-NaN ECG", []recording.Channel{{Name: "e", RateHz: 250, Samples: fill(n, math.NaN()), Role: recording.RoleECG}}, "hrv_reason", "coverage"},
		{"flat ECG", []recording.Channel{{Name: "e", RateHz: 250, Samples: fill(n, 0.3), Role: recording.RoleECG}}, "hrv_reason", "coverage"},
		{"Inf ECG", []recording.Channel{{Name: "e", RateHz: 250, Samples: fill(n, math.Inf(-1)), Role: recording.RoleECG}}, "hrv_reason", "coverage"},
		{"ECG at 50 Hz", []recording.Channel{{Name: "e", RateHz: 50, Samples: saw[:20000], Role: recording.RoleECG}}, "hrv_reason", "outside"},
		{"sawtooth ECG", []recording.Channel{{Name: "e", RateHz: 250, Samples: saw, Role: recording.RoleECG}}, "hrv_coverage_frac", ""},
		{"one band", []recording.Channel{{Name: "r", RateHz: 50, Samples: saw[:20000], Role: recording.RoleRibCage}}, "breathing_reason", "both"},
		{"flat bands", []recording.Channel{
			{Name: "r", RateHz: 50, Samples: fill(20000, 1), Role: recording.RoleRibCage},
			{Name: "a", RateHz: 50, Samples: fill(15000, 1), Role: recording.RoleAbdomen}}, "breathing_coverage_frac", ""},
		{"accelerometer in furlongs", []recording.Channel{
			{Name: "x", Unit: "furlong", RateHz: 50, Samples: fill(3000, 0), Role: recording.RoleAccX},
			{Name: "y", Unit: "furlong", RateHz: 50, Samples: fill(3000, 0), Role: recording.RoleAccY},
			{Name: "z", Unit: "furlong", RateHz: 50, Samples: fill(3000, 1), Role: recording.RoleAccZ}}, "activity_reason", "unit"},
		{"axes of different lengths", []recording.Channel{
			{Name: "x", Unit: "g", RateHz: 50, Samples: fill(3000, 0), Role: recording.RoleAccX},
			{Name: "y", Unit: "g", RateHz: 50, Samples: fill(10, 0), Role: recording.RoleAccY},
			{Name: "z", Unit: "g", RateHz: 50, Samples: fill(3000, math.NaN()), Role: recording.RoleAccZ}}, "activity_coverage_frac", ""},
		{"one sample", []recording.Channel{{Name: "e", RateHz: 250, Samples: []float64{1}, Role: recording.RoleECG}}, "hrv_reason", ""},
	}
	for _, c := range cases {
		rec := &recording.Recording{Name: c.name, Start: testStart, Channels: c.chans}
		tab, err := Extract(rec, Config{})
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if len(tab.Rows) == 0 {
			t.Errorf("%s: no rows", c.name)
			continue
		}
		if c.reason != "" {
			got := tab.Strings(c.col)[len(tab.Rows)/2]
			if !strings.Contains(got, c.reason) {
				t.Errorf("%s: %s = %q, want it to mention %q", c.name, c.col, got, c.reason)
			}
		}
		// The stream must agree on bad input too.
		got := streamRows(t, rec, Config{}, nil, 0)
		rowsEqual(t, tab.Rows, got)
	}
}
