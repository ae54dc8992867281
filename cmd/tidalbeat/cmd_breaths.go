package main

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/resp"
)

func init() {
	register(subcommand{name: "breaths", summary: "detect breaths in the respiratory bands; one CSV row per breath", run: runBreaths})
}

// breathColumns is the per-breath CSV header: times in seconds from the
// record start, durations in seconds, volumes in the arbitrary units of the
// (QDC-weighted) band sum: the bands alone give no litres.
var breathColumns = []string{
	"onset_s", "end_insp_s", "end_exp_s", "pause_s",
	"ti_s", "te_s", "ttot_s", "ti_ttot_ratio", "rate_per_min",
	"vt_au", "insp_flow_au_s", "rib_exc_au", "abd_exc_au",
	"phase_xcorr_deg", "phase_lissajous_deg", "paradox", "sigh", "quality",
}

func runBreaths(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("breaths", stderr)
	ribName := fs.String("rib", "", "rib-cage band channel name (default: the channel whose name says rib cage / chest / thorax)")
	abdName := fs.String("abdomen", "", "abdominal band channel name (default: the channel whose name says abdomen)")
	spo2Name := fs.String("spo2", "", "SpO2 channel name for the desaturation criterion of events (default: a channel named SpO2, if any)")
	out := fs.String("o", "", "output CSV file (default: standard output)")
	evOut := fs.String("events", "", "also write candidate apnea/hypopnea events to this WFDB annotation file (e.g. REC.resp)")
	qdcS := fs.Float64("qdc", 0, "weight the bands by QDC from the first `SECONDS` of the record (relative calibration; 0: equal weights)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: tidalbeat breaths RECORD [-rib NAME -abdomen NAME] [-o FILE] [-events FILE] [-qdc SECONDS]")
		fmt.Fprintln(stderr, "Writes one CSV row per breath; times in seconds from the record start. Volumes are in")
		fmt.Fprintln(stderr, "arbitrary units (_au): without reference volumes the bands give no litres.")
		fmt.Fprintln(stderr, "Events are candidates (AASM amplitude and duration criteria on the band sum), not scored events.")
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		fs.Usage()
		return fmt.Errorf("%w: want exactly one RECORD, got %d", errUsage, len(pos))
	}
	if *qdcS < 0 || math.IsNaN(*qdcS) || math.IsInf(*qdcS, 0) {
		return fmt.Errorf("%w: -qdc %v: must be a non-negative number of seconds", errUsage, *qdcS)
	}
	rec, err := recording.Open(pos[0])
	if err != nil {
		return err
	}
	rc, err := pickChannel(rec, *ribName, recording.RoleRibCage, "-rib")
	if err != nil {
		return err
	}
	ab, err := pickChannel(rec, *abdName, recording.RoleAbdomen, "-abdomen")
	if err != nil {
		return err
	}
	if rc == ab {
		return fmt.Errorf("%w: rib-cage and abdominal band are the same channel %q", errUsage, rc.Name)
	}
	if rc.RateHz != ab.RateHz {
		return fmt.Errorf("record %s: rib-cage band %q at %v Hz and abdominal band %q at %v Hz: the bands must share a sampling rate", rec.Name, rc.Name, rc.RateHz, ab.Name, ab.RateHz)
	}
	n := min(len(rc.Samples), len(ab.Samples))
	if len(rc.Samples) != len(ab.Samples) {
		fmt.Fprintf(stderr, "tidalbeat breaths: bands differ in length (%d and %d samples): using the first %d\n", len(rc.Samples), len(ab.Samples), n)
	}
	opt := resp.Options{RateHz: rc.RateHz}
	if *qdcS > 0 {
		m := min(n, int(*qdcS*rc.RateHz))
		q, err := resp.QDC(rc.Samples[:m], ab.Samples[:m], opt, resp.QDCOptions{})
		if err != nil {
			return fmt.Errorf("record %s: QDC over the first %v s: %w", rec.Name, *qdcS, err)
		}
		opt.Calibration = q.Calibration()
		fmt.Fprintf(stderr, "tidalbeat breaths: QDC rib-cage weight K = %.4g from %d of %d breaths (caveat: %s)\n", q.K, q.Used, q.Total, q.Caveat)
	}
	r, err := resp.Detect(rc.Samples[:n], ab.Samples[:n], opt)
	if err != nil {
		return fmt.Errorf("record %s: %w", rec.Name, err)
	}
	if err := writeBreathCSV(*out, stdout, r.Breaths); err != nil {
		return err
	}
	fmt.Fprintf(stderr, "tidalbeat breaths: %s: %d breaths (%d candidates discarded), %d gaps, volumes in arbitrary units (%s)\n",
		rec.Name, len(r.Breaths), r.Discarded, len(r.Gaps), r.Calibration.Method)
	if *evOut != "" {
		eo := resp.EventOptions{}
		if sp, ok := spo2Channel(rec, *spo2Name); ok {
			eo.SpO2, eo.SpO2RateHz = sp.Samples, sp.RateHz
		} else if *spo2Name != "" {
			return fmt.Errorf("%w: -spo2 %q: no such channel", errUsage, *spo2Name)
		}
		ev, err := resp.DetectEvents(r, eo)
		if err != nil {
			return fmt.Errorf("record %s: events: %w", rec.Name, err)
		}
		if err := writeEventAnnotations(*evOut, ev, rc.RateHz); err != nil {
			return err
		}
		fmt.Fprintf(stderr, "tidalbeat breaths: %d candidate events written to %s\n", len(ev), *evOut)
	}
	return nil
}

