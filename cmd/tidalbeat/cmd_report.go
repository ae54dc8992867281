package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/features/report"
)

func init() {
	register(subcommand{name: "report", summary: "write a self-contained HTML report of a recording", run: runReport})
}

// runReport implements: tidalbeat report RECORD [-o report.html] with the
// breathing calibration flags of tidalbeat features.
func runReport(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("report", stderr)
	out := fs.String("o", "report.html", "output HTML `file`")
	// The breathing calibration flags of "tidalbeat features" (same names,
	// same parsing), so a report is drawn with the calibration its table
	// was made with.
	ribW := fs.Float64("rib-weight", 0, "known rib-cage band weight, `L per band unit` (with -abd-weight)")
	abdW := fs.Float64("abd-weight", 0, "known abdominal band weight, `L per band unit` (with -rib-weight)")
	qdc := fs.String("qdc", "", "QDC calibration over `START,END` seconds from the record start (natural breathing, one posture)")
	vref := fs.Bool("vref-annotations", false, "calibrate to litres from reference breaths annotated \"vref=<volume> L\" (with a duration)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: tidalbeat report RECORD [-o report.html] [-vref-annotations | -qdc START,END | -rib-weight W -abd-weight W]")
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return fmt.Errorf("%w: want one RECORD, got %d arguments", errUsage, len(pos))
	}
	bc, err := breathCalFlags(*ribW, *abdW, *qdc, *vref)
	if err != nil {
		return err
	}
	rec, err := recording.Open(pos[0])
	if err != nil {
		return err
	}
	a, err := report.Analyze(rec, report.Options{Features: features.Config{BreathCalibration: bc}})
	if err != nil {
		return err
	}
	if err := writeReport(*out, a.Input); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "report: %s\n", *out)
	return nil
}

// writeReport renders in to path, creating the file only when rendering
// succeeds in full (it writes a temporary file beside it and renames it).
func writeReport(path string, in *report.Input) (err error) {
	tmp, err := os.CreateTemp(filepath.Dir(path), ".report-*.html")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err := report.Write(tmp, in); err != nil {
		return err
	}
	if err := tmp.Chmod(0o644); err != nil {
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return errors.Join(err, os.Remove(tmp.Name()))
	}
	return nil
}
