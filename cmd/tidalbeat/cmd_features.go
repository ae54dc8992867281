package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"github.com/tidalbeat/tidalbeat/features"
	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/resp"
	"github.com/tidalbeat/tidalbeat/window"
)

func init() {
	register(subcommand{name: "features", summary: "compute the windowed feature table of one or more records", run: runFeatures})
}

// roleFlags collects -role NAME=ROLE overrides.
type roleFlags map[string]recording.Role

func (r roleFlags) String() string { return fmt.Sprint(map[string]recording.Role(r)) }

func (r roleFlags) Set(s string) error {
	name, role, ok := strings.Cut(s, "=")
	if !ok || name == "" {
		return fmt.Errorf("want CHANNEL=ROLE, got %q", s)
	}
	p, err := recording.ParseRole(role)
	if err != nil {
		return err
	}
	r[name] = p
	return nil
}

const featuresUsage = `usage: tidalbeat features [flags] RECORD|DIR... [-o table.csv|.jsonl|.parquet]

Computes one row every -step (30 s, on the Unix-epoch grid) per record: HRV
over 5 min, breathing over 60 s, activity over 30 s, each with coverage and
reason columns, plus label columns from annotations and -labels. Several
records (or directories of records) go through a pool of -j workers into one
table with a record column, or with -partition into a Hive-partitioned
Parquet dataset DIR/record=<name>/part-0.parquet. A record that fails is
reported and the others continue; the exit status is then 1.

Breathing volumes are in arbitrary units (the _au columns) unless the bands
are calibrated to litres: -rib-weight and -abd-weight give known weights
(litres per band unit, e.g. from a spirometer calibration of an earlier
session); -vref-annotations fits both weights by least squares to reference
breaths annotated "vref=<volume> L" with a duration spanning the breath (10
or more; with -qdc, 2 or more suffice); -qdc START,END alone gives relative
(QDC) weights, still in arbitrary units. The calibration applied to each
record is written to the sidecar's notes.

flags:
`

