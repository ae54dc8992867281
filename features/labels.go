package features

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
)

// Label is one labelled interval in UTC (a clinical annotation, a
// self-report, a scored event). Start == End marks a point event.
type Label struct {
	Start time.Time `json:"start"`
	End   time.Time `json:"end"`
	Name  string    `json:"label"`
}

// ReadLabelsCSV reads labelled UTC intervals from CSV rows start,end,label
// with RFC 3339 times (e.g. 2026-06-01T14:03:00Z). A first row whose first
// field is "start" is taken as a header. Errors name the line and wrap
// ErrInput.
func ReadLabelsCSV(r io.Reader) ([]Label, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = 3
	cr.TrimLeadingSpace = true
	var out []Label
	for line := 1; ; line++ {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			return out, nil
		}
		if err != nil {
			return nil, fmt.Errorf("features: labels csv: %w: %w", ErrInput, err)
		}
		if line == 1 && strings.EqualFold(strings.TrimSpace(rec[0]), "start") {
			continue
		}
		s, err1 := time.Parse(time.RFC3339Nano, strings.TrimSpace(rec[0]))
		e, err2 := time.Parse(time.RFC3339Nano, strings.TrimSpace(rec[1]))
		if err := errors.Join(err1, err2); err != nil {
			return nil, fmt.Errorf("features: labels csv line %d: times must be RFC 3339: %v: %w", line, err, ErrInput)
		}
		if e.Before(s) {
			return nil, fmt.Errorf("features: labels csv line %d: end %v before start %v: %w", line, e, s, ErrInput)
		}
		name := strings.TrimSpace(rec[2])
		if labelKey(name) == "" {
			return nil, fmt.Errorf("features: labels csv line %d: label %q has no letters or digits: %w", line, name, ErrInput)
		}
		out = append(out, Label{Start: s.UTC(), End: e.UTC(), Name: name})
	}
}

// labelKey turns a label into its column-name part: lower case, runs of
// anything but letters and digits become one underscore.
func labelKey(s string) string {
	var b strings.Builder
	us := false
	for _, r := range strings.ToLower(s) {
		if (r >= 'a' && r <= 'z') || (r >= '0' && r <= '9') {
			b.WriteRune(r)
			us = false
		} else if !us && b.Len() > 0 {
			b.WriteByte('_')
			us = true
		}
	}
	return strings.TrimRight(b.String(), "_")
}

// AnnotationLabels returns the labels a recording's annotations give:
// WFDB rhythm changes (code "+" with AUX text such as "(AFIB") become
// intervals "rhythm_afib" lasting until the next rhythm change or the end;
// other non-beat annotations become intervals named by their text (or code)
// with their own duration (EDF+ annotations; WFDB point events). Beat
// annotations are not labels, and neither are reference-breath marks
// ("vref=0.80 L", see BreathCalibration): they calibrate the bands, they do
// not describe the subject. end is the recording extent in seconds. The
// labels are sorted by start.
func AnnotationLabels(rec *recording.Recording, end float64) []Label {
	origin := originOf(rec)
	at := func(s float64) time.Time { return origin.Add(time.Duration(math.Round(s * 1e9))) }
	var out []Label
	var rhythm *Label
	for _, a := range rec.Annotations {
		if a.IsBeat() || IsReferenceBreathMark(a) {
			continue
		}
		if a.Code == "+" {
			if rhythm != nil {
				rhythm.End = at(a.Time)
				out = append(out, *rhythm)
				rhythm = nil
			}
			if k := labelKey(strings.TrimPrefix(a.Text, "(")); k != "" {
				rhythm = &Label{Start: at(a.Time), Name: "rhythm_" + k}
			}
			continue
		}
		name := a.Text
		if strings.TrimSpace(name) == "" {
			name = a.Code
		}
		if labelKey(name) == "" {
			continue
		}
		out = append(out, Label{Start: at(a.Time), End: at(a.Time + math.Max(a.Duration, 0)), Name: name})
	}
	if rhythm != nil {
		rhythm.End = at(math.Max(end, rhythm.Start.Sub(origin).Seconds()))
		out = append(out, *rhythm)
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Start.Before(out[j].Start) })
	return out
}

