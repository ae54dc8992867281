package recording

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"
)

// EDF and BDF layout (Kemp B, Varri A, Rosa AC, Nielsen KD, Gade J. A simple
// format for exchange of digitized polygraphic recordings. Electroenceph Clin
// Neurophysiol 82:391-393, 1992; Kemp B, Olivan J. European data format
// 'plus' (EDF+), an EDF alike standard format for the exchange of physiological
// data. Clin Neurophysiol 114:1755-1761, 2003): a 256-byte fixed header, 256
// bytes per signal, then data records each holding, signal after signal,
// SamplesPerRecord samples of 2-byte (EDF) or 3-byte (BDF) little-endian two's
// complement integers.
const (
	edfFixedHeader = 256
	edfMaxSignals  = 4096
	// edfMaxRecordBytes bounds one data record (EDF+ recommends at most
	// 61440 bytes; 64 MiB leaves room for unusual files).
	edfMaxRecordBytes = 64 << 20
	// edfGapFillFactor and edfGapFillSlack cap the NaN samples an EDF+D
	// file may ask for to fill its discontinuities: at most 16 times the
	// samples present plus 4 Mi samples (32 MiB of float64), so a lying
	// record onset cannot make the reader allocate without bound.
	edfGapFillFactor = 16
	edfGapFillSlack  = 4 << 20
)

// EDFHeader is a parsed EDF, EDF+ or BDF header.
type EDFHeader struct {
	BDF           bool   // 24-bit BDF (first byte 0xFF, "BIOSEMI")
	Plus          bool   // EDF+ or BDF+ (reserved field starts with "EDF+" or "BDF+")
	Discontinuous bool   // EDF+D / BDF+D: data records need not be contiguous
	Patient       string // local patient identification
	RecordingID   string // local recording identification
	// Start is the start date and time from the header (second resolution,
	// no time zone: taken as UTC). EDF+ files may refine it with the onset of
	// the first data record.
	Start         time.Time
	HeaderBytes   int
	Reserved      string
	Records       int64   // number of data records; -1 when the header says unknown
	RecordSeconds float64 // duration of one data record, s
	Signals       []EDFSignal
}

// EDFSignal is one signal of an EDF header.
type EDFSignal struct {
	Label            string
	Transducer       string
	PhysicalDim      string // physical unit
	PhysicalMin      float64
	PhysicalMax      float64
	DigitalMin       int
	DigitalMax       int
	Prefilter        string
	SamplesPerRecord int
	Reserved         string
	// Annotation marks an EDF+ "EDF Annotations" (BDF+ "BDF Annotations")
	// signal: its bytes are time-stamped annotation lists, not samples.
	Annotation bool
}

// bytesPerSample returns 2 for EDF, 3 for BDF.
func (h *EDFHeader) bytesPerSample() int {
	if h.BDF {
		return 3
	}
	return 2
}

// RecordBytes returns the size of one data record.
func (h *EDFHeader) RecordBytes() int64 {
	n := int64(0)
	for _, s := range h.Signals {
		n += int64(s.SamplesPerRecord)
	}
	return n * int64(h.bytesPerSample())
}

func edfField(b []byte) string {
	return strings.TrimRight(strings.TrimSpace(string(bytes.TrimRight(b, "\x00"))), " ")
}

