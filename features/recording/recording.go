// Package recording is Tidalbeat's one multimodal recording model and the
// readers and writers that fill it: PhysioNet WFDB records (header, signal
// files, MIT-format annotations), EDF, EDF+ and BDF files, and CSV exports.
//
// A Recording has an absolute UTC start, channels in physical units (float64,
// NaN for invalid samples, each invalid stretch also listed as a gap) and
// annotations timed in seconds from the start. Channel roles (ECG lead,
// rib-cage band, abdominal band, accelerometer axes, SpO2) are guessed from
// channel names and units and can always be set explicitly through Options.
//
// The readers treat every file as untrusted: header fields are checked
// against the bytes actually present before anything large is allocated, and
// every failure is an error that names the file and the field and wraps one of
// the exported sentinels (ErrHeader, ErrFormat, ErrTruncated, ...). Long
// recordings can be read in chunks with OpenStream.
//
// Format notes:
//
//   - WFDB: single-segment records with signal formats 8, 16, 24, 32, 61,
//     80, 160, 212, 310 and 311 (byte offsets, skew, samples per frame),
//     annotation-only records and MIT-format annotations (read and write).
//     Base times carry no zone and are taken as UTC; without a base date the
//     start is unknown. A checksum mismatch does not stop reading: it is a
//     warning in Recording.Warnings wrapping ErrChecksum, or an error with
//     Options.StrictChecksum. Multi-segment records and writing WFDB signal
//     files are not supported.
//   - EDF, EDF+ (C and D) and BDF(+): 16- and 24-bit samples, physical
//     scaling, TAL annotations; EDF+D discontinuities are filled with NaN and
//     listed as gaps. WriteEDF writes EDF+C.
//   - CSV: see ReadCSV for the layout; irregular timestamps are resampled
//     and reported in Recording.Resample (jitter is bridged, real holes are
//     gaps); a time unit the file does not declare is inferred from the
//     magnitude of the values (Unix epoch s, ms, us or ns) and reported in
//     Recording.Warnings.
//
// Memory: signal data cost 8 bytes per sample (float64) plus transient
// buffers; a header may not ask for more samples than its files hold, and NaN
// filling (EDF+D gaps, unstored WFDB signals, CSV resampling) is capped at
// 16 samples per byte of signal data (CSV: per row) plus 4 Mi samples
// (ErrTooLarge).
//
// The package does no signal processing; the modality packages (ecg, resp,
// motion) work on the slices it returns and never import it.
package recording

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/window"
)

// Errors returned by the readers and writers; test with errors.Is. Every
// returned error names the file and the field and wraps one of these.
var (
	// ErrHeader marks a header field that is missing, malformed or out of
	// range (a zero or NaN rate, a negative gain, a lying sample count...).
	ErrHeader = errors.New("invalid header")
	// ErrFormat marks a file that is not of the expected format (wrong
	// magic) or uses a variant this package does not read (an unknown WFDB
	// signal format, a multi-segment record).
	ErrFormat = errors.New("unsupported or unrecognised format")
	// ErrTruncated marks a file shorter than its header says.
	ErrTruncated = errors.New("file truncated")
	// ErrTooLarge marks a file whose header asks for more memory than the
	// bytes present can justify.
	ErrTooLarge = errors.New("declared size too large for the data present")
	// ErrChecksum marks a WFDB signal whose samples do not add up to the
	// checksum in its header. It is reported in Recording.Warnings (or
	// returned when Options.StrictChecksum is set).
	ErrChecksum = errors.New("checksum mismatch")
	// ErrData marks malformed content after the header (a bad annotation
	// list, an unparsable CSV value, non-monotonic times).
	ErrData = errors.New("invalid data")
	// ErrNotFound marks a missing record, annotator or channel.
	ErrNotFound = errors.New("not found")
	// ErrInferred marks a warning in Recording.Warnings saying that
	// something the file did not declare was inferred from its content
	// (a CSV time unit or Unix epoch times guessed from the magnitude of
	// the values).
	ErrInferred = errors.New("inferred, not declared")
)

// Role says what a channel measures, as far as Tidalbeat is concerned.
type Role int

// Channel roles. The zero value is RoleUnknown.
const (
	RoleUnknown Role = iota // not recognised; ignored by the feature pipeline
	RoleECG                 // an ECG lead, in mV (or any voltage unit)
	RoleRibCage             // rib-cage (thoracic) respiratory inductance band
	RoleAbdomen             // abdominal respiratory inductance band
	RoleAccX                // accelerometer x axis
	RoleAccY                // accelerometer y axis
	RoleAccZ                // accelerometer z axis
	RoleSpO2                // oxygen saturation, %
)

var roleNames = [...]string{"unknown", "ecg", "rib_cage", "abdomen", "acc_x", "acc_y", "acc_z", "spo2"}

