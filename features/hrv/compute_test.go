package hrv

import (
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"
)

// The column scheme: unique, lower case, unit last; Values and ReasonList
// line up with Columns.
func TestColumns(t *testing.T) {
	cols := Columns()
	info := ColumnInfo()
	if len(info) != len(cols) {
		t.Fatalf("%d infos for %d columns", len(info), len(cols))
	}
	re := regexp.MustCompile(`^[a-z][a-z0-9_]*$`)
	units := map[string]string{"ms": "_ms", "ms2": "_ms2", "bpm": "_bpm", "pct": "_pct", "Hz": "_hz", "nu": "_nu", "frac": "_frac"}
	seen := map[string]bool{}
	for i, c := range cols {
		if seen[c] {
			t.Errorf("duplicate column %s", c)
		}
		seen[c] = true
		if !re.MatchString(c) || info[i].Name != c || info[i].Doc == "" {
			t.Errorf("column %q: bad name or doc (%+v)", c, info[i])
		}
		if suf, ok := units[info[i].Unit]; ok && !strings.HasSuffix(c, suf) && !strings.Contains(c, suf+"_") {
			t.Errorf("column %q has unit %s but not the %s suffix", c, info[i].Unit, suf)
		}
		if info[i].Unit == "count" && !strings.HasPrefix(c, "n_") && !strings.Contains(c, "_n_") {
			t.Errorf("count column %q does not start with n_", c)
		}
	}
	for _, want := range []string{"rmssd_ms", "sdnn_ms", "pnn50_pct", "lf_ms2", "hf_ms2", "lf_hf_ratio", "lf_nu", "sd1_ms", "sampen", "dfa_alpha1"} {
		if !seen[want] {
			t.Errorf("column %s missing", want)
		}
	}
	nn, end := restingNN(1, 400)
	m := Compute(nn, end, Options{WindowS: 330})
	if len(m.Values()) != len(cols) || len(m.ReasonList()) != len(cols) {
		t.Fatalf("%d values, %d reasons for %d columns", len(m.Values()), len(m.ReasonList()), len(cols))
	}
}

// Compute agrees with the plain functions on a contiguous series.
func TestComputeMatchesFunctions(t *testing.T) {
	nn, end := restingNN(2, 400)
	m := Compute(nn, end, Options{})
	sdnn, _ := SDNN(nn, Sample)
	rmssd, _ := RMSSD(nn)
	sdsd, _ := SDSD(nn, Sample)
	p50, c50, _ := PNN(nn, 50, PNNOptions{})
	sd1, sd2, _ := Poincare(nn, Sample)
	se, _ := SampleEntropy(nn, 2, 0.2*sdnn)
	ae, _ := ApproximateEntropy(nn, 2, 0.2*sdnn)
	a1, _ := DFA(nn, 4, 16)
	ti, _ := TriangularIndex(nn, 0)
	tinn, _ := TINN(nn, 0)
	psd, _ := Spectrum(nn, end, SpectrumOptions{})
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"sdnn", m.SDNNms, sdnn}, {"rmssd", m.RMSSDms, rmssd}, {"sdsd", m.SDSDms, sdsd},
		{"pnn50", m.PNN50pct, p50}, {"nn50", m.NN50, float64(c50)}, {"sd1", m.SD1ms, sd1}, {"sd2", m.SD2ms, sd2},
		{"sampen", m.SampEn, se}, {"apen", m.ApEn, ae}, {"alpha1", m.DFAAlpha1, a1},
		{"tri", m.TriIndex, ti}, {"tinn", m.TINNms, tinn}, {"lf", m.LFms2, psd.BandPower(TaskForceBands.LF)},
		{"area", m.EllipseAreams2, math.Pi * sd1 * sd2},
	} {
		if !near(c.got, c.want, 1e-9*math.Max(1, math.Abs(c.want))) {
			t.Errorf("%s: Compute %v, function %v", c.name, c.got, c.want)
		}
	}
	if m.N != 400 || m.CorrectedFrac != 0 || !math.IsNaN(m.NNCoverage) || m.Reasons["hrv_nn_coverage_frac"] == "" {
		t.Errorf("inputs: N %d corrected %v coverage %v (%q)", m.N, m.CorrectedFrac, m.NNCoverage, m.Reasons["hrv_nn_coverage_frac"])
	}
	// Task Force n.u. denominator total - VLF versus LF + HF.
	if !near(m.LFnu, 100*m.LFms2/(m.TotalPowerms2-m.VLFms2), 1e-9) || !near(m.LFnuSum, 100*m.LFms2/(m.LFms2+m.HFms2), 1e-9) {
		t.Errorf("n.u.: %v %v", m.LFnu, m.LFnuSum)
	}
}