// ParseEDFHeader reads an EDF/EDF+/BDF header from r (256 bytes plus 256 per
// signal). name is used in error messages.
func ParseEDFHeader(r io.Reader, name string) (*EDFHeader, error) {
	fixed := make([]byte, edfFixedHeader)
	if _, err := io.ReadFull(r, fixed); err != nil {
		return nil, fmt.Errorf("edf %s: fixed header (256 bytes): %w", name, ErrTruncated)
	}
	h := &EDFHeader{}
	switch {
	case fixed[0] == 0xff && string(fixed[1:8]) == "BIOSEMI":
		h.BDF = true
	case string(fixed[0:8]) == "0       ":
	default:
		return nil, fmt.Errorf("edf %s: field version %q: not EDF (\"0\") or BDF (0xFF BIOSEMI): %w", name, fixed[0:8], ErrFormat)
	}
	h.Patient = edfField(fixed[8:88])
	h.RecordingID = edfField(fixed[88:168])
	date, clock := edfField(fixed[168:176]), edfField(fixed[176:184])
	hb, err := strconv.Atoi(edfField(fixed[184:192]))
	if err != nil {
		return nil, fmt.Errorf("edf %s: field header bytes %q: %w", name, fixed[184:192], ErrHeader)
	}
	h.HeaderBytes = hb
	h.Reserved = edfField(fixed[192:236])
	if strings.HasPrefix(h.Reserved, "EDF+") || strings.HasPrefix(h.Reserved, "BDF+") {
		h.Plus = true
		h.Discontinuous = strings.HasPrefix(h.Reserved[4:], "D")
	}
	nr, err := strconv.ParseInt(edfField(fixed[236:244]), 10, 64)
	if err != nil || nr < -1 {
		return nil, fmt.Errorf("edf %s: field number of data records %q: %w", name, fixed[236:244], ErrHeader)
	}
	h.Records = nr
	dur, err := strconv.ParseFloat(edfField(fixed[244:252]), 64)
	if err != nil || math.IsNaN(dur) || math.IsInf(dur, 0) || dur < 0 || dur > 1e6 {
		return nil, fmt.Errorf("edf %s: field duration of a data record %q: %w", name, fixed[244:252], ErrHeader)
	}
	h.RecordSeconds = dur
	ns, err := strconv.Atoi(edfField(fixed[252:256]))
	if err != nil || ns < 0 || ns > edfMaxSignals {
		return nil, fmt.Errorf("edf %s: field number of signals %q (0..%d): %w", name, fixed[252:256], edfMaxSignals, ErrHeader)
	}
	if hb != edfFixedHeader*(ns+1) {
		return nil, fmt.Errorf("edf %s: field header bytes %d, want 256*(1+%d signals) = %d: %w", name, hb, ns, edfFixedHeader*(ns+1), ErrHeader)
	}
	if h.Start, err = parseEDFStart(date, clock, h.RecordingID); err != nil {
		return nil, fmt.Errorf("edf %s: field start date/time %q %q: %w", name, date, clock, err)
	}
	sig := make([]byte, edfFixedHeader*ns)
	if _, err := io.ReadFull(r, sig); err != nil {
		return nil, fmt.Errorf("edf %s: signal headers (%d signals x 256 bytes): %w", name, ns, ErrTruncated)
	}
	h.Signals = make([]EDFSignal, ns)
	off := 0
	field := func(width, i int) string { return edfField(sig[off+i*width : off+(i+1)*width]) }
	next := func(width int) { off += width * ns }
	annLabel := "EDF Annotations"
	if h.BDF {
		annLabel = "BDF Annotations"
	}
	for i := range h.Signals {
		h.Signals[i].Label = field(16, i)
		h.Signals[i].Annotation = h.Plus && (h.Signals[i].Label == annLabel || h.Signals[i].Label == "EDF Annotations")
	}
	next(16)
	for i := range h.Signals {
		h.Signals[i].Transducer = field(80, i)
	}
	next(80)
	for i := range h.Signals {
		h.Signals[i].PhysicalDim = field(8, i)
	}
	next(8)
	nums := []struct {
		name string
		set  func(s *EDFSignal, v string) error
	}{
		{"physical minimum", func(s *EDFSignal, v string) (err error) { s.PhysicalMin, err = parseEDFFloat(v); return }},
		{"physical maximum", func(s *EDFSignal, v string) (err error) { s.PhysicalMax, err = parseEDFFloat(v); return }},
		{"digital minimum", func(s *EDFSignal, v string) (err error) { s.DigitalMin, err = strconv.Atoi(v); return }},
		{"digital maximum", func(s *EDFSignal, v string) (err error) { s.DigitalMax, err = strconv.Atoi(v); return }},
	}
	for _, f := range nums {
		for i := range h.Signals {
			if err := f.set(&h.Signals[i], field(8, i)); err != nil {
				return nil, fmt.Errorf("edf %s: signal %d (%s): field %s %q: %w", name, i, h.Signals[i].Label, f.name, field(8, i), ErrHeader)
			}
		}
		next(8)
	}
	for i := range h.Signals {
		h.Signals[i].Prefilter = field(80, i)
	}
	next(80)
	for i := range h.Signals {
		v, err := strconv.Atoi(field(8, i))
		if err != nil || v < 1 {
			return nil, fmt.Errorf("edf %s: signal %d (%s): field number of samples in each data record %q: %w", name, i, h.Signals[i].Label, field(8, i), ErrHeader)
		}
		h.Signals[i].SamplesPerRecord = v
	}
	next(8)
	for i := range h.Signals {
		h.Signals[i].Reserved = field(32, i)
	}
	lo, hi := -32768, 32767
	if h.BDF {
		lo, hi = -1<<23, 1<<23-1
	}
	ordinary := 0
	for i, s := range h.Signals {
		if s.Annotation {
			continue
		}
		ordinary++
		if s.DigitalMin >= s.DigitalMax || s.DigitalMin < lo || s.DigitalMax > hi {
			return nil, fmt.Errorf("edf %s: signal %d (%s): field digital minimum/maximum %d/%d (need %d <= min < max <= %d): %w", name, i, s.Label, s.DigitalMin, s.DigitalMax, lo, hi, ErrHeader)
		}
		if s.PhysicalMin == s.PhysicalMax {
			return nil, fmt.Errorf("edf %s: signal %d (%s): field physical minimum equals maximum (%v): %w", name, i, s.Label, s.PhysicalMin, ErrHeader)
		}
	}
	if ordinary > 0 && !(h.RecordSeconds > 0) {
		return nil, fmt.Errorf("edf %s: field duration of a data record %v s (must be > 0 with signals): %w", name, h.RecordSeconds, ErrHeader)
	}
	if rb := h.RecordBytes(); rb > edfMaxRecordBytes || (rb == 0 && ns > 0) {
		return nil, fmt.Errorf("edf %s: data record of %d bytes: %w", name, rb, ErrTooLarge)
	}
	return h, nil
}

