package resp_test

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/features/recording"
	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/resp"
)

// eventText recognises respiratory-event annotations by their AUX text or
// code: apnea/hypopnea words and the common short labels (OA, CA, MA, OH, CH,
// H, HYP), as used by scored sleep recordings (from memory; annotation
// conventions vary between databases).
var eventText = regexp.MustCompile(`(?i)(apn|hypop|^\(?(oa|ca|ma|oh|ch|h|hyp|ob|ce|mix)\b)`)

// annotated is what one record's annotations give: breath marks (point
// annotations, one per breath) and event spans.
type annotated struct {
	breaths []float64
	events  [][2]float64
}

func readAnnotations(t *testing.T, hea string, rate float64) annotated {
	base := strings.TrimSuffix(hea, ".hea")
	files, _ := filepath.Glob(base + ".*")
	var out annotated
	for _, f := range files {
		ext := filepath.Ext(f)
		switch ext {
		case ".hea", ".dat", ".edf", ".csv", ".xws", ".mat":
			continue
		}
		anns, err := recording.ReadWFDBAnnotations(f, rate)
		if err != nil || len(anns) == 0 {
			continue
		}
		var pts []float64
		var open map[string]float64 = map[string]float64{}
		for _, a := range anns {
			txt := strings.TrimSpace(a.Text)
			switch {
			case ext == ".apn" && a.Code == "A":
				out.events = append(out.events, [2]float64{a.Time, a.Time + 60}) // apnea minute
			case a.Code == "(" && eventText.MatchString(txt):
				open[strings.TrimPrefix(txt, "(")] = a.Time
			case a.Code == ")":
				for k, s := range open {
					out.events = append(out.events, [2]float64{s, a.Time})
					delete(open, k)
					break
				}
			case eventText.MatchString(txt) || eventText.MatchString(a.Code):
				d := a.Duration
				if d <= 0 {
					d = 10
				}
				out.events = append(out.events, [2]float64{a.Time, a.Time + d})
			default:
				pts = append(pts, a.Time)
			}
		}
		// Point annotations spaced like breaths (median 1.5-12 s) are
		// breath marks.
		if len(pts) > 50 {
			iv := make([]float64, len(pts)-1)
			for i := range iv {
				iv[i] = pts[i+1] - pts[i]
			}
			sort.Float64s(iv)
			if m := iv[len(iv)/2]; m >= 1.5 && m <= 12 && len(out.breaths) == 0 {
				out.breaths = pts
			}
		}
	}
	sort.Slice(out.events, func(i, j int) bool { return out.events[i][0] < out.events[j][0] })
	return out
}

// breathF1 matches reference marks to detected times within tol seconds,
// one to one in time order.
func breathF1(ref, det []float64, tol float64) float64 {
	tp, j := 0, 0
	for _, r := range ref {
		for j < len(det) && det[j] < r-tol {
			j++
		}
		if j < len(det) && math.Abs(det[j]-r) <= tol {
			tp++
			j++
		}
	}
	return 2 * float64(tp) / float64(len(ref)+len(det))
}

// TestRIPDatabase scores breath detection and candidate events on real
// annotated RIP recordings (WFDB records with rib-cage and abdominal bands,
// breath marks and/or scored respiratory events) in the directory named by
// TIDALBEAT_RIPDB, read through features/recording. Reference annotations
// mark either inspiration onsets or ends, so breath F1 is taken for the
// better of the two (tolerance 1 s). Floors: breath F1 0.8; event
// sensitivity 0.5 (the bands are uncalibrated here and databases score
// events with their own rules, so this is a coarse check).
func TestRIPDatabase(t *testing.T) {
	dir := refdata.EnvDir(t, refdata.RIPDBEnv, "WFDB records with rib-cage and abdominal bands and breath or event annotations")
	heads, _ := filepath.Glob(filepath.Join(dir, "*.hea"))
	scored := 0
	for _, hea := range heads {
		rec, err := recording.Open(hea)
		if err != nil {
			t.Logf("%s: %v (skipped)", filepath.Base(hea), err)
			continue
		}
		rc, ok1 := rec.Channel(recording.RoleRibCage)
		ab, ok2 := rec.Channel(recording.RoleAbdomen)
		if !ok1 || !ok2 || rc.RateHz != ab.RateHz {
			t.Logf("%s: no rib-cage and abdominal band pair at one rate (skipped)", rec.Name)
			continue
		}
		ann := readAnnotations(t, hea, rc.RateHz)
		if len(ann.breaths) == 0 && len(ann.events) == 0 {
			t.Logf("%s: no breath or event annotations (skipped)", rec.Name)
			continue
		}
		n := min(len(rc.Samples), len(ab.Samples))
		opt := resp.Options{RateHz: rc.RateHz}
		if q, err := resp.QDC(rc.Samples[:min(n, int(300*rc.RateHz))], ab.Samples[:min(n, int(300*rc.RateHz))], opt, resp.QDCOptions{}); err == nil {
			opt.Calibration = q.Calibration()
		}
		r, err := resp.Detect(rc.Samples[:n], ab.Samples[:n], opt)
		if err != nil {
			t.Errorf("%s: %v", rec.Name, err)
			continue
		}
		scored++
		if len(ann.breaths) > 0 {
			var on, pk []float64
			for _, b := range r.Breaths {
				on = append(on, b.Onset)
				pk = append(pk, b.EndInsp)
			}
			f := math.Max(breathF1(ann.breaths, on, 1), breathF1(ann.breaths, pk, 1))
			t.Logf("%s: %d reference breaths, %d detected, F1 %.3f", rec.Name, len(ann.breaths), len(r.Breaths), f)
			if f < 0.8 {
				t.Errorf("%s: breath F1 %.3f below 0.8", rec.Name, f)
			}
		}
		if len(ann.events) > 0 {
			eo := resp.EventOptions{}
			if sp, ok := rec.Channel(recording.RoleSpO2); ok {
				eo.SpO2, eo.SpO2RateHz = sp.Samples, sp.RateHz
			}
			ev, err := resp.DetectEvents(r, eo)
			if err != nil {
				t.Fatal(err)
			}
			hit := 0
			for _, e := range ann.events {
				for _, d := range ev {
					if d.Start < e[1] && d.End > e[0] {
						hit++
						break
					}
				}
			}
			sens := float64(hit) / float64(len(ann.events))
			t.Logf("%s: %d reference events, %d candidates, sensitivity %.2f", rec.Name, len(ann.events), len(ev), sens)
			if sens < 0.5 {
				t.Errorf("%s: event sensitivity %.2f below 0.5", rec.Name, sens)
			}
		}
	}
	if scored == 0 {
		t.Skipf("%s=%s holds no record with both bands and annotations", refdata.RIPDBEnv, os.Getenv(refdata.RIPDBEnv))
	}
}
