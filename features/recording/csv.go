package recording

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// CSV layout read by this package: a header row naming the columns (or the
// names in CSVOptions.Columns for files without one), then one row per
// sample time. One column holds the time: seconds from the recording
// start (a unit in the header such as "time[ms]" scales it: ns, us, ms, s,
// min), seconds since the Unix epoch (CSVOptions.EpochTime), or ISO-8601 /
// RFC 3339 timestamps (UTC when they carry no offset).
//
// A numeric time column without a declared unit (neither in the header nor
// in CSVOptions.Units) has its unit inferred from the magnitude of its first
// and last values when that is unambiguous: Unix epoch times for dates
// 2000..2100 fall in distinct ranges in seconds (9.5e8..4.1e9), milliseconds
// (9.5e11..4.1e12), microseconds (9.5e14..4.1e15) and nanoseconds
// (9.5e17..4.1e18), and set the recording start; values below 9.5e8 are
// seconds from the start. A declared unit with values that are, in seconds,
// dates 2000..2100 makes them epoch times. Every inference is reported in
// Recording.Warnings (wrapping ErrInferred) and, for resampled files, in
// ResampleReport.TimeUnit/TimeEpoch/TimeInferred; values fitting none of the
// ranges are read as seconds with a warning. A declared unit, EpochTime or
// RelativeTime always wins.
//
// Clocks since boot are not epoch times but can fall in these ranges (41
// minutes of uptime in nanoseconds is 2.5e12, an epoch millisecond in 2047):
// declare them. Phone step-counter exports, with no header and
// "timestamp (ns since boot), acc x, y, z, ..." columns, read with
//
//	CSVOptions{Columns: []string{"t[ns]", "x[m/s2]", "y[m/s2]", "z[m/s2]", ...}, RelativeTime: true}
//
// plus Options.Start for the wall-clock time of the first row when known.
// A first row made only of numbers is taken as a missing header (an error
// asking for CSVOptions.Columns), never silently as column names.
//
// Every other column is
// a channel whose header may carry its unit in brackets or parentheses,
// "acc_x[m/s2]" or "acc_x (m/s2)". A column whose first value is not a number
// is a label column: each change of label becomes an annotation lasting until
// the next change. Empty cells, "NaN" and "NA" are invalid samples. Lines
// starting with '#' are comments.
//
// Timestamps that are not uniform (phone and watch exports) are resampled
// by linear interpolation onto a uniform grid at the rate 1/median interval
// (or CSVOptions.RateHz) starting at the first timestamp. Intervals longer
// than the gap threshold are gaps (NaN), never bridged: the threshold is
// CSVOptions.GapFactor median intervals, widened for ordinary jitter to
// twice the 99th percentile interval (at most 10 medians; see
// CSVOptions.JitterPercentile), and is reported in
// ResampleReport.GapThresholdS together with the count of bridged intervals.
// Rows repeating the previous timestamp are merged (valid values averaged,
// the last label kept) and counted in ResampleReport.Duplicates; times that
// go backwards are an error.
// Recording.Resample reports the method and the timing jitter.