func parseEDFFloat(s string) (float64, error) {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, ErrHeader
	}
	return v, nil
}

var edfMonths = []string{"JAN", "FEB", "MAR", "APR", "MAY", "JUN", "JUL", "AUG", "SEP", "OCT", "NOV", "DEC"}

// parseEDFStart reads dd.mm.yy and hh.mm.ss. Two-digit years 85-99 are
// 1985-1999 and 00-84 are 2000-2084 (the 1985 clipping date of Kemp and
// Olivan 2003); an EDF+ recording identification "Startdate dd-MMM-yyyy"
// gives the four-digit year, which wins when its day and month agree.
func parseEDFStart(date, clock, recID string) (time.Time, error) {
	var d, mo, y, hh, mi, ss int
	if n, err := fmt.Sscanf(date, "%2d.%2d.%2d", &d, &mo, &y); n != 3 || err != nil {
		return time.Time{}, ErrHeader
	}
	if n, err := fmt.Sscanf(clock, "%2d.%2d.%2d", &hh, &mi, &ss); n != 3 || err != nil {
		return time.Time{}, ErrHeader
	}
	if d < 1 || d > 31 || mo < 1 || mo > 12 || hh > 23 || mi > 59 || ss > 60 || y < 0 || hh < 0 || mi < 0 || ss < 0 {
		return time.Time{}, ErrHeader
	}
	if y >= 85 {
		y += 1900
	} else {
		y += 2000
	}
	if f := strings.Fields(recID); len(f) >= 2 && f[0] == "Startdate" {
		p := strings.Split(f[1], "-")
		if len(p) == 3 {
			dd, e1 := strconv.Atoi(p[0])
			yy, e2 := strconv.Atoi(p[2])
			m := 0
			for k, name := range edfMonths {
				if strings.EqualFold(p[1], name) {
					m = k + 1
				}
			}
			if e1 == nil && e2 == nil && dd == d && m == mo && yy%100 == y%100 {
				y = yy
			}
		}
	}
	return time.Date(y, time.Month(mo), d, hh, mi, ss, 0, time.UTC), nil
}

