package recording

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode"
)

// WFDB header defaults (WFDB header format, PhysioNet documentation, from
// memory): sampling frequency 250 Hz, ADC gain 200 units per physical unit,
// physical unit "mV".
const (
	wfdbDefaultFreq = 250
	wfdbDefaultGain = 200
	maxHeaderBytes  = 1 << 20 // a header larger than 1 MiB is not a WFDB header
	maxSignals      = 4096    // more signal lines than this are taken as a lie
	maxSPF          = 1 << 16 // samples per frame
)

// WFDBHeader is a parsed WFDB header (.hea) file: the record line, one
// WFDBSignal per signal line, and the comment lines.
type WFDBHeader struct {
	Name        string
	Segments    int     // number of segments of a multi-segment record; 0 for single-segment
	NumSignals  int     // number of signals (0 for annotation-only records)
	FrameHz     float64 // sampling frequency of frames, Hz (250 when absent)
	CounterHz   float64 // counter frequency, Hz (FrameHz when absent)
	BaseCounter float64 // counter value of sample 0
	Frames      int64   // samples per signal, in frames; 0 when unknown
	// Start is the base time and date; StartTime and StartDate report
	// whether each part was present. Without a date, Start is on the zero
	// date (year 0 is never a real recording date).
	Start                time.Time
	StartTime, StartDate bool
	Signals              []WFDBSignal
	Comments             []string
}

// WFDBSignal is one signal line of a WFDB header.
type WFDBSignal struct {
	File           string  // signal file name, relative to the header's directory
	Format         int     // storage format: 8, 16, 24, 32, 61, 80, 160, 212, 310, 311
	SamplesFrame   int     // samples per frame (1 unless multi-frequency)
	Skew           int     // frames by which this signal's samples are delayed in the file
	Offset         int64   // bytes to skip at the start of the signal file
	Gain           float64 // ADC units per physical unit (200 when absent or 0)
	Baseline       int     // digital value of physical zero (ADCZero when absent)
	Units          string  // physical unit ("mV" when absent)
	ADCRes         int     // ADC resolution, bits (0 when absent)
	ADCZero        int     // digital value of the middle of the ADC range
	InitVal        int     // first sample value (needed by format 8; ADCZero when absent)
	Checksum       int     // 16-bit sum of all samples, as a signed 16-bit number
	HasChecksum    bool    // whether the header gave a checksum
	BlockSize      int     // block size for special files; 0 for ordinary files
	Description    string  // signal description (channel name)
	hasDescription bool
}

// ParseWFDBHeader parses a WFDB header read from r. name is used in error
// messages (usually the file path). Lines may end in LF or CRLF.
func ParseWFDBHeader(r io.Reader, name string) (*WFDBHeader, error) {
	data, err := io.ReadAll(io.LimitReader(r, maxHeaderBytes+1))
	if err != nil {
		return nil, fmt.Errorf("wfdb %s: reading header: %w", name, err)
	}
	if len(data) > maxHeaderBytes {
		return nil, fmt.Errorf("wfdb %s: header longer than %d bytes: %w", name, maxHeaderBytes, ErrHeader)
	}
	h := &WFDBHeader{}
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 0, 4096), maxHeaderBytes+1)
	lineNo := 0
	gotRecord := false
	for sc.Scan() {
		lineNo++
		line := strings.TrimRight(sc.Text(), "\r")
		trimmed := strings.TrimSpace(line)
		if trimmed == "" {
			continue
		}
		if strings.HasPrefix(trimmed, "#") {
			h.Comments = append(h.Comments, strings.TrimSpace(strings.TrimPrefix(trimmed, "#")))
			continue
		}
		if !gotRecord {
			if err := h.parseRecordLine(trimmed); err != nil {
				return nil, fmt.Errorf("wfdb %s: line %d: record line: %w", name, lineNo, err)
			}
			gotRecord = true
			continue
		}
		if h.Segments > 0 {
			return nil, fmt.Errorf("wfdb %s: multi-segment record (%d segments): %w", name, h.Segments, ErrFormat)
		}
		if len(h.Signals) >= h.NumSignals {
			// Text after the signal lines that is not a comment: WFDB
			// tolerates it; keep it as a comment rather than drop it.
			h.Comments = append(h.Comments, trimmed)
			continue
		}
		s, err := parseSignalLine(trimmed, len(h.Signals))
		if err != nil {
			return nil, fmt.Errorf("wfdb %s: line %d: signal %d: %w", name, lineNo, len(h.Signals), err)
		}
		h.Signals = append(h.Signals, s)
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("wfdb %s: %v: %w", name, err, ErrHeader)
	}
	if !gotRecord {
		return nil, fmt.Errorf("wfdb %s: no record line: %w", name, ErrHeader)
	}
	if h.Segments > 0 {
		return nil, fmt.Errorf("wfdb %s: multi-segment record (%d segments): %w", name, h.Segments, ErrFormat)
	}
	if len(h.Signals) != h.NumSignals {
		return nil, fmt.Errorf("wfdb %s: record line declares %d signals, header has %d signal lines: %w", name, h.NumSignals, len(h.Signals), ErrHeader)
	}
	for i, s := range h.Signals {
		if !s.hasDescription {
			h.Signals[i].Description = fmt.Sprintf("record %s, signal %d", h.Name, i)
		}
	}
	// Signals sharing a file must be consecutive and share one format
	// (WFDB signal file rules, from memory).
	for i := 1; i < len(h.Signals); i++ {
		a, b := h.Signals[i-1], h.Signals[i]
		if a.File == b.File && (a.Format != b.Format || a.Offset != b.Offset) {
			return nil, fmt.Errorf("wfdb %s: signals %d and %d share file %s with different formats or offsets: %w", name, i-1, i, b.File, ErrHeader)
		}
		for j := 0; j < i-1; j++ {
			if h.Signals[j].File == b.File && a.File != b.File {
				return nil, fmt.Errorf("wfdb %s: signal %d: file %s used by non-consecutive signals: %w", name, i, b.File, ErrHeader)
			}
		}
	}
	return h, nil
}

