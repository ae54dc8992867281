package recording

import (
	"errors"
	"fmt"
	"io"

	"github.com/tidalbeat/tidalbeat/window"
)

// Reader reads a recording in chunks, so that a days-long file never has to
// be held in memory. Open and OpenWith are built on it: they read every chunk
// and append them, so batch and chunked reading share one decoder.
//
// Time is counted in frames: a frame is 1/FrameHz seconds and holds
// SamplesPerFrame[i] samples of channel i (WFDB frames; for EDF one data
// record; for CSV one sample). A Reader is not safe for concurrent use.
type Reader struct {
	// Info describes the recording: name, start, formats, annotations, and
	// the channels with their names, units, rates and roles but no Samples
	// and no Gaps (those arrive in chunks).
	Info Recording
	// FrameHz is the frame rate, Hz; channel i has rate
	// FrameHz*SamplesPerFrame[i].
	FrameHz float64
	// SamplesPerFrame holds each channel's samples per frame.
	SamplesPerFrame []int
	// Frames is the number of frames in the recording, known at open (from
	// the header, checked against the file size, or from the file size).
	Frames int64

	src   chunkSource
	pos   int64   // frames delivered so far
	count []int64 // samples delivered so far, per channel
	done  bool
}

// Chunk is a run of consecutive frames read by Reader.Next.
type Chunk struct {
	Frame int64   // index of the first frame
	N     int     // number of frames in the chunk
	Start float64 // time of the first frame, seconds from the recording start
	// First[i] is the index of channel i's first sample in the chunk;
	// that sample is at First[i]/RateHz seconds. For EDF+D files, whose
	// discontinuities are filled with NaN, a chunk's channels may hold
	// more than N*SamplesPerFrame[i] samples.
	First []int64
	// Samples[i] holds channel i's samples for the chunk's frames
	// (len = frames*SamplesPerFrame[i]), physical units, NaN = invalid.
	Samples [][]float64
	// Gaps[i] lists channel i's invalid stretches inside the chunk, in
	// seconds from the recording start.
	Gaps [][]window.Interval
}

// chunkSource is one format's decoder. read appends up to maxFrames frames
// to dst[i] (one slice per channel) and returns the number of frames read;
// it returns 0 and io.EOF at the end. warnings are reported at the end.
type chunkSource interface {
	read(maxFrames int, dst [][]float64) (int, error)
	close() error
	warnings() []error
}

// OpenStream opens the recording at path (see Open for the formats) for
// chunked reading with default Options. Close the Reader when done.
func OpenStream(path string) (*Reader, error) { return OpenStreamWith(path, Options{}) }

// OpenStreamWith opens the recording at path for chunked reading. WFDB and
// EDF files are decoded chunk by chunk; CSV files are read whole (their
// irregular timestamps need the whole series to be resampled) and then
// handed out in chunks.
func OpenStreamWith(path string, opt Options) (*Reader, error) {
	var r *Reader
	var err error
	switch kind, p, kerr := formatOf(path); {
	case kerr != nil:
		return nil, kerr
	case kind == "edf":
		r, err = openEDFStream(p)
	case kind == "csv":
		var rec *Recording
		rec, err = readCSVFile(p, opt)
		if err == nil {
			r = memoryReader(rec)
		}
	default:
		r, err = openWFDBStream(p, opt)
	}
	if err != nil {
		return nil, err
	}
	finish(&r.Info, opt)
	return r, nil
}

// Next reads up to maxFrames frames (at least 1; values below 1 mean 1). At
// the end of the recording it returns an empty Chunk and io.EOF. Any other
// error names the file and the field and wraps a package sentinel. Each
// chunk has freshly allocated slices that the caller may keep.
func (r *Reader) Next(maxFrames int) (Chunk, error) {
	n := len(r.Info.Channels)
	c := Chunk{Frame: r.pos, Start: float64(r.pos) / r.FrameHz, Samples: make([][]float64, n), Gaps: make([][]window.Interval, n)}
	if r.count == nil {
		r.count = make([]int64, n)
	}
	c.First = append([]int64(nil), r.count...)
	for i := range c.Samples {
		c.Samples[i] = make([]float64, 0, min(max(maxFrames, 1), 1<<16)*r.SamplesPerFrame[i])
	}
	got, err := r.appendNext(maxFrames, c.Samples, c.Gaps)
	if err != nil {
		return Chunk{}, err
	}
	c.N = got
	return c, nil
}