// TAL is one EDF+ time-stamped annotation list: an onset, an optional
// duration and the annotation texts sharing them.
type TAL struct {
	Onset       float64 // seconds after the header's start time
	Duration    float64 // seconds; 0 when absent
	HasDuration bool
	Texts       []string // empty for a record's time-keeping TAL
}

// ParseTALs decodes the bytes of one data record's annotation signal (Kemp
// and Olivan 2003, section 2.2.2): TALs of the form
// "+onset[\x15duration]\x14text\x14...\x14\x00", padded with zero bytes.
func ParseTALs(b []byte) ([]TAL, error) {
	var out []TAL
	for {
		for len(b) > 0 && b[0] == 0 {
			b = b[1:]
		}
		if len(b) == 0 {
			return out, nil
		}
		end := bytes.IndexByte(b, 0)
		if end < 0 {
			return out, fmt.Errorf("TAL %d: no terminating zero byte: %w", len(out), ErrData)
		}
		tal, err := parseTAL(b[:end])
		if err != nil {
			return out, fmt.Errorf("TAL %d: %w", len(out), err)
		}
		out = append(out, tal)
		b = b[end+1:]
	}
}

func parseTAL(b []byte) (TAL, error) {
	var t TAL
	parts := bytes.Split(b, []byte{0x14})
	if len(parts) < 2 || len(parts[len(parts)-1]) != 0 {
		return t, fmt.Errorf("not terminated by 0x14: %w", ErrData)
	}
	head := parts[0]
	on, dur, hasDur := bytes.Cut(head, []byte{0x15})
	if len(on) < 2 || (on[0] != '+' && on[0] != '-') {
		return t, fmt.Errorf("onset %q must start with + or -: %w", on, ErrData)
	}
	v, err := strconv.ParseFloat(string(on), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || bytes.ContainsAny(on[1:], "+-eEnNiI") {
		return t, fmt.Errorf("onset %q: %w", on, ErrData)
	}
	t.Onset = v
	if hasDur {
		d, err := strconv.ParseFloat(string(dur), 64)
		if err != nil || math.IsNaN(d) || math.IsInf(d, 0) || d < 0 || bytes.ContainsAny(dur, "+-eEnNiI") {
			return t, fmt.Errorf("duration %q: %w", dur, ErrData)
		}
		t.Duration, t.HasDuration = d, true
	}
	for _, p := range parts[1 : len(parts)-1] {
		if !utf8.Valid(p) {
			return t, fmt.Errorf("annotation text is not UTF-8: %w", ErrData)
		}
		if len(p) > 0 {
			t.Texts = append(t.Texts, string(p))
		}
	}
	return t, nil
}

// edfSource decodes data records chunk by chunk.
type edfSource struct {
	name    string
	f       *os.File
	h       *EDFHeader
	records int64
	rec     int64 // next record
	onsets  []float64
	sigs    []int // indices of ordinary signals
	buf     []byte
	count   []int64 // samples delivered per ordinary signal (including NaN fill)
	t0      float64 // onset of the first record
	fill    int64   // NaN samples used for discontinuities so far
	fillCap int64
}

func readEDFFile(path string) (*Recording, error) {
	r, err := openEDFStream(path)
	if err != nil {
		return nil, err
	}
	return readAll(r, r.Frames)
}

// openEDFStream checks the header against the file size, reads every EDF+
// annotation (the annotation signal's bytes only) and returns a Reader that
// decodes the data records as chunks are read. A frame is one data record.
func openEDFStream(path string) (*Reader, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("edf %s: %w: %w", path, ErrNotFound, err)
	}
	r, err := newEDFReader(f, path)
	if err != nil {
		f.Close()
		return nil, err
	}
	return r, nil
}

