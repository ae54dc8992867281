package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"
	"time"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/window"
)

func init() {
	register(subcommand{name: "info", summary: "print a JSON summary of a recording (WFDB, EDF/EDF+/BDF, CSV)", run: runInfo})
}

// infoSummary is the JSON printed by tidalbeat info.
type infoSummary struct {
	Name       string        `json:"name"`
	Format     string        `json:"format"`
	Start      *string       `json:"start"` // RFC 3339 UTC; null when the file gives none
	StartKnown bool          `json:"start_known"`
	DurationS  float64       `json:"duration_s"`
	Channels   []infoChannel `json:"channels"`
	Gaps       []infoGap     `json:"gaps"`
	// AnnotationCounts counts annotations by code (WFDB mnemonic), or by
	// text for annotations without a code (EDF+, CSV labels).
	AnnotationCounts map[string]int            `json:"annotation_counts"`
	Beats            int                       `json:"beats"`
	Resample         *recording.ResampleReport `json:"resample,omitempty"`
	Warnings         []string                  `json:"warnings"`
}

type infoChannel struct {
	Name      string  `json:"name"`
	Unit      string  `json:"unit"`
	RateHz    float64 `json:"rate_hz"`
	Samples   int     `json:"samples"`
	Role      string  `json:"role"`
	GapCount  int     `json:"gap_count"`
	InvalidS  float64 `json:"invalid_s"` // total seconds inside gaps
	DurationS float64 `json:"duration_s"`
}

type infoGap struct {
	Channel string  `json:"channel"`
	StartS  float64 `json:"start_s"`
	EndS    float64 `json:"end_s"`
}

func runInfo(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("info", stderr)
	start := fs.String("start", "", "start time (RFC 3339) to use when the file has none")
	anns := fs.String("annotators", "", "comma-separated WFDB annotators to load (default: atr when present)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: tidalbeat info [flags] RECORD\n\nRECORD is a WFDB record (with or without .hea), an .edf/.bdf file or a .csv file.")
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return fmt.Errorf("%w: want exactly one RECORD, got %d arguments", errUsage, len(pos))
	}
	var opt recording.Options
	if *start != "" {
		t, err := time.Parse(time.RFC3339Nano, *start)
		if err != nil {
			return fmt.Errorf("%w: -start %q is not an RFC 3339 time", errUsage, *start)
		}
		opt.Start = t
	}
	if *anns != "" {
		opt.Annotators = strings.Split(*anns, ",")
	}
	rec, err := scanRecording(pos[0], opt)
	if err != nil {
		return err
	}
	enc := json.NewEncoder(stdout)
	enc.SetIndent("", "  ")
	return enc.Encode(summarize(rec))
}

// scanRecording reads path in chunks and returns its channels, gaps,
// annotations and sample counts without keeping the samples, so that
// days-long WFDB and EDF files are summarised in bounded memory.
func scanRecording(path string, opt recording.Options) (*countedRecording, error) {
	r, err := recording.OpenStreamWith(path, opt)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	n := len(r.Info.Channels)
	counts := make([]int, n)
	gaps := make([][]window.Interval, n)
	for {
		c, err := r.Next(1 << 14)
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, err
		}
		for i := range c.Samples {
			counts[i] += len(c.Samples[i])
			gaps[i] = append(gaps[i], c.Gaps[i]...)
		}
	}
	rec := r.Info
	rec.Channels = append([]recording.Channel(nil), r.Info.Channels...)
	for i := range rec.Channels {
		g, err := window.NormalizeGaps(gaps[i])
		if err != nil {
			return nil, fmt.Errorf("%s: channel %d: %w", path, i, err)
		}
		rec.Channels[i].Gaps = g
	}
	return &countedRecording{Recording: &rec, counts: counts}, nil
}

// countedRecording is a Recording whose samples were counted, not kept.
type countedRecording struct {
	*recording.Recording
	counts []int // samples per channel
}

// durationS is the longest channel's length, or without channels the end of
// the last annotation (as Recording.Duration).
func (c *countedRecording) durationS() float64 {
	d := 0.0
	for i, ch := range c.Channels {
		if ch.RateHz > 0 {
			d = max(d, float64(c.counts[i])/ch.RateHz)
		}
	}
	if len(c.Channels) == 0 {
		d = c.Recording.Duration()
	}
	return d
}

// summarize builds the info summary of a scanned recording.
func summarize(rec *countedRecording) infoSummary {
	s := infoSummary{Name: rec.Name, Format: rec.Format, StartKnown: rec.StartKnown, DurationS: rec.durationS(),
		Channels: []infoChannel{}, Gaps: []infoGap{}, AnnotationCounts: map[string]int{}, Resample: rec.Resample, Warnings: []string{}}
	if rec.StartKnown || !rec.Start.IsZero() {
		v := rec.Start.UTC().Format(time.RFC3339Nano)
		s.Start = &v
	}
	for i, c := range rec.Channels {
		ic := infoChannel{Name: c.Name, Unit: c.Unit, RateHz: c.RateHz, Samples: rec.counts[i], Role: c.Role.String(), GapCount: len(c.Gaps)}
		if c.RateHz > 0 {
			ic.DurationS = float64(rec.counts[i]) / c.RateHz
		}
		for _, g := range c.Gaps {
			ic.InvalidS += g.End - g.Start
			s.Gaps = append(s.Gaps, infoGap{Channel: c.Name, StartS: g.Start, EndS: g.End})
		}
		s.Channels = append(s.Channels, ic)
	}
	sort.SliceStable(s.Gaps, func(i, j int) bool { return s.Gaps[i].StartS < s.Gaps[j].StartS })
	for _, a := range rec.Annotations {
		k := a.Code
		if k == "" {
			k = a.Text
		}
		s.AnnotationCounts[k]++
		if a.IsBeat() {
			s.Beats++
		}
	}
	for _, w := range rec.Warnings {
		s.Warnings = append(s.Warnings, w.Error())
	}
	return s
}