// CSVOptions adjusts the CSV reader. The zero value means the defaults.
type CSVOptions struct {
	// TimeColumn names the time column. When empty: the first column named
	// time, t, timestamp, datetime, date_time or time_s (any case, unit
	// suffix ignored), else the first column.
	TimeColumn string
	// Units sets units by column name, overriding units in the header
	// (for the time column too, e.g. {"timestamp": "ms"}).
	Units map[string]string
	// EpochTime says numeric times count from 1970-01-01T00:00:00Z (in
	// the declared unit; inferred from the magnitude when none is
	// declared, see ReadCSV), which fixes the start.
	EpochTime bool
	// RelativeTime says numeric times count from an arbitrary origin, such
	// as a clock since boot: they are never taken as Unix epoch times, a
	// time column without a unit is in seconds, and Options.Start (the
	// start argument of ReadCSV), when given, is the time of the first row.
	// It may not be combined with EpochTime.
	RelativeTime bool
	// RateHz is the resampling rate for irregular timestamps; 1/median
	// interval when zero.
	RateHz float64
	// GapFactor: an interval longer than GapFactor median intervals is a
	// gap, unless the jitter allowance below is larger. 3 when zero (common
	// practice: a few missed samples are interpolated, longer holes are
	// not).
	GapFactor float64
	// JitterPercentile and JitterFactor set the jitter allowance for
	// irregular timestamps: an interval is a gap only when it exceeds
	// max(GapFactor medians, JitterFactor times the JitterPercentile-th
	// percentile interval), the second term never above JitterCap
	// medians. Phones deliver samples in bursts: on the phone files of the
	// HAR dataset (Matey-Sanz et al. 2023) the intervals have a 9-10 ms
	// median but a 99th percentile of about 30-55 ms, so 3 medians alone
	// leaves typically 85 % (82-98 %) of the time valid. Defaults: 99th percentile, factor
	// 2, cap 10 medians (common practice for a robust jitter allowance;
	// the numbers were chosen on that interval distribution, not taken
	// from a publication). The allowance is used only with at least
	// jitterMinIntervals (100) intervals, so that a few holes cannot set
	// the percentile. A JitterFactor below zero turns it off (gaps at
	// GapFactor medians only).
	JitterPercentile float64
	// JitterFactor multiplies the JitterPercentile-th percentile interval;
	// 2 when zero, off when negative (see JitterPercentile).
	JitterFactor float64
	// JitterCap bounds the jitter allowance, in median intervals; 10 when
	// zero (see JitterPercentile).
	JitterCap float64
	// Comma is the field separator; ',' when zero.
	Comma rune
	// Columns names the columns of a file without a header row (units in
	// brackets allowed, e.g. "t[ns]"); when set, the first row is data.
	Columns []string
}

// ResampleReport says how irregular timestamps were put on a uniform grid and
// how irregular they were. Times are seconds.
type ResampleReport struct {
	Method        string  `json:"method"`         // "linear interpolation onto a uniform grid"
	RateHz        float64 `json:"rate_hz"`        // output rate
	SourceSamples int     `json:"source_samples"` // rows read
	// Duplicates counts rows whose timestamp repeated the row before:
	// their values were averaged into it.
	Duplicates    int     `json:"duplicates"`
	OutputSamples int     `json:"output_samples"` // samples per channel after resampling
	MedianS       float64 `json:"median_interval_s"`
	MeanS         float64 `json:"mean_interval_s"`
	SDS           float64 `json:"sd_interval_s"` // standard deviation of the intervals (jitter)
	MinS          float64 `json:"min_interval_s"`
	MaxS          float64 `json:"max_interval_s"`
	// TimeUnit is the unit the time column was read in ("s", "ms", "us",
	// "ns", "min"; "iso-8601" for timestamps), TimeEpoch whether numeric
	// times were Unix epoch times, and TimeInferred whether either was
	// inferred from the magnitude of the values rather than declared (a
	// warning in Recording.Warnings says so too).
	TimeUnit     string `json:"time_unit"`
	TimeEpoch    bool   `json:"time_unix_epoch"`
	TimeInferred bool   `json:"time_inferred"`
	// MaxJitterS is the largest |interval - median| among intervals that
	// are not gaps.
	MaxJitterS float64 `json:"max_jitter_s"`
	// HighIntervalS is the CSVOptions.JitterPercentile-th percentile of
	// the intervals (linear interpolation between order statistics).
	HighIntervalS float64 `json:"high_percentile_interval_s"`
	// GapThresholdS is the interval above which a hole was a gap:
	// max(GapFactor medians, the jitter allowance); see CSVOptions.
	GapThresholdS float64 `json:"gap_threshold_s"`
	// Bridged counts intervals longer than GapFactor medians that the
	// jitter allowance interpolated across instead of leaving a gap.
	Bridged int     `json:"bridged"`
	Gaps    int     `json:"gaps"`  // intervals longer than GapThresholdS, left as NaN
	GapS    float64 `json:"gap_s"` // total time inside those gaps
}