func newEDFReader(f *os.File, path string) (*Reader, error) {
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("edf %s: %w", path, err)
	}
	h, err := ParseEDFHeader(io.NewSectionReader(f, 0, st.Size()), path)
	if err != nil {
		return nil, err
	}
	rb := h.RecordBytes()
	var warns []error
	data := st.Size() - int64(h.HeaderBytes)
	present := int64(0)
	if rb > 0 {
		present = data / rb
	}
	records := h.Records
	switch {
	case records == -1:
		records = present
	case present < records:
		return nil, fmt.Errorf("edf %s: file holds %d complete data records, field number of data records says %d: %w", path, present, records, ErrTruncated)
	case data > records*rb:
		warns = append(warns, fmt.Errorf("edf %s: %d bytes after the last of %d data records ignored: %w", path, data-records*rb, records, ErrData))
	}
	s := &edfSource{name: path, f: f, h: h, records: records}
	if records > 0 {
		s.buf = make([]byte, rb) // the file holds at least this many bytes (checked above)
	}
	info := Recording{Name: strings.TrimSuffix(filepath.Base(path), filepath.Ext(path)), Start: h.Start, StartKnown: true}
	switch {
	case h.BDF && h.Plus:
		info.Format = "bdf+c"
	case h.BDF:
		info.Format = "bdf"
	case h.Plus:
		info.Format = "edf+c"
	default:
		info.Format = "edf"
	}
	if h.Discontinuous {
		info.Format = info.Format[:len(info.Format)-1] + "d"
	}
	for _, c := range []string{h.Patient, h.RecordingID} {
		if c != "" {
			info.Comments = append(info.Comments, c)
		}
	}
	var spf []int
	present = 0
	for i, sg := range h.Signals {
		if sg.Annotation {
			continue
		}
		s.sigs = append(s.sigs, i)
		gain := float64(sg.DigitalMax-sg.DigitalMin) / (sg.PhysicalMax - sg.PhysicalMin)
		info.Channels = append(info.Channels, Channel{
			Name: sg.Label, Unit: sg.PhysicalDim, RateHz: float64(sg.SamplesPerRecord) / h.RecordSeconds,
			Gain: gain, Baseline: float64(sg.DigitalMin) - sg.PhysicalMin*gain,
		})
		spf = append(spf, sg.SamplesPerRecord)
		present += int64(sg.SamplesPerRecord) * records
	}
	s.count = make([]int64, len(s.sigs))
	s.fillCap = edfGapFillFactor*present + edfGapFillSlack
	if h.Plus {
		anns, onsets, err := s.readAnnotations()
		if err != nil {
			return nil, err
		}
		s.onsets = onsets
		if len(onsets) > 0 {
			s.t0 = onsets[0]
		}
		for i := range anns {
			anns[i].Time -= s.t0
		}
		info.Annotations = anns
		// The first record's onset refines the header's start (EDF+: the
		// start time has second resolution; the onset adds the fraction).
		info.Start = info.Start.Add(time.Duration(math.Round(s.t0 * 1e9)))
	}
	info.Warnings = warns
	frameHz := 1.0
	if h.RecordSeconds > 0 {
		frameHz = 1 / h.RecordSeconds
	}
	return &Reader{Info: info, FrameHz: frameHz, SamplesPerFrame: spf, Frames: records, src: s}, nil
}