// labelSet holds, per label key, its intervals in seconds from the origin.
type labelSet struct {
	keys  []string
	ivs   [][][2]float64 // per key: merged intervals sorted by start
	ends  [][]float64    // per key: every interval's end, sorted
	start [][]float64    // per key: every interval's start, sorted
	span  float64        // overlap span before the row time, s
}

func newLabelSet(rec *recording.Recording, cfg Config, origin time.Time) (*labelSet, error) {
	var all []Label
	if !cfg.NoAnnotationLabels {
		end := 0.0
		for _, c := range rec.Channels {
			if c.RateHz > 0 {
				end = math.Max(end, float64(len(c.Samples))/c.RateHz)
			}
		}
		all = append(all, AnnotationLabels(rec, end)...)
	}
	all = append(all, cfg.Labels...)
	ls := &labelSet{span: cfg.LabelSpan.Seconds()}
	byKey := map[string][][2]float64{}
	for i, l := range all {
		k := labelKey(l.Name)
		if k == "" {
			return nil, fmt.Errorf("features: label %d %q has no letters or digits: %w", i, l.Name, ErrConfig)
		}
		if l.End.Before(l.Start) {
			return nil, fmt.Errorf("features: label %d %q ends before it starts: %w", i, l.Name, ErrConfig)
		}
		byKey[k] = append(byKey[k], [2]float64{l.Start.Sub(origin).Seconds(), l.End.Sub(origin).Seconds()})
	}
	for k := range byKey {
		ls.keys = append(ls.keys, k)
	}
	sort.Strings(ls.keys)
	for _, k := range ls.keys {
		iv := byKey[k]
		sort.Slice(iv, func(i, j int) bool { return iv[i][0] < iv[j][0] })
		var st, en []float64
		var merged [][2]float64
		for _, x := range iv {
			st = append(st, x[0])
			en = append(en, x[1])
			if n := len(merged); n > 0 && x[0] <= merged[n-1][1] {
				merged[n-1][1] = math.Max(merged[n-1][1], x[1])
				continue
			}
			merged = append(merged, x)
		}
		sort.Float64s(en)
		ls.ivs, ls.ends, ls.start = append(ls.ivs, merged), append(ls.ends, en), append(ls.start, st)
	}
	return ls, nil
}

// columns returns three columns per label key.
func (ls *labelSet) columns() []Column {
	var cols []Column
	for _, k := range ls.keys {
		cols = append(cols,
			Column{Name: "label_" + k + "_overlap_frac", Kind: Float, Family: "label", Doc: "fraction of the label span before the row time covered by label " + k},
			Column{Name: "label_" + k + "_since_s", Kind: Float, Family: "label", Doc: "seconds from the end of the last " + k + " event (ended at or before the row time) to the row time; empty when none"},
			Column{Name: "label_" + k + "_until_s", Kind: Float, Family: "label", Doc: "seconds from the row time to the start of the next " + k + " event (starting after it); empty when none"})
	}
	return cols
}

// fill writes the label columns for a row at time t (s from the origin).
func (ls *labelSet) fill(t float64, dst []float64) {
	for i := range ls.keys {
		o := 3 * i
		lo := t - ls.span
		cov := 0.0
		for _, iv := range ls.ivs[i] {
			if iv[0] >= t {
				break
			}
			if a, b := math.Max(iv[0], lo), math.Min(iv[1], t); b > a {
				cov += b - a
			}
		}
		dst[o] = math.NaN()
		if ls.span > 0 {
			dst[o] = math.Min(cov/ls.span, 1)
		}
		dst[o+1] = math.NaN()
		if j := sort.Search(len(ls.ends[i]), func(j int) bool { return ls.ends[i][j] > t }); j > 0 {
			dst[o+1] = t - ls.ends[i][j-1]
		}
		dst[o+2] = math.NaN()
		if j := sort.Search(len(ls.start[i]), func(j int) bool { return ls.start[i][j] > t }); j < len(ls.start[i]) {
			dst[o+2] = ls.start[i][j] - t
		}
	}
}