// jitterMinIntervals is the fewest intervals for which the jitter allowance
// (CSVOptions.JitterPercentile) is used: with fewer, a single hole would set
// the high percentile.
const jitterMinIntervals = 100

// percentileSorted returns the p-th percentile (0..100) of sorted s by
// linear interpolation between order statistics (common practice; the
// default method of most statistics libraries).
func percentileSorted(s []float64, p float64) float64 {
	h := float64(len(s)-1) * p / 100
	i := int(h)
	if i+1 >= len(s) {
		return s[len(s)-1]
	}
	return s[i] + (h-float64(i))*(s[i+1]-s[i])
}

// uniformTolerance is the relative interval deviation below which CSV
// timestamps are taken as uniform (printing rounds times: common practice).
const uniformTolerance = 1e-3

func readCSVFile(path string, opt Options) (*Recording, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("csv %s: %w: %w", path, ErrNotFound, err)
	}
	defer f.Close()
	rec, err := ReadCSV(f, path, opt.CSV, opt.Start)
	if err != nil {
		return nil, err
	}
	rec.Name = strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	return rec, nil
}

// splitUnit splits "name[unit]" or "name (unit)".
func splitUnit(h string) (string, string) {
	h = strings.TrimSpace(h)
	for _, p := range [][2]string{{"[", "]"}, {"(", ")"}} {
		if strings.HasSuffix(h, p[1]) {
			if i := strings.LastIndex(h, p[0]); i > 0 {
				return strings.TrimSpace(h[:i]), strings.TrimSpace(h[i+1 : len(h)-1])
			}
		}
	}
	return h, ""
}

func isMissing(s string) bool {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "nan", "na", "n/a", "null":
		return true
	}
	return false
}