// appendNext is the one driver of the decoders: it appends up to maxFrames
// frames to samples[i] and their invalid stretches to gaps[i].
func (r *Reader) appendNext(maxFrames int, samples [][]float64, gaps [][]window.Interval) (int, error) {
	if r.done {
		return 0, io.EOF
	}
	if maxFrames < 1 {
		maxFrames = 1
	}
	if r.count == nil {
		r.count = make([]int64, len(r.Info.Channels))
	}
	from := make([]int, len(samples))
	for i := range samples {
		from[i] = len(samples[i])
	}
	got, err := r.src.read(maxFrames, samples)
	if err != nil {
		if errors.Is(err, io.EOF) {
			r.done = true
			r.Info.Warnings = append(r.Info.Warnings, r.src.warnings()...)
		}
		return 0, err
	}
	for i := range samples {
		s := samples[i][from[i]:]
		rate := r.Info.Channels[i].RateHz
		gaps[i] = window.InvalidRuns(gaps[i], s, rate, float64(r.count[i])/rate)
		r.count[i] += int64(len(s))
	}
	r.pos += int64(got)
	return got, nil
}

// Close releases the files held by the Reader.
func (r *Reader) Close() error { return r.src.close() }

// readAll drains r into a Recording (the batch path of Open).
func readAll(r *Reader, framesHint int64) (*Recording, error) {
	defer r.Close()
	rec := r.Info
	rec.Channels = append([]Channel(nil), r.Info.Channels...)
	if framesHint > 0 {
		for i := range rec.Channels {
			rec.Channels[i].Samples = make([]float64, 0, framesHint*int64(r.SamplesPerFrame[i]))
		}
	}
	const chunkFrames = 1 << 15
	samples := make([][]float64, len(rec.Channels))
	gaps := make([][]window.Interval, len(rec.Channels))
	for i := range rec.Channels {
		samples[i] = rec.Channels[i].Samples
	}
	for {
		_, err := r.appendNext(chunkFrames, samples, gaps)
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, err
		}
	}
	for i := range rec.Channels {
		rec.Channels[i].Samples, rec.Channels[i].Gaps = samples[i], gaps[i]
	}
	for i := range rec.Channels {
		g, err := window.NormalizeGaps(rec.Channels[i].Gaps)
		if err != nil {
			return nil, fmt.Errorf("%s: channel %d gaps: %w", rec.Name, i, err)
		}
		rec.Channels[i].Gaps = g
	}
	rec.Warnings = r.Info.Warnings
	return &rec, nil
}

// memSource hands out an in-memory recording whose channels share one rate.
type memSource struct {
	rec *Recording
	pos int
}

func memoryReader(rec *Recording) *Reader {
	info := *rec
	info.Channels = make([]Channel, len(rec.Channels))
	spf := make([]int, len(rec.Channels))
	frames := int64(0)
	rate := 1.0
	for i, c := range rec.Channels {
		c.Samples, c.Gaps = nil, nil
		info.Channels[i] = c
		spf[i] = 1
		rate = c.RateHz
		frames = int64(len(rec.Channels[i].Samples))
	}
	return &Reader{Info: info, FrameHz: rate, SamplesPerFrame: spf, Frames: frames, src: &memSource{rec: rec}}
}

func (m *memSource) read(maxFrames int, dst [][]float64) (int, error) {
	if len(m.rec.Channels) == 0 || m.pos >= len(m.rec.Channels[0].Samples) {
		return 0, io.EOF
	}
	end := min(m.pos+maxFrames, len(m.rec.Channels[0].Samples))
	for i, c := range m.rec.Channels {
		dst[i] = append(dst[i], c.Samples[m.pos:end]...)
	}
	n := end - m.pos
	m.pos = end
	return n, nil
}

func (m *memSource) close() error      { return nil }
func (m *memSource) warnings() []error { return nil }