// runFeatures implements tidalbeat features.
func runFeatures(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("features", stderr)
	out := fs.String("o", "", "output `file` (.csv, .jsonl, .ndjson, .parquet), or the dataset directory with -partition; CSV on stdout when empty")
	partition := fs.Bool("partition", false, "write a Hive-partitioned Parquet dataset: -o DIR/record=<name>/part-0.parquet")
	jobs := fs.Int("j", runtime.NumCPU(), "records processed in parallel")
	beats := fs.String("beats", "", "take HRV beats from this `annotator`'s beat annotations (e.g. atr) instead of detecting them")
	step := fs.Duration("step", features.DefaultStep, "row spacing")
	hrvW := fs.Duration("hrv-window", features.DefaultHRVWindow, "HRV window length")
	brW := fs.Duration("breathing-window", features.DefaultBreathingWindow, "breathing window length")
	actW := fs.Duration("activity-window", features.DefaultActivityWindow, "activity window length")
	minCov := fs.Float64("min-coverage", window.DefaultMinCoverage, "fraction of a window that must hold valid data")
	anchor := fs.String("anchor", "epoch", "row grid anchor: epoch (Unix epoch) or start (recording start)")
	fams := fs.String("families", "", "comma-separated families to compute (hrv,breathing,activity); all when empty")
	labels := fs.String("labels", "", "CSV `file` of labelled UTC intervals start,end,label (RFC 3339)")
	start := fs.String("start", "", "UTC start (RFC 3339) for records whose files give none")
	quiet := fs.Bool("q", false, "no progress bar")
	noQ := fs.Bool("no-ecg-quality", false, "leave out the ECG quality columns (faster)")
	ribW := fs.Float64("rib-weight", 0, "known rib-cage band weight, `L per band unit` (with -abd-weight)")
	abdW := fs.Float64("abd-weight", 0, "known abdominal band weight, `L per band unit` (with -rib-weight)")
	qdc := fs.String("qdc", "", "QDC calibration over `START,END` seconds from the record start (natural breathing, one posture)")
	vref := fs.Bool("vref-annotations", false, "calibrate to litres from reference breaths annotated \"vref=<volume> L\" (with a duration)")
	roles := roleFlags{}
	fs.Var(roles, "role", "set a channel role, `CHANNEL=ROLE` (ecg, rib_cage, abdomen, acc_x, acc_y, acc_z, unknown); repeatable")
	fs.Usage = func() {
		fmt.Fprint(stderr, featuresUsage)
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) == 0 {
		return fmt.Errorf("%w: want at least one RECORD or DIR", errUsage)
	}
	if *jobs < 1 {
		return fmt.Errorf("%w: -j %d: want at least 1", errUsage, *jobs)
	}
	if *partition && *out == "" {
		return fmt.Errorf("%w: -partition needs -o DIR", errUsage)
	}
	if *out != "" && !*partition {
		if _, err := features.FormatOf(*out); err != nil {
			return fmt.Errorf("%w: %v", errUsage, err)
		}
	}
	cfg := features.Config{Step: *step, HRVWindow: *hrvW, BreathingWindow: *brW, ActivityWindow: *actW,
		MinCoverage: *minCov, BeatsAnnotator: *beats, Roles: roles, NoECGQuality: *noQ}
	if bc, err := breathCalFlags(*ribW, *abdW, *qdc, *vref); err != nil {
		return err
	} else {
		cfg.BreathCalibration = bc
	}
	switch *anchor {
	case "epoch":
		cfg.Anchor = window.AnchorEpoch
	case "start":
		cfg.Anchor = window.AnchorStart
	default:
		return fmt.Errorf("%w: -anchor %q: want epoch or start", errUsage, *anchor)
	}
	if *fams != "" {
		cfg.Families = strings.Split(*fams, ",")
	}
	if len(roles) == 0 {
		cfg.Roles = nil
	}
	var ropt recording.Options
	ropt.Roles = cfg.Roles
	if *beats != "" {
		ropt.Annotators = []string{*beats}
	}
	if *start != "" {
		t, err := time.Parse(time.RFC3339Nano, *start)
		if err != nil {
			return fmt.Errorf("%w: -start: %v", errUsage, err)
		}
		ropt.Start = t
	}
	if *labels != "" {
		f, err := os.Open(*labels)
		if err != nil {
			return err
		}
		cfg.Labels, err = features.ReadLabelsCSV(f)
		f.Close()
		if err != nil {
			return err
		}
	}
	paths, err := expandRecords(pos)
	if err != nil {
		return err
	}
	showBar := !*quiet && len(paths) > 1 && isTerminal(stderr)
	res := runPool(paths, *jobs, cfg, ropt, showBar, stderr)

	var tables []*features.Table
	var names []string
	var inputs []features.InputFile
	failed := map[string]string{}
	for _, r := range res {
		if r.err != nil {
			failed[r.path] = r.err.Error()
			fmt.Fprintf(stderr, "tidalbeat features: %s: %v\n", r.path, r.err)
			continue
		}
		tables = append(tables, r.tab)
		names = append(names, r.tab.Record)
		inputs = append(inputs, r.inputs...)
	}
	uniqueNames(tables)
	if len(tables) > 0 {
		resolved, err := cfg.Resolved()
		if err != nil {
			return err
		}
		meta := features.Meta{Config: resolved, Records: names, Inputs: inputs, Failed: failed}
		for _, r := range res {
			if r.err != nil {
				continue
			}
			if !r.tab.StartKnown {
				meta.Notes = append(meta.Notes, r.tab.Record+": start time unknown: time_utc is elapsed time counted from 1970-01-01T00:00:00Z")
			}
			if r.calib != "" {
				meta.Notes = append(meta.Notes, r.tab.Record+": "+r.calib)
			}
		}
		if err := writeTables(*out, *partition, tables, meta, stdout); err != nil {
			return err
		}
	}
	if len(failed) > 0 {
		return fmt.Errorf("%d of %d records failed", len(failed), len(paths))
	}
	return nil
}

// result is one record's outcome.
type result struct {
	path   string
	tab    *features.Table
	inputs []features.InputFile
	calib  string // the breathing calibration applied, when one was asked for
	err    error
}

// runPool extracts every record with at most jobs records in memory at once
// and returns the results in input order.
func runPool(paths []string, jobs int, cfg features.Config, ropt recording.Options, bar bool, stderr io.Writer) []result {
	res := make([]result, len(paths))
	var pb *progressbar.ProgressBar
	if bar {
		pb = progressbar.NewOptions(len(paths), progressbar.OptionSetWriter(stderr),
			progressbar.OptionSetDescription("features"), progressbar.OptionShowCount(),
			progressbar.OptionClearOnFinish())
	}
	next := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	for range min(jobs, len(paths)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				res[i] = extractOne(paths[i], cfg, ropt)
				if pb != nil {
					mu.Lock()
					pb.Add(1)
					mu.Unlock()
				}
			}
		}()
	}
	for i := range paths {
		next <- i
	}
	close(next)
	wg.Wait()
	if pb != nil {
		pb.Finish()
	}
	return res
}

// extractOne opens, hashes and extracts one record; a panic in the library
// becomes this record's error so the other records continue.
func extractOne(path string, cfg features.Config, ropt recording.Options) (r result) {
	r.path = path
	defer func() {
		if p := recover(); p != nil {
			r.tab, r.err = nil, fmt.Errorf("internal error (a bug in tidalbeat, please report): %v", p)
		}
	}()
	rec, err := recording.OpenWith(path, ropt)
	if err != nil {
		r.err = err
		return r
	}
	files, err := features.RecordFiles(path)
	if err == nil {
		r.inputs, err = features.HashFiles(files...)
	}
	if err != nil {
		r.err = err
		return r
	}
	r.tab, r.err = features.Extract(rec, cfg)
	if r.err == nil && cfg.BreathCalibration != (features.BreathCalibration{}) {
		c, err := features.ResolveBreathCalibration(rec, cfg)
		if err != nil {
			r.tab, r.err = nil, err
			return r
		}
		r.calib = c.String()
	}
	return r
}