func pickChannel(rec *recording.Recording, name string, role recording.Role, flagName string) (*recording.Channel, error) {
	if name != "" {
		c, ok := rec.ChannelByName(name)
		if !ok {
			return nil, fmt.Errorf("%w: %s %q: record %s has no such channel", errUsage, flagName, name, rec.Name)
		}
		return c, nil
	}
	c, ok := rec.Channel(role)
	if !ok {
		return nil, fmt.Errorf("%w: record %s: no %s channel recognised by name; name it with %s", errUsage, rec.Name, role, flagName)
	}
	return c, nil
}

func spo2Channel(rec *recording.Recording, name string) (*recording.Channel, bool) {
	if name != "" {
		return rec.ChannelByName(name)
	}
	return rec.Channel(recording.RoleSpO2)
}

func writeBreathCSV(path string, stdout io.Writer, breaths []resp.Breath) (err error) {
	w := stdout
	if path != "" {
		f, err := os.Create(path)
		if err != nil {
			return err
		}
		defer func() {
			if cerr := f.Close(); err == nil {
				err = cerr
			}
		}()
		w = f
	}
	bw := bufio.NewWriter(w)
	cw := csv.NewWriter(bw)
	if err := cw.Write(breathColumns); err != nil {
		return err
	}
	// Values to 6 significant digits (far below the method's accuracy);
	// NaN (undefined, e.g. a phase of a flat band) as an empty cell.
	num := func(v float64) string {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return ""
		}
		return strconv.FormatFloat(v, 'g', 6, 64)
	}
	t := func(v float64) string { return strconv.FormatFloat(math.Round(v*1e4)/1e4, 'f', -1, 64) }
	b01 := func(v bool) string {
		if v {
			return "1"
		}
		return "0"
	}
	for _, b := range breaths {
		row := []string{
			t(b.Onset), t(b.EndInsp), t(b.EndExp), t(b.PauseS),
			t(b.TiS), t(b.TeS), t(b.TtotS), num(b.TiTtot), num(b.RatePerMin),
			num(b.VtAU), num(b.FlowAUs), num(b.RibExcAU), num(b.AbdExcAU),
			num(b.PhaseXcorrDeg), num(b.PhaseLissajousDeg), b01(b.Paradox), b01(b.Sigh), b.Quality.String(),
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return err
	}
	return bw.Flush()
}

// eventLabel is the AUX text of an event annotation: kind and class, for
// example "apnea obstructive" or "hypopnea central".
func eventLabel(e resp.Event) string { return e.Kind.String() + " " + e.Class.String() }

// writeEventAnnotations writes each candidate event as a pair of WFDB
// waveform onset "(" and offset ")" annotations whose AUX text names the
// event, at the band sampling rate.
func writeEventAnnotations(path string, ev []resp.Event, rateHz float64) (err error) {
	anns := make([]recording.Annotation, 0, 2*len(ev))
	for _, e := range ev {
		s0 := int64(math.Max(0, math.Round(e.Start*rateHz)))
		s1 := max(s0, int64(math.Round(e.End*rateHz)))
		anns = append(anns,
			recording.Annotation{Time: float64(s0) / rateHz, Sample: s0, Code: "(", Text: eventLabel(e)},
			recording.Annotation{Time: float64(s1) / rateHz, Sample: s1, Code: ")", Text: eventLabel(e)})
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	if err := recording.WriteWFDBAnnotations(f, anns, rateHz); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}