// Every NaN carries a reason; nothing undefined is reported as 0.
func checkReasons(t *testing.T, name string, m Metrics) {
	t.Helper()
	for i, v := range m.Values() {
		col := Columns()[i]
		if math.IsNaN(v) && m.Reasons[col] == "" {
			t.Errorf("%s: %s is NaN without a reason", name, col)
		}
		if !math.IsNaN(v) && m.Reasons[col] != "" {
			t.Errorf("%s: %s = %v but has reason %q", name, col, v, m.Reasons[col])
		}
	}
}

func TestComputeMinimumData(t *testing.T) {
	nn, end := restingNN(3, 60) // ~48 s
	m := Compute(nn, end, Options{})
	checkReasons(t, "short", m)
	if math.IsNaN(m.RMSSDms) || math.IsNaN(m.SDNNms) {
		t.Errorf("short: RMSSD %v SDNN %v should be defined", m.RMSSDms, m.SDNNms)
	}
	for _, col := range []string{"lf_ms2", "hf_ms2", "sampen", "dfa_alpha1", "hrv_tri_index", "sdann_ms"} {
		if m.Reasons[col] == "" {
			t.Errorf("short: %s has no reason (value %v)", col, m.Values()[indexOf(col)])
		}
	}
	// 150 s: HF and LF defined, VLF not (240 s rule), so the Task Force n.u.
	// is undefined while the LF+HF one is defined.
	nn, end = restingNN(3, 190)
	m = Compute(nn, end, Options{})
	checkReasons(t, "150 s", m)
	if math.IsNaN(m.LFms2) || math.IsNaN(m.HFms2) || !math.IsNaN(m.VLFms2) || !math.IsNaN(m.LFnu) || math.IsNaN(m.LFnuSum) {
		t.Errorf("150 s: LF %v HF %v VLF %v LFnu %v LFnuSum %v", m.LFms2, m.HFms2, m.VLFms2, m.LFnu, m.LFnuSum)
	}
	// A full 5-min window.
	nn, end = restingNN(3, 380)
	m = Compute(nn, end, Options{WindowS: 305})
	checkReasons(t, "5 min", m)
	for _, col := range []string{"vlf_ms2", "lf_nu", "sampen", "apen", "dfa_alpha1", "hrv_tri_index", "tinn_ms"} {
		if math.IsNaN(m.Values()[indexOf(col)]) {
			t.Errorf("5 min: %s undefined: %s", col, m.Reasons[col])
		}
	}
	if !math.IsNaN(m.DFAAlpha2) || !math.IsNaN(m.SDANNms) || !math.IsNaN(m.ULFms2) {
		t.Errorf("5 min: alpha2 %v SDANN %v ULF %v should be NaN", m.DFAAlpha2, m.SDANNms, m.ULFms2)
	}
}

func indexOf(col string) int {
	for i, c := range Columns() {
		if c == col {
			return i
		}
	}
	return -1
}

