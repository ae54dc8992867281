package motion_test

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"github.com/tidalbeat/tidalbeat/internal/refdata"
	"github.com/tidalbeat/tidalbeat/motion"
)

// walk is one file of the step-counter validation set (CC BY 4.0): phone
// accelerometer at about 100 Hz with cumulative step counts.
type walk struct {
	name, position string
	t              []float64 // s from the first sample
	x, y, z        []float64 // m/s^2
	truth, algo    int       // final ground-truth and dataset-algorithm counts
}

func readWalk(path string) (walk, error) {
	f, err := os.Open(path)
	if err != nil {
		return walk{}, err
	}
	defer f.Close()
	base := filepath.Base(path)
	parts := strings.Split(base, "_")
	w := walk{name: strings.TrimSuffix(base, ".csv")}
	if len(parts) >= 2 {
		w.position = parts[1]
	}
	sc := bufio.NewScanner(f)
	var t0 int64 = -1
	for line := 1; sc.Scan(); line++ {
		fs := strings.Split(strings.TrimSpace(sc.Text()), ",")
		if len(fs) != 7 {
			return walk{}, fmt.Errorf("%s:%d: %d fields", base, line, len(fs))
		}
		ns, err := strconv.ParseInt(fs[0], 10, 64)
		if err != nil {
			return walk{}, fmt.Errorf("%s:%d: %v", base, line, err)
		}
		var v [6]float64
		for k := 0; k < 6; k++ {
			if v[k], err = strconv.ParseFloat(fs[k+1], 64); err != nil {
				return walk{}, fmt.Errorf("%s:%d: %v", base, line, err)
			}
		}
		if t0 < 0 {
			t0 = ns
		}
		w.t = append(w.t, float64(ns-t0)/1e9)
		w.x, w.y, w.z = append(w.x, v[0]), append(w.y, v[1]), append(w.z, v[2])
		w.algo, w.truth = int(v[3]), int(v[4])
	}
	return w, sc.Err()
}

// resample interpolates irregular samples (time stamps t, strictly
// increasing after duplicates are dropped) linearly onto a uniform grid at
// rate Hz. Phones deliver accelerometer samples with jittered time stamps;
// the motion package wants a uniform rate.
func resample(t []float64, rate float64, axes ...[]float64) [][]float64 {
	n := int(t[len(t)-1]*rate) + 1
	out := make([][]float64, len(axes))
	for k := range out {
		out[k] = make([]float64, n)
	}
	j := 0
	for i := 0; i < n; i++ {
		ti := float64(i) / rate
		for j+1 < len(t)-1 && t[j+1] <= ti {
			j++
		}
		dt := t[j+1] - t[j]
		a := 0.0
		if dt > 0 {
			a = (ti - t[j]) / dt
		}
		a = math.Max(0, math.Min(1, a))
		for k, ax := range axes {
			out[k][i] = ax[j] + a*(ax[j+1]-ax[j])
		}
	}
	return out
}

func pctErr(got, want int) float64 { return 100 * math.Abs(float64(got-want)) / float64(want) }

// TestStepCounterValidation scores the step detector on the 12 validation
// walks of the step-counter dataset (CC BY 4.0; phone accelerometer in six
// carrying positions, ground truth from a separate device), with the one
// default parameter set for every walk (the package defaults, not tuned per
// file or position). The jittered phone samples are interpolated linearly
// onto a uniform grid first. Targets from the issue: median
// absolute error <= 2 %, every walk within 5 %, and a lower mean absolute
// error than the dataset's own algorithm column on every position.
func TestStepCounterValidation(t *testing.T) {
	dir := refdata.Shared(t, "open-data/step-counter/validation")
	files, _ := filepath.Glob(filepath.Join(dir, "*.csv"))
	if len(files) != 12 {
		t.Fatalf("found %d walks in %s, want 12", len(files), dir)
	}
	// The native rate (about 100 Hz) and two lower rates the library is
	// used at (the demo runs at 50 Hz), all with the same default options.
	var walks []walk
	for _, f := range files {
		w, err := readWalk(f)
		if err != nil {
			t.Fatal(err)
		}
		walks = append(walks, w)
	}
	for _, rate := range []float64{100, 50, 25} {
		t.Run(fmt.Sprintf("%gHz", rate), func(t *testing.T) { scoreWalks(t, walks, rate) })
	}
}

func scoreWalks(t *testing.T, walks []walk, rate float64) {
	opts := motion.Options{Unit: motion.UnitMS2}
	var errs []float64
	ours, theirs := map[string][]float64{}, map[string][]float64{}
	for _, w := range walks {
		r := resample(w.t, rate, w.x, w.y, w.z)
		tr, err := motion.Derive(r[0], r[1], r[2], rate, opts)
		if err != nil {
			t.Fatal(err)
		}
		got := len(tr.StepTimes)
		e, ea := pctErr(got, w.truth), pctErr(w.algo, w.truth)
		errs = append(errs, e)
		ours[w.position] = append(ours[w.position], e)
		theirs[w.position] = append(theirs[w.position], ea)
		t.Logf("%-36s truth %3d  ours %3d (%5.2f %%)  dataset algorithm %3d (%5.2f %%)", w.name, w.truth, got, e, w.algo, ea)
		if e > 5 { // issue 7: every walk within 5 %
			t.Errorf("%s: step error %.2f %% > 5 %%", w.name, e)
		}
	}
	sort.Float64s(errs)
	med := (errs[5] + errs[6]) / 2
	t.Logf("median absolute error %.2f %%, worst %.2f %%", med, errs[11])
	if med > 2 { // issue 7: median <= 2 %
		t.Errorf("median step error %.2f %% > 2 %%", med)
	}
	for pos, e := range ours {
		mo, mt := mean(e), mean(theirs[pos])
		t.Logf("%-11s mean error ours %.2f %%, dataset algorithm %.2f %%", pos, mo, mt)
		if mo >= mt { // beat the dataset's own algorithm (same files) on every position
			t.Errorf("%s: our mean error %.2f %% not below the dataset algorithm's %.2f %%", pos, mo, mt)
		}
	}
}

func mean(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}