// ReadCSV reads a CSV recording (layout above) from r; name is used in
// errors. start is the start for relative times (it may be zero); the
// recording's Start is start plus the first time value.
func ReadCSV(r io.Reader, name string, opt CSVOptions, start time.Time) (*Recording, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	if opt.Comma != 0 {
		cr.Comma = opt.Comma
	}
	var head []string
	if opt.Columns != nil {
		head = append(head, opt.Columns...)
		cr.FieldsPerRecord = len(head)
	} else {
		h, err := cr.Read()
		if err != nil {
			if errors.Is(err, io.EOF) {
				return nil, fmt.Errorf("csv %s: no header row: %w", name, ErrHeader)
			}
			return nil, fmt.Errorf("csv %s: header row: %v: %w", name, err, ErrHeader)
		}
		head = append(head, h...)
		numeric := true
		for _, c := range head {
			if _, err := strconv.ParseFloat(strings.TrimSpace(c), 64); err != nil {
				numeric = false
				break
			}
		}
		if numeric {
			return nil, fmt.Errorf("csv %s: first row %q is all numbers, not a header: name the columns of a file without a header row in CSVOptions.Columns: %w", name, strings.Join(head, ","), ErrHeader)
		}
	}
	if opt.EpochTime && opt.RelativeTime {
		return nil, fmt.Errorf("csv %s: options EpochTime and RelativeTime both set: %w", name, ErrHeader)
	}
	if len(head) < 2 {
		return nil, fmt.Errorf("csv %s: header has %d column(s), need a time column and a channel: %w", name, len(head), ErrHeader)
	}
	names := make([]string, len(head))
	units := make([]string, len(head))
	for i, h := range head {
		names[i], units[i] = splitUnit(strings.TrimPrefix(h, "\ufeff"))
	}
	tc := -1
	if opt.TimeColumn != "" {
		for i, n := range names {
			if n == opt.TimeColumn || head[i] == opt.TimeColumn {
				tc = i
				break
			}
		}
		if tc < 0 {
			return nil, fmt.Errorf("csv %s: time column %q not in header: %w", name, opt.TimeColumn, ErrHeader)
		}
	} else {
		for i, n := range names {
			switch strings.ToLower(n) {
			case "time", "t", "timestamp", "datetime", "date_time", "time_s":
				tc = i
			}
			if tc >= 0 {
				break
			}
		}
		if tc < 0 {
			tc = 0
		}
	}
	if v, ok := opt.Units[names[tc]]; ok {
		units[tc] = v
	}
	unitGiven := units[tc] != ""
	scale := 1.0
	switch strings.ToLower(units[tc]) {
	case "", "s", "sec":
	case "ms":
		scale = 1e-3
	case "us", "µs":
		scale = 1e-6
	case "ns":
		scale = 1e-9
	case "min":
		scale = 60
	default:
		return nil, fmt.Errorf("csv %s: time column %q: unit %q (want ns, us, ms, s or min): %w", name, head[tc], units[tc], ErrHeader)
	}
	var times []float64
	cols := make([][]float64, len(head))
	labels := make([][]string, len(head))
	kind := make([]int, len(head)) // 0 undecided, 1 numeric, 2 label
	var absolute *time.Time
	valid := make([]int, len(head)) // valid values merged into the last row, per column
	dups := 0
	row := 1
	if opt.Columns != nil {
		row = 0
	}
	for {
		recd, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		row++
		if err != nil {
			return nil, fmt.Errorf("csv %s: row %d: %v: %w", name, row, err, ErrData)
		}
		ts := strings.TrimSpace(recd[tc])
		var t float64
		if v, err := strconv.ParseFloat(ts, 64); err == nil && !math.IsNaN(v) && !math.IsInf(v, 0) && absolute == nil {
			t = v // in the column's unit; scaled after subtracting the first time, to keep precision
		} else {
			at, err := parseISOTime(ts)
			if err != nil || (absolute == nil && len(times) > 0) {
				return nil, fmt.Errorf("csv %s: row %d: time %q: not a number of seconds or an ISO-8601 time (or mixed forms): %w", name, row, ts, ErrData)
			}
			if absolute == nil {
				absolute = &at
			}
			t = at.Sub(*absolute).Seconds()
			scale = 1
		}
		dup := false
		if n := len(times); n > 0 && !(t > times[n-1]) {
			if t != times[n-1] {
				return nil, fmt.Errorf("csv %s: row %d: time %v s before the previous row's %v s: %w", name, row, t, times[n-1], ErrData)
			}
			dup = true // a repeated timestamp: merged with the row before
			dups++
		} else {
			times = append(times, t)
			for i := range valid {
				valid[i] = 0
			}
		}
		for i, cell := range recd {
			if i == tc {
				continue
			}
			if kind[i] == 0 && !isMissing(cell) {
				kind[i] = 1
				if _, err := strconv.ParseFloat(strings.TrimSpace(cell), 64); err != nil {
					kind[i] = 2
					labels[i] = make([]string, len(cols[i]))
				}
			}
			if kind[i] == 2 {
				if dup {
					labels[i][len(labels[i])-1] = strings.TrimSpace(cell)
				} else {
					labels[i] = append(labels[i], strings.TrimSpace(cell))
				}
				continue
			}
			v := nan
			if !isMissing(cell) {
				x, err := strconv.ParseFloat(strings.TrimSpace(cell), 64)
				if err != nil {
					return nil, fmt.Errorf("csv %s: row %d: column %q: value %q is not a number: %w", name, row, head[i], cell, ErrData)
				}
				if !math.IsInf(x, 0) {
					v = x
				}
			}
			switch {
			case !dup:
				cols[i] = append(cols[i], v)
				if !math.IsNaN(v) {
					valid[i] = 1
				}
			case !math.IsNaN(v):
				// Average the valid values of rows sharing a timestamp.
				last := &cols[i][len(cols[i])-1]
				if valid[i] == 0 {
					*last = v
				} else {
					*last += (v - *last) / float64(valid[i]+1)
				}
				valid[i]++
			}
		}
	}
	if len(times) < 2 {
		return nil, fmt.Errorf("csv %s: %d data row(s), need at least 2 to know the rate: %w", name, len(times), ErrData)
	}
	rec := &Recording{Format: "csv"}
	t0 := times[0]
	tb := timeBasis{unit: "iso-8601"}
	if absolute == nil {
		tb = decideTimeBasis(names[tc], t0, times[len(times)-1], unitGiven, units[tc], scale, opt)
		scale = tb.scale
	}
	switch {
	case absolute != nil:
		rec.Start, rec.StartKnown = absolute.UTC(), true
	case tb.epoch:
		rec.Start, rec.StartKnown = time.Unix(0, 0).UTC().Add(scaledDuration(t0, scale)), true
		if tb.note != "" {
			tb.note += "; start " + rec.Start.Format(time.RFC3339Nano)
		}
	case opt.RelativeTime && !start.IsZero():
		rec.Start = start.UTC()
	case !start.IsZero():
		rec.Start = start.UTC().Add(scaledDuration(t0, scale))
	}
	if tb.note != "" {
		rec.Warnings = append(rec.Warnings, fmt.Errorf("csv %s: time column %q: %s: %w", name, head[tc], tb.note, ErrInferred))
	}
	for i := range times {
		times[i] = (times[i] - t0) * scale
	}
	grid, rep, gaps, err := csvGrid(times, opt, dups > 0)
	if err != nil {
		return nil, fmt.Errorf("csv %s: %w", name, err)
	}
	if rep != nil {
		rep.SourceSamples += dups
		rep.Duplicates = dups
		rep.TimeUnit, rep.TimeEpoch, rep.TimeInferred = tb.unit, tb.epoch, tb.inferred
	}
	rec.Resample = rep
	for i := range head {
		if i == tc {
			continue
		}
		if kind[i] == 2 {
			rec.Annotations = append(rec.Annotations, labelAnnotations(labels[i], times, names[i])...)
			continue
		}
		u := units[i]
		if v, ok := opt.Units[names[i]]; ok {
			u = v
		}
		c := Channel{Name: names[i], Unit: u, RateHz: grid.rate}
		if rep == nil {
			c.Samples = cols[i]
		} else {
			c.Samples = resampleLinear(cols[i], times, grid, gaps)
		}
		c.Gaps, _ = window.NormalizeGaps(window.InvalidRuns(nil, c.Samples, c.RateHz, 0))
		rec.Channels = append(rec.Channels, c)
	}
	sortAnnotations(rec.Annotations)
	return rec, nil
}