func TestComputeQualityGates(t *testing.T) {
	nn, end := restingNN(4, 380)
	corr := make([]bool, len(nn))
	for i := 0; i < 50; i++ {
		corr[i*7] = true
	}
	m := Compute(nn, end, Options{Corrected: corr})
	checkReasons(t, "corrected", m)
	if !near(m.CorrectedFrac, 50.0/380, 1e-12) || !math.IsNaN(m.RMSSDms) || !strings.Contains(m.Reasons["rmssd_ms"], "corrected") {
		t.Errorf("corrected: frac %v RMSSD %v (%q)", m.CorrectedFrac, m.RMSSDms, m.Reasons["rmssd_ms"])
	}
	m = Compute(nn, end, Options{CorrectedCount: 10})
	if !near(m.CorrectedFrac, 10.0/380, 1e-12) || math.IsNaN(m.RMSSDms) {
		t.Errorf("count: frac %v RMSSD %v", m.CorrectedFrac, m.RMSSDms)
	}
	m = Compute(nn, end, Options{WindowS: 600})
	checkReasons(t, "coverage", m)
	if !(m.NNCoverage < 0.8) || !math.IsNaN(m.SDNNms) || !strings.Contains(m.Reasons["sdnn_ms"], "coverage") {
		t.Errorf("coverage: %v SDNN %v (%q)", m.NNCoverage, m.SDNNms, m.Reasons["sdnn_ms"])
	}
	m = Compute(nn, end, Options{WindowS: 600, Min: MinData{NNCoverage: -1}})
	if math.IsNaN(m.SDNNms) {
		t.Errorf("coverage rule disabled: SDNN %v (%s)", m.SDNNms, m.Reasons["sdnn_ms"])
	}
}

func TestComputeBadInput(t *testing.T) {
	for name, c := range map[string]struct {
		nn, end []float64
		opt     Options
	}{
		"NaN":         {[]float64{800, math.NaN(), 800}, nil, Options{}},
		"Inf":         {[]float64{800, math.Inf(1), 800}, nil, Options{}},
		"negative":    {[]float64{800, -800, 800}, nil, Options{}},
		"times order": {[]float64{800, 800, 800}, []float64{1, 3, 2}, Options{}},
		"times len":   {[]float64{800, 800, 800}, []float64{1, 2}, Options{}},
		"flags len":   {[]float64{800, 800, 800}, nil, Options{Corrected: []bool{true}}},
		"count":       {[]float64{800, 800, 800}, nil, Options{CorrectedCount: 9}},
		"window":      {[]float64{800, 800, 800}, nil, Options{WindowS: math.NaN()}},
		"bands":       {[]float64{800, 800, 800}, nil, Options{Bands: Bands{LF: Band{0.2, 0.1}}}},
	} {
		m := Compute(c.nn, c.end, c.opt)
		if !errors.Is(m.Err, ErrInput) {
			t.Errorf("%s: Err %v, want ErrInput", name, m.Err)
		}
		checkReasons(t, name, m)
		for i, v := range m.Values()[1:] {
			if !math.IsNaN(v) {
				t.Errorf("%s: %s = %v, want NaN", name, Columns()[i+1], v)
			}
		}
	}
	m := Compute(nil, nil, Options{})
	if m.Err != nil || m.N != 0 || !math.IsNaN(m.MeanNNms) {
		t.Errorf("empty: %+v", m)
	}
	checkReasons(t, "empty", m)
}

// Successive differences use only contiguous pairs: a removed beat does not
// create a false difference (ContiguousTolS).
func TestComputeNonContiguous(t *testing.T) {
	nn := []float64{800, 900, 700, 760}
	end := []float64{0.8, 1.7, 3.2, 3.96} // hole between 1.7 and 2.5
	m := Compute(nn, end, Options{})
	want := math.Sqrt((100*100 + 60*60) / 2.0)
	if !near(m.RMSSDms, want, 1e-9) || m.NN50 != 2 {
		t.Errorf("RMSSD %v NN50 %v, want %v and 2 (pairs (800,900), (700,760) only)", m.RMSSDms, m.NN50, want)
	}
}
