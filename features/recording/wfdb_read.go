package recording

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// wfdbPaths splits a record path given with or without ".hea" into the
// directory, the record name and the header path.
func wfdbPaths(path string) (dir, name, hea string) {
	p := strings.TrimSuffix(path, ".hea")
	return filepath.Dir(p), filepath.Base(p), p + ".hea"
}

// ReadWFDBHeader reads and parses the header of the WFDB record at path
// (with or without ".hea").
func ReadWFDBHeader(path string) (*WFDBHeader, error) {
	_, _, hea := wfdbPaths(path)
	f, err := os.Open(hea)
	if err != nil {
		return nil, fmt.Errorf("wfdb %s: %w: %w", hea, ErrNotFound, err)
	}
	defer f.Close()
	return ParseWFDBHeader(f, hea)
}

// readWFDB reads a whole WFDB record: header, signals and annotations.
func readWFDB(path string, opt Options) (*Recording, error) {
	r, err := openWFDBStream(path, opt)
	if err != nil {
		return nil, err
	}
	return readAll(r, r.Frames)
}

// openWFDBStream parses the header, checks every signal file against it and
// loads the annotations; signals are decoded as chunks are read.
func openWFDBStream(path string, opt Options) (*Reader, error) {
	dir, name, hea := wfdbPaths(path)
	h, err := ReadWFDBHeader(path)
	if err != nil {
		return nil, err
	}
	src, err := newWFDBSource(h, dir, hea, opt.StrictChecksum)
	if err != nil {
		return nil, err
	}
	// WFDB base times carry no time zone; they are taken as UTC. A base
	// time without a base date does not fix the start (StartKnown false).
	info := Recording{Name: name, Format: "wfdb", Comments: h.Comments}
	if h.StartDate {
		info.Start, info.StartKnown = h.Start, true
	}
	spf := make([]int, len(h.Signals))
	for i, s := range h.Signals {
		spf[i] = s.SamplesFrame
		info.Channels = append(info.Channels, Channel{
			Name: s.Description, Unit: s.Units, RateHz: h.FrameHz * float64(s.SamplesFrame),
			Gain: s.Gain, Baseline: float64(s.Baseline),
		})
	}
	anns, err := loadAnnotators(dir, name, h.FrameHz, opt.Annotators)
	if err != nil {
		src.close()
		return nil, err
	}
	info.Annotations = anns
	return &Reader{Info: info, FrameHz: h.FrameHz, SamplesPerFrame: spf, Frames: src.frames, src: src}, nil
}