// Unix epoch times, in seconds, of 2000-01-01 and 2100-01-01 UTC: the range
// in which numeric times are recognised as epoch times by magnitude.
const (
	epochLoS = 946684800
	epochHiS = 4102444800
)

// timeBasis is how a numeric time column is read.
type timeBasis struct {
	scale    float64 // seconds per unit
	unit     string
	epoch    bool // Unix epoch times (they fix the start)
	inferred bool // unit or epoch-ness inferred from the magnitude
	note     string
}

// decideTimeBasis reads a numeric time column whose first and last raw
// values are first and last (see ReadCSV for the rules). unit and scale are
// the declared unit and its scale (scale 1 when none was declared); col is
// the column name, for the warning.
func decideTimeBasis(col string, first, last float64, unitGiven bool, unit string, scale float64, opt CSVOptions) timeBasis {
	inEpoch := func(sc float64) bool {
		return first*sc >= epochLoS && first*sc < epochHiS && last*sc >= epochLoS && last*sc < epochHiS
	}
	switch {
	case opt.RelativeTime:
		if !unitGiven {
			unit = "s"
		}
		return timeBasis{scale: scale, unit: unit}
	case unitGiven:
		tb := timeBasis{scale: scale, unit: unit, epoch: opt.EpochTime}
		if !opt.EpochTime && inEpoch(scale) {
			tb.epoch, tb.inferred = true, true
			tb.note = fmt.Sprintf("values %.15g..%.15g %s are, by magnitude, Unix epoch times (dates 2000..2100), so they set the start; set CSVOptions.RelativeTime if they count from another origin", first, last, unit)
		}
		return tb
	}
	for _, u := range []struct {
		name  string
		scale float64
		word  string
	}{{"s", 1, "seconds"}, {"ms", 1e-3, "milliseconds"}, {"us", 1e-6, "microseconds"}, {"ns", 1e-9, "nanoseconds"}} {
		if inEpoch(u.scale) {
			return timeBasis{scale: u.scale, unit: u.name, epoch: true, inferred: true,
				note: fmt.Sprintf("no unit declared; values %.15g..%.15g read as Unix epoch %s (the only unit giving dates 2000..2100); declare the unit (e.g. \"%s[%s]\") or set CSVOptions.RelativeTime for a clock since boot", first, last, u.word, col, u.name)}
		}
	}
	tb := timeBasis{scale: 1, unit: "s", epoch: opt.EpochTime}
	if math.Max(math.Abs(first), math.Abs(last)) >= epochLoS {
		tb.inferred = true
		tb.note = fmt.Sprintf("no unit declared; values %.15g..%.15g fit no Unix epoch unit for dates 2000..2100 and are too large for seconds from the start; read as seconds: declare the unit", first, last)
	}
	return tb
}

