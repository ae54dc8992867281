package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
)

func init() {
	register(subcommand{name: "rpeaks", summary: "detect R-peaks in an ECG channel (CSV or WFDB annotations)", run: runRpeaks})
}

// runRpeaks implements: tidalbeat rpeaks RECORD [-signal NAME|INDEX] [-o FILE].
func runRpeaks(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("rpeaks", stderr)
	sig := fs.String("signal", "", "ECG channel `name or index` (0-based); default: the first ECG channel, else channel 0")
	out := fs.String("o", "", "output `file`: .csv (default: stdout) or a WFDB annotation file (any other extension, e.g. x.atr)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: tidalbeat rpeaks RECORD [-signal NAME|INDEX] [-o FILE]")
		fmt.Fprintln(stderr, "CSV columns: sample (index at the channel's rate), time_s (seconds from the record start)")
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return fmt.Errorf("%w: want one RECORD, got %d arguments", errUsage, len(pos))
	}
	rec, err := recording.Open(pos[0])
	if err != nil {
		return err
	}
	ch, err := rpeaksPickChannel(rec, *sig)
	if err != nil {
		return err
	}
	res, err := ecg.Detect(ch.Samples, ch.RateHz, ecg.Options{})
	if err != nil {
		return fmt.Errorf("channel %q: %w", ch.Name, err)
	}
	if *out == "" {
		return rpeaksWriteCSV(stdout, res.Beats)
	}
	return rpeaksWriteFile(*out, func(w io.Writer) error {
		if strings.EqualFold(filepath.Ext(*out), ".csv") {
			return rpeaksWriteCSV(w, res.Beats)
		}
		anns := make([]recording.Annotation, len(res.Beats))
		for i, b := range res.Beats {
			// "N": the detector does not classify beats; N is the usual
			// code for detected QRS complexes (common practice).
			anns[i] = recording.Annotation{Time: b.Time, Sample: int64(b.Sample), Code: "N"}
		}
		return recording.WriteWFDBAnnotations(w, anns, ch.RateHz)
	})
}

// rpeaksPickChannel returns the channel named or numbered by sel, or the first ECG
// channel, or channel 0.
func rpeaksPickChannel(rec *recording.Recording, sel string) (*recording.Channel, error) {
	if len(rec.Channels) == 0 {
		return nil, fmt.Errorf("record %s has no signals", rec.Name)
	}
	if sel == "" {
		if c, ok := rec.Channel(recording.RoleECG); ok {
			return c, nil
		}
		return &rec.Channels[0], nil
	}
	if c, ok := rec.ChannelByName(sel); ok {
		return c, nil
	}
	if i, err := strconv.Atoi(sel); err == nil {
		if i < 0 || i >= len(rec.Channels) {
			return nil, fmt.Errorf("%w: -signal %d: record %s has channels 0..%d", errUsage, i, rec.Name, len(rec.Channels)-1)
		}
		return &rec.Channels[i], nil
	}
	names := make([]string, len(rec.Channels))
	for i, c := range rec.Channels {
		names[i] = c.Name
	}
	return nil, fmt.Errorf("%w: -signal %q: no such channel in %s (have %s)", errUsage, sel, rec.Name, strings.Join(names, ", "))
}

// rpeaksWriteCSV writes the header sample,time_s and one row per beat.
func rpeaksWriteCSV(w io.Writer, beats []ecg.Beat) error {
	bw := bufio.NewWriter(w)
	bw.WriteString("sample,time_s\n")
	for _, b := range beats {
		bw.WriteString(strconv.Itoa(b.Sample))
		bw.WriteByte(',')
		bw.WriteString(strconv.FormatFloat(b.Time, 'f', 6, 64))
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

// rpeaksWriteFile writes a file through fn, creating it only when fn
// succeeds (a temporary file beside it, renamed).
func rpeaksWriteFile(path string, fn func(io.Writer) error) (err error) {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".rpeaks-*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	bw := bufio.NewWriter(tmp)
	if err = fn(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return err
	}
	if err = tmp.Close(); err != nil {
		return err
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return errors.Join(err, os.Remove(tmp.Name()))
	}
	return nil
}