// breathCalFlags turns the calibration flags into the configuration.
func breathCalFlags(rib, abd float64, qdc string, vref bool) (features.BreathCalibration, error) {
	var bc features.BreathCalibration
	if rib != 0 || abd != 0 {
		if !(rib > 0) || !(abd > 0) || math.IsInf(rib, 0) || math.IsInf(abd, 0) {
			return bc, fmt.Errorf("%w: -rib-weight %v -abd-weight %v: want both, positive", errUsage, rib, abd)
		}
		if qdc != "" || vref {
			return bc, fmt.Errorf("%w: known weights (-rib-weight, -abd-weight) exclude -qdc and -vref-annotations", errUsage)
		}
		bc.Weights = &resp.Calibration{RibWeight: rib, AbdWeight: abd, Litres: true, Method: "known"}
	}
	if qdc != "" {
		a, b, ok := strings.Cut(qdc, ",")
		lo, err1 := strconv.ParseFloat(strings.TrimSpace(a), 64)
		hi, err2 := strconv.ParseFloat(strings.TrimSpace(b), 64)
		if !ok || err1 != nil || err2 != nil || !(lo >= 0) || !(hi > lo) || math.IsInf(hi, 0) {
			return bc, fmt.Errorf("%w: -qdc %q: want START,END seconds with 0 <= START < END", errUsage, qdc)
		}
		bc.QDC = &window.Interval{Start: lo, End: hi}
	}
	bc.VrefAnnotations = vref
	return bc, nil
}

// expandRecords turns the arguments into record paths: files as given,
// directories into their WFDB headers, EDF/BDF and CSV files, sorted.
func expandRecords(args []string) ([]string, error) {
	var out []string
	for _, a := range args {
		st, err := os.Stat(a)
		if err != nil && !errors.Is(err, os.ErrNotExist) {
			return nil, err
		}
		if err != nil || !st.IsDir() {
			out = append(out, a) // a file, or a WFDB record name without .hea
			continue
		}
		ents, err := os.ReadDir(a)
		if err != nil {
			return nil, err
		}
		var found []string
		for _, e := range ents {
			switch strings.ToLower(filepath.Ext(e.Name())) {
			case ".hea", ".edf", ".bdf", ".csv":
				if !e.IsDir() {
					found = append(found, filepath.Join(a, e.Name()))
				}
			}
		}
		if len(found) == 0 {
			return nil, fmt.Errorf("%s: no records (.hea, .edf, .bdf, .csv) in the directory", a)
		}
		sort.Strings(found)
		out = append(out, found...)
	}
	return out, nil
}

// uniqueNames gives tables with the same record name distinct names
// (name, name_2, ...) so partitions and the record column stay unambiguous.
func uniqueNames(tables []*features.Table) {
	seen := map[string]int{}
	for _, t := range tables {
		seen[t.Record]++
		if n := seen[t.Record]; n > 1 {
			t.Record = fmt.Sprintf("%s_%d", t.Record, n)
		}
	}
}

// writeTables writes one table (stdout CSV when out is empty) or a
// partitioned dataset, and the sidecar.
func writeTables(out string, partition bool, tables []*features.Table, meta features.Meta, stdout io.Writer) error {
	meta.Columns = append(features.FixedColumns(), features.UnionColumns(tables...)...)
	if out == "" {
		w, err := features.NewWriter(stdout, features.CSV, features.UnionColumns(tables...), features.WriteOptions{})
		if err != nil {
			return err
		}
		for _, t := range tables {
			if err := w.Write(t); err != nil {
				return err
			}
		}
		return w.Close()
	}
	if !partition {
		if _, err := features.WriteFile(out, features.WriteOptions{}, tables...); err != nil {
			return err
		}
		return features.WriteSidecar(out, meta)
	}
	cols := features.UnionColumns(tables...)
	for _, t := range tables {
		dir := filepath.Join(out, "record="+partitionValue(t.Record))
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
		f, err := os.Create(filepath.Join(dir, "part-0.parquet"))
		if err != nil {
			return err
		}
		w, err := features.NewWriter(f, features.Parquet, cols, features.WriteOptions{NoRecord: true})
		if err == nil {
			err = w.Write(t)
			if cerr := w.Close(); err == nil {
				err = cerr
			}
		}
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return fmt.Errorf("%s: %w", dir, err)
		}
	}
	return features.WriteSidecar(out, meta)
}

// partitionValue makes a record name safe as a Hive partition value (no
// path separators, '=' or control characters).
func partitionValue(s string) string {
	return strings.Map(func(r rune) rune {
		if r == '/' || r == '\\' || r == '=' || r < ' ' {
			return '_'
		}
		return r
	}, s)
}

// isTerminal reports whether w is a terminal (the progress bar is shown only
// then).
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}