// String returns the role's lower-case name: "unknown", "ecg", "rib_cage",
// "abdomen", "acc_x", "acc_y", "acc_z" or "spo2".
func (r Role) String() string {
	if r >= 0 && int(r) < len(roleNames) {
		return roleNames[r]
	}
	return fmt.Sprintf("Role(%d)", int(r))
}

// MarshalText writes the role's name (see String).
func (r Role) MarshalText() ([]byte, error) { return []byte(r.String()), nil }

// UnmarshalText reads a role name as written by MarshalText.
func (r *Role) UnmarshalText(b []byte) error {
	p, err := ParseRole(string(b))
	if err != nil {
		return err
	}
	*r = p
	return nil
}

// ParseRole returns the role with the given name (see Role.String); the match
// ignores case.
func ParseRole(s string) (Role, error) {
	for i, n := range roleNames {
		if strings.EqualFold(s, n) {
			return Role(i), nil
		}
	}
	return RoleUnknown, fmt.Errorf("recording: role %q: %w", s, ErrNotFound)
}

// Recording is one multimodal recording: channels sampled uniformly from a
// common start, and annotations.
type Recording struct {
	// Name is the record name (the WFDB record name, or the file name
	// without extension).
	Name string
	// Start is the UTC time of sample 0 of every channel. When the file
	// gives no start, it is Options.Start, or the zero time.
	Start time.Time
	// StartKnown reports whether Start came from the file.
	StartKnown bool
	// Channels holds the signals in file order (annotation-only records and
	// EDF+ annotation signals contribute none).
	Channels []Channel
	// Annotations holds every annotation read, sorted by time.
	Annotations []Annotation
	// Format names the file format read: "wfdb", "edf", "edf+c", "edf+d",
	// "bdf", "bdf+c", "bdf+d" or "csv".
	Format string
	// Comments holds free-text header lines (WFDB comment lines; the EDF
	// patient and recording identification fields).
	Comments []string
	// Warnings lists problems that did not stop reading, each wrapping a
	// sentinel: a WFDB checksum mismatch wraps ErrChecksum, a CSV time
	// unit inferred from the values wraps ErrInferred.
	Warnings []error
	// Resample describes how irregular CSV timestamps were put on a uniform
	// grid; nil when the data were already uniform or came from a format
	// with a fixed rate.
	Resample *ResampleReport
}

// Channel is one uniformly sampled signal.
type Channel struct {
	Name   string  // as in the file (WFDB description, EDF label, CSV column)
	Unit   string  // physical unit, e.g. "mV", "m/s2"; "" when unknown
	RateHz float64 // sampling rate, Hz (> 0)
	// Samples holds the signal in physical units; sample i is at
	// Start + i/RateHz. Invalid samples are NaN and also listed in Gaps.
	Samples []float64
	// Gaps lists the stretches, in seconds from the recording start, where
	// the channel holds no valid data (invalid samples, EDF+D
	// discontinuities, CSV holes), sorted and merged.
	Gaps []window.Interval
	// Role is what the channel measures (guessed unless set by Options.Roles).
	Role Role
	// Gain and Baseline give the stored digital value of a physical value v
	// as v*Gain + Baseline (WFDB adc gain and baseline; for EDF derived from
	// the physical and digital ranges). Both are zero for CSV channels.
	Gain, Baseline float64
}

// Annotation is one labelled event or span of a recording.
type Annotation struct {
	Time     float64 // onset, seconds from the recording start
	Duration float64 // seconds; 0 for point events (every WFDB annotation)
	// Sample is the onset as a sample (WFDB: frame) number at the
	// annotation rate; -1 when the source has no sample clock (EDF+, CSV).
	Sample int64
	// Code is the type: the standard WFDB mnemonic ("N", "A", "V", "+",
	// "~", ...; the decimal number for codes without one), or "" for
	// free-text annotations (EDF+).
	Code string
	// Text is free text: the WFDB AUX string (such as "(N" for a rhythm
	// change) or the EDF+ annotation text.
	Text string
	// Channel is the signal number the annotation refers to (WFDB CHN);
	// 0 otherwise.
	Channel int
	// Subtype and Num are the WFDB SUB and NUM fields (0 when absent).
	Subtype, Num int
	// Annotator names the source: the WFDB annotator ("atr"), "edf+" or
	// "csv".
	Annotator string
}

// IsBeat reports whether the annotation marks a QRS complex: its Code is one
// of the WFDB beat mnemonics N L R a V F J A S E j / Q B e n r f (the
// WFDB beat-annotation code table, PhysioNet annotation documentation,
// from memory).
func (a Annotation) IsBeat() bool { return isBeatCode(a.Code) }

// Channel returns the first channel with the given role.
func (r *Recording) Channel(role Role) (*Channel, bool) {
	for i := range r.Channels {
		if r.Channels[i].Role == role {
			return &r.Channels[i], true
		}
	}
	return nil, false
}