// loadAnnotators reads the named annotators (or "atr" when present, for nil).
func loadAnnotators(dir, name string, rate float64, list []string) ([]Annotation, error) {
	optional := false
	if list == nil {
		list, optional = []string{"atr"}, true
	}
	var all []Annotation
	for _, a := range list {
		if a == "" || !filepath.IsLocal(name+"."+a) || strings.ContainsAny(a, `/\`) {
			return nil, fmt.Errorf("wfdb %s: annotator %q is not a plain file extension: %w", filepath.Join(dir, name), a, ErrNotFound)
		}
		p := filepath.Join(dir, name+"."+a)
		if optional {
			if _, err := os.Stat(p); err != nil {
				continue
			}
		}
		anns, err := ReadWFDBAnnotations(p, rate)
		if err != nil {
			return nil, err
		}
		for i := range anns {
			anns[i].Annotator = a
		}
		all = append(all, anns...)
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].Time < all[j].Time })
	return all, nil
}

// wfdbSource decodes the signal files of one record chunk by chunk.
type wfdbSource struct {
	hea    string
	h      *WFDBHeader
	groups []*wfdbGroup
	sig    []wfdbSigState
	frames int64 // frames to deliver
	pos    int64
	strict bool
	warns  []error
}

// wfdbGroup is one signal file and the consecutive signals stored in it.
type wfdbGroup struct {
	path         string
	f            *os.File
	r            io.Reader // the bytes the record needs, read in blocks of len(buf)
	format       int
	first, n     int   // signals first..first+n-1
	owner        []int // owner[k]: signal of the k-th sample of a frame
	frameSamples int
	cursor       int // position inside the frame of the next decoded sample
	eof          bool
	buf          []byte
	vals         []int64
}

type wfdbSigState struct {
	fifo   []int64
	head   int
	toSkip int64 // skew samples still to drop
	prev   int64 // running value for format 8
	sum    int64 // sum of delivered stored values, for the checksum
	short  bool  // ran out of data before the end (padded with invalid)
}

const maxFrameSamples = 1 << 20

func newWFDBSource(h *WFDBHeader, dir, hea string, strict bool) (*wfdbSource, error) {
	s := &wfdbSource{hea: hea, h: h, sig: make([]wfdbSigState, len(h.Signals)), strict: strict}
	maxAvail, present := int64(0), int64(0)
	for i := 0; i < len(h.Signals); {
		j := i
		fs := 0
		for j < len(h.Signals) && h.Signals[j].File == h.Signals[i].File {
			fs += h.Signals[j].SamplesFrame
			j++
		}
		sg := h.Signals[i]
		if fs > maxFrameSamples {
			s.close()
			return nil, fmt.Errorf("wfdb %s: signal file %s: %d samples per frame: %w", hea, sg.File, fs, ErrTooLarge)
		}
		g := &wfdbGroup{format: sg.Format, first: i, n: j - i, frameSamples: fs}
		for k := i; k < j; k++ {
			for m := 0; m < h.Signals[k].SamplesFrame; m++ {
				g.owner = append(g.owner, k)
			}
			s.sig[k].toSkip = int64(h.Signals[k].Skew) * int64(h.Signals[k].SamplesFrame)
			s.sig[k].prev = int64(h.Signals[k].InitVal)
		}
		avail := int64(0)
		if sg.File != "~" { // "~" marks a signal that is not stored (all invalid)
			if !filepath.IsLocal(sg.File) {
				s.close()
				return nil, fmt.Errorf("wfdb %s: signal %d: file name %q leaves the record directory: %w", hea, i, sg.File, ErrHeader)
			}
			g.path = filepath.Join(dir, sg.File)
			f, err := os.Open(g.path)
			if err != nil {
				s.close()
				return nil, fmt.Errorf("wfdb %s: signal %d: file %s: %w: %w", hea, i, sg.File, ErrNotFound, err)
			}
			g.f = f
			st, err := f.Stat()
			if err != nil {
				s.close()
				return nil, fmt.Errorf("wfdb %s: signal file %s: %w", hea, sg.File, err)
			}
			if st.Size() < sg.Offset {
				s.close()
				return nil, fmt.Errorf("wfdb %s: signal file %s: %d bytes, shorter than its byte offset %d: %w", hea, sg.File, st.Size(), sg.Offset, ErrTruncated)
			}
			avail = samplesInBytes(sg.Format, st.Size()-sg.Offset) / int64(fs)
			present += st.Size()
			if h.Frames > 0 && avail < h.Frames {
				s.close()
				return nil, fmt.Errorf("wfdb %s: signal file %s holds %d frames, field number of samples says %d: %w", hea, sg.File, avail, h.Frames, ErrTruncated)
			}
		} else {
			g.eof = true
		}
		maxAvail = max(maxAvail, avail)
		s.groups = append(s.groups, g)
		i = j
	}
	s.frames = h.Frames
	if s.frames == 0 {
		s.frames = maxAvail
	}
	// Signals without a file ("~") are not bounded by a file size: cap
	// every signal's length by the bytes present, as for EDF+D gaps.
	limit := int64(edfGapFillFactor)*present + edfGapFillSlack
	for k, sg := range h.Signals {
		if n := s.frames * int64(sg.SamplesFrame); n > limit || n < 0 {
			s.close()
			return nil, fmt.Errorf("wfdb %s: signal %d: %d frames x %d samples per frame for %d bytes of signal files: %w", hea, k, s.frames, sg.SamplesFrame, present, ErrTooLarge)
		}
	}
	// Limit each file to the samples the record needs (frames plus the
	// largest skew), so a file longer than its header is not read to the end.
	for _, g := range s.groups {
		if g.f == nil {
			continue
		}
		maxSkew := int64(0)
		for k := g.first; k < g.first+g.n; k++ {
			maxSkew = max(maxSkew, int64(h.Signals[k].Skew))
		}
		need := bytesForSamples(g.format, (s.frames+maxSkew)*int64(g.frameSamples))
		off := h.Signals[g.first].Offset
		g.r = io.NewSectionReader(g.f, off, need)
		info := wfdbFormats[g.format]
		gb := int64(info.groupBytes)
		g.buf = make([]byte, min((1<<16)/gb, (need+gb-1)/gb+1)*gb) // no larger than the data to read
	}
	return s, nil
}

// decodeMore decodes the next block of the group's file into its signals'
// queues; it sets eof at the end of the data.
func (s *wfdbSource) decodeMore(g *wfdbGroup) error {
	n, err := io.ReadFull(g.r, g.buf)
	if err == io.EOF || err == io.ErrUnexpectedEOF {
		g.eof = true
	} else if err != nil {
		return fmt.Errorf("wfdb %s: signal file %s: %w", s.hea, g.path, err)
	}
	g.vals, _ = DecodeWFDB(g.vals[:0], g.format, g.buf[:n])
	for _, v := range g.vals {
		k := g.owner[g.cursor]
		g.cursor++
		if g.cursor == g.frameSamples {
			g.cursor = 0
		}
		st := &s.sig[k]
		if g.format == 8 {
			st.prev += v
			v = st.prev
		}
		if st.toSkip > 0 {
			st.toSkip--
			continue
		}
		st.fifo = append(st.fifo, v)
	}
	return nil
}

func (s *wfdbSource) read(maxFrames int, dst [][]float64) (int, error) {
	n := int64(maxFrames)
	if rem := s.frames - s.pos; rem < n {
		n = rem
	}
	if n <= 0 {
		if err := s.checkSums(); err != nil {
			return 0, err
		}
		return 0, io.EOF
	}
	for _, g := range s.groups {
		for k := g.first; k < g.first+g.n; k++ {
			need := n * int64(s.h.Signals[k].SamplesFrame)
			for int64(len(s.sig[k].fifo)-s.sig[k].head) < need && !g.eof {
				if err := s.decodeMore(g); err != nil {
					return 0, err
				}
			}
		}
	}
	for k := range s.h.Signals {
		sg := s.h.Signals[k]
		st := &s.sig[k]
		info := wfdbFormats[sg.Format]
		need := int(n) * sg.SamplesFrame
		avail := min(need, len(st.fifo)-st.head)
		out := dst[k]
		for _, v := range st.fifo[st.head : st.head+avail] {
			st.sum += v
			if info.hasInvalid && v == info.invalid {
				out = append(out, nan)
				continue
			}
			out = append(out, (float64(v)-float64(sg.Baseline))/sg.Gain)
		}
		for i := avail; i < need; i++ {
			out = append(out, nan) // past the end of the file (skewed or unstored signal)
			st.short = true
		}
		dst[k] = out
		st.head += avail
		if st.head > 1<<16 && st.head*2 > len(st.fifo) {
			st.fifo = append(st.fifo[:0], st.fifo[st.head:]...)
			st.head = 0
		}
	}
	s.pos += n
	return int(n), nil
}

// checkSums compares each signal's sum with its header checksum (WFDB
// header format: the 16-bit two's complement sum of all samples).
func (s *wfdbSource) checkSums() error {
	for k, sg := range s.h.Signals {
		if !sg.HasChecksum || s.sig[k].short {
			continue
		}
		got := int(int16(uint16(s.sig[k].sum)))
		if got != sg.Checksum {
			err := fmt.Errorf("wfdb %s: signal %d (%s): samples sum to %d, field checksum says %d: %w", s.hea, k, sg.Description, got, sg.Checksum, ErrChecksum)
			if s.strict {
				return err
			}
			s.warns = append(s.warns, err)
		}
	}
	return nil
}

func (s *wfdbSource) warnings() []error { w := s.warns; s.warns = nil; return w }

func (s *wfdbSource) close() error {
	var first error
	for _, g := range s.groups {
		if g.f != nil {
			if err := g.f.Close(); err != nil && first == nil {
				first = err
			}
			g.f = nil
		}
	}
	return first
}