func (h *WFDBHeader) parseRecordLine(line string) error {
	f := strings.Fields(line)
	if len(f) < 2 {
		return fmt.Errorf("field number of signals: missing: %w", ErrHeader)
	}
	h.Name = f[0]
	if i := strings.IndexByte(f[0], '/'); i >= 0 {
		h.Name = f[0][:i]
		n, err := strconv.Atoi(f[0][i+1:])
		if err != nil || n <= 0 {
			return fmt.Errorf("field segments %q: %w", f[0][i+1:], ErrHeader)
		}
		h.Segments = n
	}
	n, err := strconv.Atoi(f[1])
	if err != nil || n < 0 || n > maxSignals {
		return fmt.Errorf("field number of signals %q (0..%d): %w", f[1], maxSignals, ErrHeader)
	}
	h.NumSignals = n
	h.FrameHz = wfdbDefaultFreq
	h.CounterHz = 0
	if len(f) > 2 {
		if err := h.parseFreq(f[2]); err != nil {
			return err
		}
	}
	if h.CounterHz == 0 {
		h.CounterHz = h.FrameHz
	}
	if len(f) > 3 {
		ns, err := strconv.ParseInt(f[3], 10, 64)
		if err != nil || ns < 0 {
			return fmt.Errorf("field number of samples %q: %w", f[3], ErrHeader)
		}
		h.Frames = ns
	}
	if len(f) > 4 {
		tod, err := parseWFDBTime(f[4])
		if err != nil {
			return fmt.Errorf("field base time %q: %w", f[4], err)
		}
		h.StartTime = true
		day := time.Date(0, 1, 1, 0, 0, 0, 0, time.UTC)
		if len(f) > 5 {
			d, err := time.Parse("02/01/2006", f[5])
			if err != nil {
				return fmt.Errorf("field base date %q (DD/MM/YYYY): %w", f[5], ErrHeader)
			}
			day = d
			h.StartDate = true
		}
		h.Start = day.Add(tod)
	} else {
		h.Start = time.Date(0, 1, 1, 0, 0, 0, 0, time.UTC)
	}
	return nil
}

// parseFreq reads "fs[/counter[(base)]]".
func (h *WFDBHeader) parseFreq(s string) error {
	fsPart, rest, hasCounter := strings.Cut(s, "/")
	fs, err := strconv.ParseFloat(fsPart, 64)
	if err != nil || !(fs > 0) || math.IsInf(fs, 0) || fs > 1e9 {
		return fmt.Errorf("field sampling frequency %q (must be a positive finite number of Hz): %w", fsPart, ErrHeader)
	}
	h.FrameHz = fs
	if hasCounter {
		cf, base, hasBase := strings.Cut(rest, "(")
		c, err := strconv.ParseFloat(cf, 64)
		if err != nil || !(c > 0) || math.IsInf(c, 0) {
			return fmt.Errorf("field counter frequency %q: %w", cf, ErrHeader)
		}
		h.CounterHz = c
		if hasBase {
			b, err := strconv.ParseFloat(strings.TrimSuffix(base, ")"), 64)
			if err != nil || math.IsNaN(b) || math.IsInf(b, 0) {
				return fmt.Errorf("field base counter %q: %w", base, ErrHeader)
			}
			h.BaseCounter = b
		}
	}
	return nil
}