// readAnnotations reads the annotation signals of every data record and
// returns the annotations and each record's onset (from its first,
// time-keeping TAL).
func (s *edfSource) readAnnotations() ([]Annotation, []float64, error) {
	h := s.h
	bps := int64(h.bytesPerSample())
	type span struct{ off, n int64 }
	var spans []span
	off := int64(0)
	for _, sg := range h.Signals {
		n := int64(sg.SamplesPerRecord) * bps
		if sg.Annotation {
			spans = append(spans, span{off, n})
		}
		off += n
	}
	if len(spans) == 0 {
		// EDF+ without annotation signal: contiguous records.
		on := make([]float64, s.records)
		for k := range on {
			on[k] = float64(k) * h.RecordSeconds
		}
		return nil, on, nil
	}
	onsets := make([]float64, s.records)
	var anns []Annotation
	buf := make([]byte, 0, 1024)
	rb := h.RecordBytes()
	for k := int64(0); k < s.records; k++ {
		for j, sp := range spans {
			buf = buf[:sp.n]
			if _, err := s.f.ReadAt(buf, int64(h.HeaderBytes)+k*rb+sp.off); err != nil {
				return nil, nil, fmt.Errorf("edf %s: data record %d: annotations: %w", s.name, k, ErrTruncated)
			}
			tals, err := ParseTALs(buf)
			if err != nil {
				return nil, nil, fmt.Errorf("edf %s: data record %d: annotation signal: %w", s.name, k, err)
			}
			if j == 0 {
				if len(tals) == 0 || len(tals[0].Texts) != 0 {
					return nil, nil, fmt.Errorf("edf %s: data record %d: no time-keeping TAL first: %w", s.name, k, ErrData)
				}
				onsets[k] = tals[0].Onset
				if k > 0 && !(onsets[k] >= onsets[k-1]+h.RecordSeconds*(1-1e-9)) {
					return nil, nil, fmt.Errorf("edf %s: data record %d: onset %v s overlaps the record before (onset %v s, %v s long): %w", s.name, k, onsets[k], onsets[k-1], h.RecordSeconds, ErrData)
				}
				tals = tals[1:]
			}
			for _, t := range tals {
				for _, txt := range t.Texts {
					anns = append(anns, Annotation{Time: t.Onset, Duration: t.Duration, Sample: -1, Text: txt, Annotator: "edf+"})
				}
			}
		}
	}
	sortAnnotations(anns)
	return anns, onsets, nil
}

func (s *edfSource) read(maxFrames int, dst [][]float64) (int, error) {
	if s.rec >= s.records || len(s.sigs) == 0 {
		return 0, io.EOF
	}
	h := s.h
	bps := h.bytesPerSample()
	n := 0
	for ; n < maxFrames && s.rec < s.records; n++ {
		if _, err := s.f.ReadAt(s.buf, int64(h.HeaderBytes)+s.rec*int64(len(s.buf))); err != nil {
			return 0, fmt.Errorf("edf %s: data record %d: %w", s.name, s.rec, ErrTruncated)
		}
		if s.onsets != nil {
			// Place the record at its onset; fill a discontinuity with NaN.
			for j, i := range s.sigs {
				rate := float64(h.Signals[i].SamplesPerRecord) / h.RecordSeconds
				at := int64(math.Round((s.onsets[s.rec] - s.t0) * rate))
				if gap := at - s.count[j]; gap > 0 {
					s.fill += gap
					if s.fill > s.fillCap {
						return 0, fmt.Errorf("edf %s: data record %d: onset %v s leaves gaps of more than %d samples to fill for %d present: %w", s.name, s.rec, s.onsets[s.rec], s.fillCap, s.fillCap/edfGapFillFactor, ErrTooLarge)
					}
					for ; gap > 0; gap-- {
						dst[j] = append(dst[j], nan)
					}
					s.count[j] = at
				}
			}
		}
		off := 0
		j := 0
		for _, sg := range h.Signals {
			nb := sg.SamplesPerRecord * bps
			if sg.Annotation {
				off += nb
				continue
			}
			scale := (sg.PhysicalMax - sg.PhysicalMin) / float64(sg.DigitalMax-sg.DigitalMin)
			out := dst[j]
			b := s.buf[off : off+nb]
			for k := 0; k < sg.SamplesPerRecord; k++ {
				var d int
				if bps == 2 {
					d = int(int16(uint16(b[2*k]) | uint16(b[2*k+1])<<8))
				} else {
					d = int(signExtend(uint32(b[3*k])|uint32(b[3*k+1])<<8|uint32(b[3*k+2])<<16, 24))
				}
				if d < sg.DigitalMin || d > sg.DigitalMax {
					// Outside the declared digital range: not a valid
					// sample (EDF: samples lie within the range); the writer
					// uses this for NaN.
					out = append(out, nan)
					continue
				}
				out = append(out, sg.PhysicalMin+float64(d-sg.DigitalMin)*scale)
			}
			dst[j] = out
			s.count[j] += int64(sg.SamplesPerRecord)
			off += nb
			j++
		}
		s.rec++
	}
	return n, nil
}

func (s *edfSource) close() error {
	if s.f == nil {
		return nil
	}
	err := s.f.Close()
	s.f = nil
	return err
}

func (s *edfSource) warnings() []error { return nil }