// scaledDuration returns v units of scale seconds, exactly for whole
// numbers of a unit that is a whole number of nanoseconds (Unix ms stamps).
func scaledDuration(v, scale float64) time.Duration {
	ns := scale * 1e9
	if v == math.Trunc(v) && math.Abs(v) < 1<<53 && ns == math.Trunc(ns) && ns >= 1 {
		return time.Duration(int64(v) * int64(ns))
	}
	return time.Duration(math.Round(v * ns))
}

func parseISOTime(s string) (time.Time, error) {
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02T15:04:05.999999999", "2006-01-02 15:04:05.999999999Z07:00", "2006-01-02 15:04:05.999999999"} {
		if t, err := time.Parse(layout, s); err == nil {
			return t.UTC(), nil
		}
	}
	return time.Time{}, ErrData
}

type csvGridSpec struct {
	rate float64
	n    int
}

// csvGrid decides whether the times are uniform; if not it returns the grid
// and the report. gaps lists the source intervals [i, i+1] that are gaps.
func csvGrid(times []float64, opt CSVOptions, force bool) (csvGridSpec, *ResampleReport, []bool, error) {
	n := len(times)
	d := make([]float64, n-1)
	for i := range d {
		d[i] = times[i+1] - times[i]
	}
	s := append([]float64(nil), d...)
	sort.Float64s(s)
	med := s[len(s)/2]
	if len(s)%2 == 0 {
		med = (s[len(s)/2-1] + s[len(s)/2]) / 2
	}
	if s[0] >= med*(1-uniformTolerance) && s[len(s)-1] <= med*(1+uniformTolerance) && opt.RateHz == 0 && !force {
		rate := float64(n-1) / times[n-1]
		if r := math.Round(rate); math.Abs(rate-r) <= uniformTolerance*rate {
			rate = r
		}
		return csvGridSpec{rate: rate, n: n}, nil, nil, nil
	}
	rate := opt.RateHz
	if rate == 0 {
		rate = 1 / med
		// Snap to a whole number of Hz when within 1e-6: sampling rates
		// are integers in practice, and text times round the median.
		if r := math.Round(rate); math.Abs(rate-r) <= 1e-6*rate {
			rate = r
		}
	}
	if !(rate > 0) || math.IsInf(rate, 0) {
		return csvGridSpec{}, nil, nil, fmt.Errorf("resampling rate %v Hz: %w", rate, ErrHeader)
	}
	gf := opt.GapFactor
	if gf == 0 {
		gf = 3
	}
	jp, jf, jc := opt.JitterPercentile, opt.JitterFactor, opt.JitterCap
	if jp == 0 {
		jp = 99
	}
	if jf == 0 {
		jf = 2
	}
	if jc == 0 {
		jc = 10
	}
	if !(gf > 0) || !(jp > 0 && jp <= 100) || !(jc > 0) || math.IsNaN(jf) || math.IsInf(gf+jf+jc, 0) {
		return csvGridSpec{}, nil, nil, fmt.Errorf("gap rule: GapFactor %v, JitterPercentile %v, JitterFactor %v, JitterCap %v: %w", opt.GapFactor, opt.JitterPercentile, opt.JitterFactor, opt.JitterCap, ErrHeader)
	}
	rep := &ResampleReport{Method: "linear interpolation onto a uniform grid", RateHz: rate, SourceSamples: n, MedianS: med, MinS: s[0], MaxS: s[len(s)-1]}
	rep.HighIntervalS = percentileSorted(s, jp)
	thr := gf * med
	if jf > 0 && len(d) >= jitterMinIntervals {
		thr = math.Max(thr, math.Min(jf*rep.HighIntervalS, jc*med))
	}
	rep.GapThresholdS = thr
	gaps := make([]bool, n-1)
	var sum, sum2 float64
	for i, x := range d {
		sum += x
		if x > thr {
			gaps[i] = true
			rep.Gaps++
			rep.GapS += x
			continue
		}
		if x > gf*med {
			rep.Bridged++
		}
		rep.MaxJitterS = math.Max(rep.MaxJitterS, math.Abs(x-med))
	}
	rep.MeanS = sum / float64(len(d))
	for _, x := range d {
		sum2 += (x - rep.MeanS) * (x - rep.MeanS)
	}
	rep.SDS = math.Sqrt(sum2 / float64(len(d)))
	out := math.Floor(times[n-1]*rate*(1+1e-12)) + 1
	// The grid may not outgrow the rows read by more than a small factor
	// (a lying timestamp must not allocate without bound).
	if limit := float64(edfGapFillFactor*n + edfGapFillSlack); out > limit {
		return csvGridSpec{}, nil, nil, fmt.Errorf("timestamps span %v s: %v resampled samples from %d rows: %w", times[n-1], out, n, ErrTooLarge)
	}
	rep.OutputSamples = int(out)
	return csvGridSpec{rate: rate, n: int(out)}, rep, gaps, nil
}

