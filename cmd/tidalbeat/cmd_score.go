package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/tidalbeat/tidalbeat/ecg"
	"github.com/tidalbeat/tidalbeat/features/recording"
)

func init() {
	register(subcommand{name: "score", summary: "compare detected beats with reference annotations beat by beat", run: runScore})
}

// runScore implements:
// tidalbeat score -ref RECORD -annotator atr -test FILE [-tol 0.15] [-skip S] [-csv] [-list].
func runScore(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("score", stderr)
	ref := fs.String("ref", "", "reference `record` (WFDB record, with or without .hea)")
	annr := fs.String("annotator", "atr", "reference `annotator` (annotation file extension)")
	test := fs.String("test", "", "detected beats: a CSV `file` from rpeaks (sample,time_s) or a WFDB annotation file")
	tol := fs.Float64("tol", ecg.MatchWindowS, "matching tolerance in `seconds` (150 ms: ANSI/AAMI EC57 as usually quoted)")
	skip := fs.Float64("skip", 0, "ignore beats in the first `seconds` (EC57 uses a 5 min learning period: 300)")
	asCSV := fs.Bool("csv", false, "write the table as CSV")
	list := fs.Bool("list", false, "also list every missed reference beat and every false detection")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: tidalbeat score -ref RECORD -annotator atr -test FILE [-tol 0.15] [-skip S] [-csv] [-list]")
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return fmt.Errorf("%w: unexpected arguments %v", errUsage, pos)
	}
	if *ref == "" || *test == "" {
		return fmt.Errorf("%w: -ref and -test are required", errUsage)
	}
	if !(*tol > 0) || !(*skip >= 0) || math.IsInf(*skip, 0) {
		return fmt.Errorf("%w: -tol %v and -skip %v must be positive", errUsage, *tol, *skip)
	}
	rec, err := recording.OpenWith(*ref, recording.Options{Annotators: []string{*annr}})
	if err != nil {
		return err
	}
	rate := 0.0
	if len(rec.Channels) > 0 {
		rate = rec.Channels[0].RateHz
	}
	var refT []float64
	for _, a := range rec.Annotations {
		if a.Annotator == *annr && a.IsBeat() && a.Time >= *skip {
			refT = append(refT, a.Time)
		}
	}
	testT, err := scoreReadTest(*test, rate)
	if err != nil {
		return err
	}
	kept := testT[:0]
	for _, v := range testT {
		if v >= *skip {
			kept = append(kept, v)
		}
	}
	s, err := ecg.MatchBeats(refT, kept, *tol)
	if err != nil {
		return err
	}
	s.Record = rec.Name
	sum := ecg.Summarize([]ecg.Score{s})
	if *asCSV {
		return scoreWriteCSV(stdout, []ecg.Score{s}, sum)
	}
	scoreWriteText(stdout, []ecg.Score{s}, sum, *tol, *skip)
	if *list {
		for _, i := range s.MissedRef {
			fmt.Fprintf(stdout, "missed  %.3f s (reference)\n", refT[i])
		}
		for _, i := range s.ExtraTest {
			fmt.Fprintf(stdout, "false   %.3f s (detection)\n", kept[i])
		}
	}
	return nil
}

// scoreReadTest reads detection times (s): CSV with a time_s column, or a
// WFDB annotation file (beat codes only) at the record's rate.
func scoreReadTest(path string, rate float64) ([]float64, error) {
	if strings.EqualFold(filepath.Ext(path), ".csv") {
		f, err := os.Open(path)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		r := csv.NewReader(f)
		head, err := r.Read()
		if err != nil {
			return nil, fmt.Errorf("%s: header: %w", path, err)
		}
		col := -1
		for i, h := range head {
			if strings.TrimSpace(h) == "time_s" {
				col = i
			}
		}
		if col < 0 {
			return nil, fmt.Errorf("%s: no time_s column in header %v", path, head)
		}
		var out []float64
		for line := 2; ; line++ {
			rowv, err := r.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				return nil, fmt.Errorf("%s: %w", path, err)
			}
			v, err := strconv.ParseFloat(strings.TrimSpace(rowv[col]), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%s line %d: time_s %q is not a finite number", path, line, rowv[col])
			}
			out = append(out, v)
		}
		return out, nil
	}
	if !(rate > 0) {
		return nil, fmt.Errorf("%s: the reference record has no signal rate to read annotations with", path)
	}
	anns, err := recording.ReadWFDBAnnotations(path, rate)
	if err != nil {
		return nil, err
	}
	var out []float64
	for _, a := range anns {
		if a.IsBeat() {
			out = append(out, a.Time)
		}
	}
	return out, nil
}

func scorePct(v float64) string {
	if math.IsNaN(v) {
		return "NaN"
	}
	return strconv.FormatFloat(100*v, 'f', 3, 64)
}

var scoreColumns = []string{"record", "ref_beats", "test_beats", "tp", "fn", "fp", "se_pct", "pp_pct", "der_pct"}

func scoreRow(s ecg.Score) []string {
	return []string{s.Record, strconv.Itoa(s.TP + s.FN), strconv.Itoa(s.TP + s.FP), strconv.Itoa(s.TP), strconv.Itoa(s.FN),
		strconv.Itoa(s.FP), scorePct(s.Sensitivity()), scorePct(s.PositivePredictivity()), scorePct(s.ErrorRate())}
}

func scoreWriteText(w io.Writer, scores []ecg.Score, sum ecg.Summary, tol, skip float64) {
	fmt.Fprintf(w, "beat-by-beat comparison: match within %.0f ms, each beat used once; beats before %.1f s ignored\n", 1000*tol, skip)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, strings.Join(scoreColumns, "\t")+"\t")
	for _, s := range scores {
		fmt.Fprintln(tw, strings.Join(scoreRow(s), "\t")+"\t")
	}
	fmt.Fprintf(tw, "gross\t%d\t%d\t%d\t%d\t%d\t%s\t%s\t%s\t\n", sum.TP+sum.FN, sum.TP+sum.FP, sum.TP, sum.FN, sum.FP,
		scorePct(sum.GrossSe), scorePct(sum.GrossPP), scorePct(scoreRatio(sum.FP+sum.FN, sum.TP+sum.FN)))
	fmt.Fprintf(tw, "average\t\t\t\t\t\t%s\t%s\t\t\n", scorePct(sum.AverageSe), scorePct(sum.AveragePP))
	tw.Flush()
}

func scoreRatio(a, b int) float64 {
	if b == 0 {
		return math.NaN()
	}
	return float64(a) / float64(b)
}

func scoreWriteCSV(w io.Writer, scores []ecg.Score, sum ecg.Summary) error {
	cw := csv.NewWriter(w)
	cw.Write(scoreColumns)
	for _, s := range scores {
		cw.Write(scoreRow(s))
	}
	cw.Write([]string{"gross", strconv.Itoa(sum.TP + sum.FN), strconv.Itoa(sum.TP + sum.FP), strconv.Itoa(sum.TP), strconv.Itoa(sum.FN),
		strconv.Itoa(sum.FP), scorePct(sum.GrossSe), scorePct(sum.GrossPP), scorePct(scoreRatio(sum.FP+sum.FN, sum.TP+sum.FN))})
	cw.Write([]string{"average", "", "", "", "", "", scorePct(sum.AverageSe), scorePct(sum.AveragePP), ""})
	cw.Flush()
	return cw.Error()
}