// ChannelByName returns the channel with the given name, matched exactly
// first and then ignoring case and surrounding spaces.
func (r *Recording) ChannelByName(name string) (*Channel, bool) {
	for i := range r.Channels {
		if r.Channels[i].Name == name {
			return &r.Channels[i], true
		}
	}
	for i := range r.Channels {
		if strings.EqualFold(strings.TrimSpace(r.Channels[i].Name), strings.TrimSpace(name)) {
			return &r.Channels[i], true
		}
	}
	return nil, false
}

// Duration returns the length of the recording in seconds: the longest
// channel's len(Samples)/RateHz, or, without channels, the time of the last
// annotation's end.
func (r *Recording) Duration() float64 {
	d := 0.0
	for _, c := range r.Channels {
		if c.RateHz > 0 {
			d = math.Max(d, float64(len(c.Samples))/c.RateHz)
		}
	}
	if len(r.Channels) == 0 {
		for _, a := range r.Annotations {
			d = math.Max(d, a.Time+a.Duration)
		}
	}
	return d
}

// Options adjusts Open. The zero value means the documented defaults.
type Options struct {
	// Annotators lists the WFDB annotators to load (file extensions beside
	// the header, e.g. "atr"). When nil, "atr" is loaded if present; when
	// set, each one must exist.
	Annotators []string
	// Start is used as the recording start when the file has none (WFDB
	// without base date, CSV with relative times). Zero leaves Start zero.
	Start time.Time
	// Roles sets channel roles by channel name (exact match), overriding the
	// guess from names and units.
	Roles map[string]Role
	// StrictChecksum makes a WFDB checksum mismatch an error (wrapping
	// ErrChecksum) instead of an entry in Recording.Warnings.
	StrictChecksum bool
	// CSV adjusts the CSV reader.
	CSV CSVOptions
}

// Open reads the recording at path with default Options. The format follows
// from the name: ".edf", ".bdf" and ".csv" (any case) name those formats; a
// name ending in ".hea", or one beside which NAME.hea exists, is a WFDB
// record (so "100" and "100.hea" both work, and so does "100.dat"); any other
// existing file is read as EDF/BDF when it starts with their magic and is
// refused with ErrFormat otherwise.
func Open(path string) (*Recording, error) { return OpenWith(path, Options{}) }

// OpenWith reads the recording at path (see Open) with the given options.
func OpenWith(path string, opt Options) (*Recording, error) {
	var rec *Recording
	var err error
	switch kind, p, kerr := formatOf(path); {
	case kerr != nil:
		return nil, kerr
	case kind == "edf":
		rec, err = readEDFFile(p)
	case kind == "csv":
		rec, err = readCSVFile(p, opt)
	default:
		rec, err = readWFDB(p, opt)
	}
	if err != nil {
		return nil, err
	}
	finish(rec, opt)
	return rec, nil
}

// finish applies the options common to all formats: start time, roles.
func finish(rec *Recording, opt Options) {
	if !rec.StartKnown && rec.Start.IsZero() && !opt.Start.IsZero() {
		rec.Start = opt.Start.UTC()
	}
	for i := range rec.Channels {
		c := &rec.Channels[i]
		if r, ok := opt.Roles[c.Name]; ok {
			c.Role = r
		} else {
			c.Role = GuessRole(c.Name, c.Unit)
		}
	}
}

// formatOf decides how to read path: "wfdb", "edf" or "csv", and the path
// to hand to that reader.
func formatOf(path string) (string, string, error) {
	ext := strings.ToLower(filepath.Ext(path))
	switch ext {
	case ".edf", ".bdf", ".rec":
		return "edf", path, nil
	case ".csv":
		return "csv", path, nil
	case ".hea":
		return "wfdb", path, nil
	}
	if _, err := os.Stat(path + ".hea"); err == nil {
		return "wfdb", path, nil
	}
	st, err := os.Stat(path)
	if err != nil || st.IsDir() {
		return "wfdb", path, nil // reported as a missing WFDB header
	}
	if f, err := os.Open(path); err == nil {
		var magic [8]byte
		n, _ := f.Read(magic[:])
		f.Close()
		if n == 8 && (string(magic[:]) == "0       " || string(magic[:]) == "\xffBIOSEMI") {
			return "edf", path, nil
		}
	}
	if base := strings.TrimSuffix(path, filepath.Ext(path)); base != path {
		if _, err := os.Stat(base + ".hea"); err == nil {
			return "wfdb", base, nil
		}
	}
	return "", "", fmt.Errorf("recording %s: not a WFDB record (no %s.hea), EDF/BDF file or .csv: %w", path, path, ErrFormat)
}

// sortAnnotations sorts by time, keeping the order of equal times.
func sortAnnotations(a []Annotation) {
	sort.SliceStable(a, func(i, j int) bool { return a[i].Time < a[j].Time })
}