// resampleLinear interpolates x (at times, at least two) onto the grid;
// grid points inside a gap interval, or between a NaN and its neighbour, are
// NaN. A grid point on a source time takes that sample as is.
func resampleLinear(x, times []float64, g csvGridSpec, gaps []bool) []float64 {
	out := make([]float64, g.n)
	last := len(times) - 1
	j := 0 // source interval [times[j], times[j+1]] holding t
	for k := range out {
		t := float64(k) / g.rate
		for j+1 < last && times[j+1] <= t {
			j++
		}
		switch a := (t - times[j]) / (times[j+1] - times[j]); {
		case t >= times[last]:
			out[k] = x[last] // the grid ends on or (by rounding) just past the last row
		case gaps[j] && t > times[j]+1e-9/g.rate:
			out[k] = nan
		case a == 0:
			out[k] = x[j]
		default:
			out[k] = x[j] + a*(x[j+1]-x[j])
		}
	}
	return out
}

// labelAnnotations turns a label column into one annotation per run.
func labelAnnotations(labels []string, times []float64, col string) []Annotation {
	var out []Annotation
	end := times[len(times)-1]
	for i := 0; i < len(labels); {
		j := i
		for j < len(labels) && labels[j] == labels[i] {
			j++
		}
		stop := end
		if j < len(labels) {
			stop = times[j]
		}
		if labels[i] != "" {
			out = append(out, Annotation{Time: times[i], Duration: stop - times[i], Sample: -1, Code: "", Text: labels[i], Annotator: "csv:" + col})
		}
		i = j
	}
	return out
}