// parseWFDBTime reads [[HH:]MM:]SS[.fff].
func parseWFDBTime(s string) (time.Duration, error) {
	parts := strings.Split(s, ":")
	if len(parts) > 3 {
		return 0, ErrHeader
	}
	var total float64
	for i, p := range parts {
		var v float64
		if i == len(parts)-1 {
			x, err := strconv.ParseFloat(p, 64)
			if err != nil || x < 0 || x >= 61 || math.IsNaN(x) {
				return 0, ErrHeader
			}
			v = x
		} else {
			x, err := strconv.Atoi(p)
			limit := 60 // minutes
			if len(parts)-1-i == 2 {
				limit = 24 // hours
			}
			if err != nil || x < 0 || x >= limit {
				return 0, ErrHeader
			}
			v = float64(x)
		}
		total = total*60 + v
	}
	return time.Duration(math.Round(total * 1e9)), nil
}

func parseSignalLine(line string, idx int) (WFDBSignal, error) {
	f := strings.Fields(line)
	s := WFDBSignal{SamplesFrame: 1, Gain: wfdbDefaultGain, Units: "mV"}
	if len(f) < 2 {
		return s, fmt.Errorf("field format: missing: %w", ErrHeader)
	}
	s.File = f[0]
	if err := s.parseFormat(f[1]); err != nil {
		return s, err
	}
	baselineSet := false
	if len(f) > 2 {
		g := f[2]
		if i := strings.IndexByte(g, '/'); i >= 0 {
			s.Units = g[i+1:]
			g = g[:i]
		}
		if i := strings.IndexByte(g, '('); i >= 0 {
			b := strings.TrimSuffix(g[i+1:], ")")
			v, err := strconv.Atoi(b)
			if err != nil {
				return s, fmt.Errorf("field baseline %q: %w", b, ErrHeader)
			}
			s.Baseline = v
			baselineSet = true
			g = g[:i]
		}
		v, err := strconv.ParseFloat(g, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
			return s, fmt.Errorf("field ADC gain %q (must be a finite number >= 0): %w", g, ErrHeader)
		}
		if v > 0 {
			s.Gain = v
		}
	}
	ints := []struct {
		name string
		dst  *int
	}{{"ADC resolution", &s.ADCRes}, {"ADC zero", &s.ADCZero}, {"initial value", &s.InitVal}, {"checksum", &s.Checksum}, {"block size", &s.BlockSize}}
	initSet := false
	for k, it := range ints {
		if len(f) <= 3+k {
			break
		}
		v, err := strconv.Atoi(f[3+k])
		if err != nil || v < math.MinInt32 || v > math.MaxInt32 {
			return s, fmt.Errorf("field %s %q: %w", it.name, f[3+k], ErrHeader)
		}
		*it.dst = v
		switch k {
		case 2:
			initSet = true
		case 3:
			s.HasChecksum = true
		}
	}
	if s.ADCRes < 0 || s.ADCRes > 32 || s.BlockSize < 0 {
		return s, fmt.Errorf("field ADC resolution %d or block size %d out of range: %w", s.ADCRes, s.BlockSize, ErrHeader)
	}
	if !baselineSet {
		s.Baseline = s.ADCZero
	}
	if !initSet {
		s.InitVal = s.ADCZero
	}
	if len(f) > 8 {
		// The description is the rest of the line after eight fields.
		rest := line
		for k := 0; k < 8; k++ {
			rest = strings.TrimLeftFunc(rest, unicode.IsSpace)
			rest = rest[strings.IndexFunc(rest, unicode.IsSpace):]
		}
		s.Description = strings.TrimSpace(rest)
		s.hasDescription = true
	}
	return s, nil
}

// parseFormat reads "fmt[xspf][:skew][+offset]".
func (s *WFDBSignal) parseFormat(spec string) error {
	rest := spec
	cut := func(sep string) string {
		i := strings.Index(rest, sep)
		if i < 0 {
			return ""
		}
		v := rest[i+1:]
		rest = rest[:i]
		return v
	}
	off := cut("+")
	skew := cut(":")
	spf := cut("x")
	f, err := strconv.Atoi(rest)
	if err != nil {
		return fmt.Errorf("field format %q: %w", spec, ErrHeader)
	}
	if _, ok := wfdbFormats[f]; !ok {
		return fmt.Errorf("field format %d: %w", f, ErrFormat)
	}
	s.Format = f
	if spf != "" {
		v, err := strconv.Atoi(spf)
		if err != nil || v < 1 || v > maxSPF {
			return fmt.Errorf("field samples per frame %q (1..%d): %w", spf, maxSPF, ErrHeader)
		}
		s.SamplesFrame = v
	}
	if skew != "" {
		v, err := strconv.Atoi(skew)
		if err != nil || v < 0 || v > 1<<30 {
			return fmt.Errorf("field skew %q: %w", skew, ErrHeader)
		}
		s.Skew = v
	}
	if off != "" {
		v, err := strconv.ParseInt(off, 10, 64)
		if err != nil || v < 0 {
			return fmt.Errorf("field byte offset %q: %w", off, ErrHeader)
		}
		s.Offset = v
	}
	return nil
}
