package hrv

import (
	"fmt"
	"math"
)

// MinData holds the minimum-data rules Compute applies before reporting a
// value. Zero values mean the documented defaults; a negative value disables
// a rule.
type MinData struct {
	// NNCoverage is the least fraction of the window length covered by the
	// accepted NN intervals (sum of NN / window length); 0.8 when zero
	// (methods.md section 7: 80-90 %, common practice). Applied only when
	// Options.WindowS is set. Below it every metric is NaN.
	NNCoverage float64
	// CorrectedFrac is the largest fraction of intervals corrected upstream;
	// 0.1 when zero (methods.md section 7: <= 5 %, at most 10 %, common
	// practice). Above it every metric is NaN.
	CorrectedFrac float64
	// HFSpanS, LFSpanS, VLFSpanS and ULFSpanS are the shortest NN series
	// spans (s) for which each band power is reported: 60, 120, 240 and
	// 72000 when zero. HF ~1 min and LF ~2 min follow the Task Force's
	// "about ten periods of the lowest frequency" advice (methods.md 2.4,
	// from memory, unverified); 240 s lets 5-min windows report VLF (and so
	// the Task Force n.u.), although the Task Force advises against
	// interpreting VLF from short recordings; ULF is a 24-h measure (Task
	// Force), 20 h allows for data loss (common practice).
	HFSpanS, LFSpanS, VLFSpanS, ULFSpanS float64
	// EntropyN is the fewest intervals for SampEn and ApEn; 200 when zero
	// (methods.md section 7, common practice for m = 2).
	EntropyN int
	// Alpha1N and Alpha2N are the fewest intervals for DFA alpha1 and
	// alpha2; 300 and 1000 when zero (methods.md section 7, common practice).
	Alpha1N, Alpha2N int
	// GeometricN is the fewest intervals for the triangular index and TINN;
	// 100 when zero (common practice; the Task Force recommends at least
	// 20 min, preferably 24 h, for geometric measures, from memory).
	GeometricN int
}

func (d MinData) withDefaults() MinData {
	fl := func(v *float64, def float64) {
		if *v == 0 {
			*v = def
		}
	}
	in := func(v *int, def int) {
		if *v == 0 {
			*v = def
		}
	}
	fl(&d.NNCoverage, 0.8)
	fl(&d.CorrectedFrac, 0.1)
	fl(&d.HFSpanS, 60)
	fl(&d.LFSpanS, 120)
	fl(&d.VLFSpanS, 240)
	fl(&d.ULFSpanS, 72000)
	in(&d.EntropyN, 200)
	in(&d.Alpha1N, 300)
	in(&d.Alpha2N, 1000)
	in(&d.GeometricN, 100)
	return d
}

// Options configures Compute. Zero values mean the documented defaults
// (Task Force 1996 where it fixes a choice).
type Options struct {
	Norm        Norm       // standard deviations: Sample (N-1) when zero
	PNN         PNNOptions // NN50/NN20 variant: Task Force wording when zero
	HistBinMs   float64    // geometric measures: HistBinMs (1/128 s) when zero
	SegmentS    float64    // SDANN / SDNN index segments: 300 s when zero (Task Force)
	Spectrum    SpectrumOptions
	Bands       Bands   // TaskForceBands when zero
	EntropyM    int     // SampEn/ApEn template length: 2 when zero (common practice)
	EntropyR    float64 // SampEn/ApEn tolerance as a fraction of SD(NN): 0.2 when zero (common practice)
	Alpha1Boxes [2]int  // DFA alpha1 box range: 4..16 beats when zero
	Alpha2Boxes [2]int  // DFA alpha2 box range: 16..64 beats when zero
	// DFA selects the DFA variant for both exponents (its MinBox and
	// MaxBox are ignored; the ranges above apply): every integer box
	// size, boxes from the start only, when zero.
	DFA DFAOptions
	Min MinData // minimum-data rules

	// WindowS is the length of the window the intervals come from (s); it
	// gives the NN coverage. Zero: unknown (coverage NaN, rule not applied).
	WindowS float64
	// Corrected flags the intervals that were corrected or interpolated
	// upstream (package ecg), one per interval. When nil, CorrectedCount
	// is used; when both are zero no interval is counted as corrected (the
	// right value for reference annotations).
	Corrected      []bool
	CorrectedCount int
}

// ContiguousTolS is how far (s) the start of an interval may be from the end
// of the previous one for the two to count as successive: successive
// differences, NN50 and Poincare pairs use only such pairs, so a removed
// ectopic beat does not create a false difference. 50 ms is shorter than any
// physiological interval (common practice).
const ContiguousTolS = 0.05

// Metrics is the full HRV set for one window. Undefined values are NaN with
// a reason in Reasons under the column name.
type Metrics struct {
	// Inputs: intervals used, their coverage of the window (NaN when the
	// window length was not given) and the fraction corrected upstream.
	N             int
	NNCoverage    float64
	CorrectedFrac float64

	// Time domain (Task Force 1996).
	MeanNNms, MeanHRbpm, HRMinbpm, HRMaxbpm float64
	SDNNms, SDANNms, SDNNIndexms            float64
	RMSSDms, SDSDms                         float64
	NN50, PNN50pct, NN20, PNN20pct          float64
	TriIndex, TINNms                        float64

	// Frequency domain: band powers (ms^2), relative power (% of total),
	// normalised units (Task Force: 100 X/(total - VLF); "Sum": 100 X/(LF+HF)),
	// LF/HF, peak frequencies (Hz), total power over (0, HF upper edge].
	ULFms2, VLFms2, LFms2, HFms2, TotalPowerms2 float64
	VLFpct, LFpct, HFpct                        float64
	LFnu, HFnu, LFnuSum, HFnuSum, LFHF          float64
	VLFPeakHz, LFPeakHz, HFPeakHz               float64

	// Nonlinear.
	SD1ms, SD2ms, SD1SD2, EllipseAreams2 float64
	SampEn, ApEn, DFAAlpha1, DFAAlpha2   float64

	// PSD is the spectrum the frequency measures came from (for plotting);
	// empty when it could not be estimated.
	PSD PSD
	// Reasons maps a column name to why its value is NaN.
	Reasons map[string]string
	// Err is set when the input itself is unusable (all values NaN).
	Err error
}

// Column describes one HRV table column.
type Column struct {
	Name  string // lower case, unit last (rmssd_ms)
	Unit  string // "ms", "ms2", "bpm", "pct", "Hz", "count", "nu", "frac" or "1"
	Count bool   // integer-valued
	Doc   string // one line
}

type colSpec struct {
	Column
	get func(*Metrics) *float64
}

// columns is the one list behind Columns, ColumnInfo, Values and Reasons.
var columns = []colSpec{
	{Column{"hrv_nn_coverage_frac", "frac", false, "fraction of the window covered by the NN intervals used"}, func(m *Metrics) *float64 { return &m.NNCoverage }},
	{Column{"hrv_corrected_frac", "frac", false, "fraction of the NN intervals corrected upstream"}, func(m *Metrics) *float64 { return &m.CorrectedFrac }},
	{Column{"mean_nn_ms", "ms", false, "mean NN interval"}, func(m *Metrics) *float64 { return &m.MeanNNms }},
	{Column{"mean_hr_bpm", "bpm", false, "mean heart rate, 60000 / mean NN"}, func(m *Metrics) *float64 { return &m.MeanHRbpm }},
	{Column{"hr_min_bpm", "bpm", false, "lowest instantaneous heart rate, 60000 / longest NN"}, func(m *Metrics) *float64 { return &m.HRMinbpm }},
	{Column{"hr_max_bpm", "bpm", false, "highest instantaneous heart rate, 60000 / shortest NN"}, func(m *Metrics) *float64 { return &m.HRMaxbpm }},
	{Column{"sdnn_ms", "ms", false, "standard deviation of NN intervals"}, func(m *Metrics) *float64 { return &m.SDNNms }},
	{Column{"sdann_ms", "ms", false, "standard deviation of 5-min segment mean NN"}, func(m *Metrics) *float64 { return &m.SDANNms }},
	{Column{"sdnn_index_ms", "ms", false, "mean of 5-min segment SDNN"}, func(m *Metrics) *float64 { return &m.SDNNIndexms }},
	{Column{"rmssd_ms", "ms", false, "root mean square of successive NN differences"}, func(m *Metrics) *float64 { return &m.RMSSDms }},
	{Column{"sdsd_ms", "ms", false, "standard deviation of successive NN differences"}, func(m *Metrics) *float64 { return &m.SDSDms }},
	{Column{"n_nn50", "count", true, "successive differences > 50 ms"}, func(m *Metrics) *float64 { return &m.NN50 }},
	{Column{"pnn50_pct", "pct", false, "NN50 as a percentage of NN intervals"}, func(m *Metrics) *float64 { return &m.PNN50pct }},
	{Column{"n_nn20", "count", true, "successive differences > 20 ms"}, func(m *Metrics) *float64 { return &m.NN20 }},
	{Column{"pnn20_pct", "pct", false, "NN20 as a percentage of NN intervals"}, func(m *Metrics) *float64 { return &m.PNN20pct }},
	{Column{"hrv_tri_index", "1", false, "HRV triangular index, 1/128 s bins"}, func(m *Metrics) *float64 { return &m.TriIndex }},
	{Column{"tinn_ms", "ms", false, "triangular interpolation of the NN histogram"}, func(m *Metrics) *float64 { return &m.TINNms }},
	{Column{"ulf_ms2", "ms2", false, "ultra-low-frequency power"}, func(m *Metrics) *float64 { return &m.ULFms2 }},
	{Column{"vlf_ms2", "ms2", false, "very-low-frequency power"}, func(m *Metrics) *float64 { return &m.VLFms2 }},
	{Column{"lf_ms2", "ms2", false, "low-frequency power"}, func(m *Metrics) *float64 { return &m.LFms2 }},
	{Column{"hf_ms2", "ms2", false, "high-frequency power"}, func(m *Metrics) *float64 { return &m.HFms2 }},
	{Column{"total_power_ms2", "ms2", false, "power up to the HF upper edge"}, func(m *Metrics) *float64 { return &m.TotalPowerms2 }},
	{Column{"vlf_pct", "pct", false, "VLF power as a percentage of total power"}, func(m *Metrics) *float64 { return &m.VLFpct }},
	{Column{"lf_pct", "pct", false, "LF power as a percentage of total power"}, func(m *Metrics) *float64 { return &m.LFpct }},
	{Column{"hf_pct", "pct", false, "HF power as a percentage of total power"}, func(m *Metrics) *float64 { return &m.HFpct }},
	{Column{"lf_nu", "nu", false, "100 LF / (total - VLF)"}, func(m *Metrics) *float64 { return &m.LFnu }},
	{Column{"hf_nu", "nu", false, "100 HF / (total - VLF)"}, func(m *Metrics) *float64 { return &m.HFnu }},
	{Column{"lf_nu_sum", "nu", false, "100 LF / (LF + HF)"}, func(m *Metrics) *float64 { return &m.LFnuSum }},
	{Column{"hf_nu_sum", "nu", false, "100 HF / (LF + HF)"}, func(m *Metrics) *float64 { return &m.HFnuSum }},
	{Column{"lf_hf_ratio", "1", false, "LF power / HF power"}, func(m *Metrics) *float64 { return &m.LFHF }},
	{Column{"vlf_peak_hz", "Hz", false, "frequency of the VLF spectral peak"}, func(m *Metrics) *float64 { return &m.VLFPeakHz }},
	{Column{"lf_peak_hz", "Hz", false, "frequency of the LF spectral peak"}, func(m *Metrics) *float64 { return &m.LFPeakHz }},
	{Column{"hf_peak_hz", "Hz", false, "frequency of the HF spectral peak"}, func(m *Metrics) *float64 { return &m.HFPeakHz }},
	{Column{"sd1_ms", "ms", false, "Poincare SD1, across the identity line"}, func(m *Metrics) *float64 { return &m.SD1ms }},
	{Column{"sd2_ms", "ms", false, "Poincare SD2, along the identity line"}, func(m *Metrics) *float64 { return &m.SD2ms }},
	{Column{"sd1_sd2_ratio", "1", false, "Poincare SD1 / SD2"}, func(m *Metrics) *float64 { return &m.SD1SD2 }},
	{Column{"poincare_area_ms2", "ms2", false, "Poincare ellipse area, pi SD1 SD2"}, func(m *Metrics) *float64 { return &m.EllipseAreams2 }},
	{Column{"sampen", "1", false, "sample entropy, m = 2, r = 0.2 SD by default"}, func(m *Metrics) *float64 { return &m.SampEn }},
	{Column{"apen", "1", false, "approximate entropy, m = 2, r = 0.2 SD by default"}, func(m *Metrics) *float64 { return &m.ApEn }},
	{Column{"dfa_alpha1", "1", false, "DFA short-term exponent, 4-16 beats"}, func(m *Metrics) *float64 { return &m.DFAAlpha1 }},
	{Column{"dfa_alpha2", "1", false, "DFA long-term exponent, 16-64 beats"}, func(m *Metrics) *float64 { return &m.DFAAlpha2 }},
}

// NNCountColumn is the name of the column holding Metrics.N; it comes first
// in Columns.
const NNCountColumn = "hrv_n_nn"

// Columns returns the HRV table column names, units last, in the order of
// Metrics.Values. The first is NNCountColumn.
func Columns() []string {
	out := []string{NNCountColumn}
	for _, c := range columns {
		out = append(out, c.Name)
	}
	return out
}

// ColumnInfo returns the columns with unit and one-line documentation, in
// the order of Columns.
func ColumnInfo() []Column {
	out := []Column{{NNCountColumn, "count", true, "NN intervals used"}}
	for _, c := range columns {
		out = append(out, c.Column)
	}
	return out
}

// Values returns the metric values in the order of Columns (NaN where
// undefined; counts as float64).
func (m Metrics) Values() []float64 {
	return m.AppendValues(nil)
}

// AppendValues appends the values of Values to dst and returns it.
func (m Metrics) AppendValues(dst []float64) []float64 {
	dst = append(dst, float64(m.N))
	for _, c := range columns {
		dst = append(dst, *c.get(&m))
	}
	return dst
}

// ReasonList returns, in the order of Columns, why each value is NaN ("" when
// it is defined).
func (m Metrics) ReasonList() []string {
	out := []string{""}
	for _, c := range columns {
		r := ""
		if math.IsNaN(*c.get(&m)) {
			r = m.Reasons[c.Name]
			if r == "" {
				r = "undefined"
			}
		}
		out = append(out, r)
	}
	return out
}

func (m *Metrics) undefined(col, reason string) {
	for _, c := range columns {
		if c.Name == col {
			*c.get(m) = math.NaN()
			if m.Reasons == nil {
				m.Reasons = map[string]string{}
			}
			m.Reasons[col] = reason
			return
		}
	}
	panic("hrv: unknown column " + col) // a bug in this package, not an input problem
}

// allUndefined sets every metric (not the input fields) to NaN with reason.
func (m *Metrics) allUndefined(reason string) {
	for _, c := range columns[2:] {
		m.undefined(c.Name, reason)
	}
}

// set stores v in col, or NaN with the error's message.
func (m *Metrics) set(col string, v float64, err error) {
	if err != nil {
		m.undefined(col, reasonOf(err))
		return
	}
	for _, c := range columns {
		if c.Name == col {
			*c.get(m) = v
			return
		}
	}
	panic("hrv: unknown column " + col)
}

// setter returns a function storing a (value, error) result in col.
func (m *Metrics) setter(col string) func(float64, error) {
	return func(v float64, err error) { m.set(col, v, err) }
}

// reasonOf turns an error into a short reason: the message without the
// "hrv: " prefix.
func reasonOf(err error) string {
	s := err.Error()
	if len(s) > 5 && s[:5] == "hrv: " {
		s = s[5:]
	}
	return s
}

// Compute returns the full HRV set for one window of NN intervals nnMs (ms),
// interval i ending at endS[i] seconds (nil: the intervals are taken as
// contiguous from 0). It never panics on input: unusable input sets Err and
// every metric to NaN with the reason. Successive differences (RMSSD, SDSD,
// NNx, Poincare) use only pairs of contiguous intervals (ContiguousTolS);
// the other measures use the intervals as given.
func Compute(nnMs, endS []float64, opt Options) Metrics {
	var w work
	return w.compute(nnMs, endS, opt)
}

// work holds reusable buffers so the windowed drivers do not allocate the
// same slices for every window.
type work struct {
	spec  spectrumWork
	d     []float64
	pa    []float64
	pb    []float64
	times []float64
}

func (w *work) compute(nnMs, endS []float64, opt Options) (m Metrics) {
	m = Metrics{N: len(nnMs), NNCoverage: math.NaN(), CorrectedFrac: math.NaN()}
	min := opt.Min.withDefaults()
	fail := func(err error) Metrics {
		m.Err = err
		m.allUndefined("input: " + reasonOf(err))
		if m.Reasons == nil {
			m.Reasons = map[string]string{}
		}
		m.Reasons["hrv_nn_coverage_frac"] = m.Reasons["mean_nn_ms"]
		m.Reasons["hrv_corrected_frac"] = m.Reasons["mean_nn_ms"]
		return m
	}
	if err := checkNN(nnMs); err != nil {
		return fail(err)
	}
	if endS == nil {
		w.times = append(w.times[:0], cumulative(nnMs)...)
		endS = w.times
	}
	if err := checkTimes(nnMs, endS); err != nil {
		return fail(err)
	}
	if opt.Corrected != nil && len(opt.Corrected) != len(nnMs) {
		return fail(fmt.Errorf("hrv: %d corrected flags for %d intervals: %w", len(opt.Corrected), len(nnMs), ErrInput))
	}
	if opt.CorrectedCount < 0 || opt.CorrectedCount > len(nnMs) {
		return fail(fmt.Errorf("hrv: corrected count %d for %d intervals: %w", opt.CorrectedCount, len(nnMs), ErrInput))
	}
	if math.IsNaN(opt.WindowS) || math.IsInf(opt.WindowS, 0) || opt.WindowS < 0 {
		return fail(fmt.Errorf("hrv: window length %v s: %w", opt.WindowS, ErrInput))
	}
	bands := opt.Bands.orDefault()
	if err := bands.validate(); err != nil {
		return fail(err)
	}

	// Inputs.
	var sum float64
	for _, v := range nnMs {
		sum += v
	}
	if opt.WindowS > 0 {
		m.NNCoverage = math.Min(1, sum/1000/opt.WindowS)
	} else {
		m.undefined("hrv_nn_coverage_frac", "window length not given")
	}
	corrected := opt.CorrectedCount
	if opt.Corrected != nil {
		corrected = 0
		for _, c := range opt.Corrected {
			if c {
				corrected++
			}
		}
	}
	if len(nnMs) > 0 {
		m.CorrectedFrac = float64(corrected) / float64(len(nnMs))
	} else {
		m.undefined("hrv_corrected_frac", "no intervals")
	}
	if len(nnMs) == 0 {
		m.allUndefined("no NN intervals in the window")
		return m
	}
	if min.NNCoverage > 0 && opt.WindowS > 0 && m.NNCoverage < min.NNCoverage {
		m.allUndefined(fmt.Sprintf("NN coverage %.3f below minimum %.3f", m.NNCoverage, min.NNCoverage))
		return m
	}
	if min.CorrectedFrac > 0 && m.CorrectedFrac > min.CorrectedFrac {
		m.allUndefined(fmt.Sprintf("corrected fraction %.3f above maximum %.3f", m.CorrectedFrac, min.CorrectedFrac))
		return m
	}
	w.timeDomain(&m, nnMs, endS, opt, min)
	w.frequencyDomain(&m, nnMs, endS, opt, min, bands)
	w.nonlinear(&m, nnMs, opt, min)
	return m
}

// pairs fills w.d with the successive differences of contiguous intervals
// and w.pa/w.pb with the Poincare projections of the same pairs.
func (w *work) pairs(nn, endS []float64) {
	w.d, w.pa, w.pb = w.d[:0], w.pa[:0], w.pb[:0]
	for i := 1; i < len(nn); i++ {
		start := endS[i] - nn[i]/1000
		if math.Abs(start-endS[i-1]) > ContiguousTolS {
			continue
		}
		w.d = append(w.d, nn[i]-nn[i-1])
		w.pa = append(w.pa, (nn[i]-nn[i-1])/math.Sqrt2)
		w.pb = append(w.pb, (nn[i]+nn[i-1])/math.Sqrt2)
	}
}

func (w *work) timeDomain(m *Metrics, nn, endS []float64, opt Options, min MinData) {
	n := len(nn)
	m.MeanNNms = mean(nn)
	m.MeanHRbpm, m.HRMinbpm, m.HRMaxbpm, _ = HeartRate(nn)
	m.setter("sdnn_ms")(SDNN(nn, opt.Norm))
	seg := opt.SegmentS
	if seg == 0 {
		seg = 300
	}
	sdann, idx, _, err := Segments(nn, endS, seg, opt.Norm)
	m.set("sdann_ms", sdann, err)
	m.set("sdnn_index_ms", idx, err)

	w.pairs(nn, endS)
	nd := len(w.d)
	if nd >= 1 {
		m.RMSSDms = rmsOf(w.d)
		den := n
		if opt.PNN.Denominator == PerDifference {
			den = nd
		}
		c50, c20 := countOver(w.d, 50, opt.PNN.Pairs), countOver(w.d, 20, opt.PNN.Pairs)
		m.NN50, m.NN20 = float64(c50), float64(c20)
		m.PNN50pct, m.PNN20pct = 100*float64(c50)/float64(den), 100*float64(c20)/float64(den)
	} else {
		r := "no pair of contiguous intervals"
		for _, c := range []string{"rmssd_ms", "n_nn50", "pnn50_pct", "n_nn20", "pnn20_pct"} {
			m.undefined(c, r)
		}
	}
	if nd >= minSD(opt.Norm) {
		m.SDSDms = sd(w.d, opt.Norm)
	} else {
		m.undefined("sdsd_ms", fmt.Sprintf("%d contiguous pairs, need %d", nd, minSD(opt.Norm)))
	}
	if n < min.GeometricN {
		r := fmt.Sprintf("%d intervals, geometric measures need %d", n, min.GeometricN)
		m.undefined("hrv_tri_index", r)
		m.undefined("tinn_ms", r)
	} else {
		m.setter("hrv_tri_index")(TriangularIndex(nn, opt.HistBinMs))
		m.setter("tinn_ms")(TINN(nn, opt.HistBinMs))
	}
	// Poincare on the same contiguous pairs.
	if len(w.pa) >= minSD(opt.Norm) {
		m.SD1ms, m.SD2ms = sd(w.pa, opt.Norm), sd(w.pb, opt.Norm)
		m.EllipseAreams2 = math.Pi * m.SD1ms * m.SD2ms
		if m.SD2ms > 0 {
			m.SD1SD2 = m.SD1ms / m.SD2ms
		} else {
			m.undefined("sd1_sd2_ratio", "SD2 is zero")
		}
	} else {
		r := fmt.Sprintf("%d contiguous pairs, need %d", len(w.pa), minSD(opt.Norm))
		for _, c := range []string{"sd1_ms", "sd2_ms", "sd1_sd2_ratio", "poincare_area_ms2"} {
			m.undefined(c, r)
		}
	}
}

var freqCols = []string{"ulf_ms2", "vlf_ms2", "lf_ms2", "hf_ms2", "total_power_ms2", "vlf_pct", "lf_pct", "hf_pct",
	"lf_nu", "hf_nu", "lf_nu_sum", "hf_nu_sum", "lf_hf_ratio", "vlf_peak_hz", "lf_peak_hz", "hf_peak_hz"}

func (w *work) frequencyDomain(m *Metrics, nn, endS []float64, opt Options, min MinData, b Bands) {
	span := endS[len(endS)-1] - (endS[0] - nn[0]/1000)
	if span < min.HFSpanS {
		for _, c := range freqCols {
			m.undefined(c, fmt.Sprintf("NN span %.0f s below the %.0f s the HF band needs", span, min.HFSpanS))
		}
		return
	}
	psd, err := w.spec.spectrum(nn, endS, opt.Spectrum)
	if err != nil {
		for _, c := range freqCols {
			m.undefined(c, "spectrum: "+reasonOf(err))
		}
		return
	}
	m.PSD = psd
	band := func(col, peakCol string, bd Band, need float64) float64 {
		if span < need {
			r := fmt.Sprintf("NN span %.0f s below the %.0f s this band needs", span, need)
			m.undefined(col, r)
			if peakCol != "" {
				m.undefined(peakCol, r)
			}
			return math.NaN()
		}
		if bd.Hi <= psd.ResolutionHz {
			r := fmt.Sprintf("band up to %g Hz not resolved by the %s estimate (resolution %.3g Hz)", bd.Hi, psd.Estimator, psd.ResolutionHz)
			m.undefined(col, r)
			if peakCol != "" {
				m.undefined(peakCol, r)
			}
			return math.NaN()
		}
		p := psd.BandPower(bd)
		m.set(col, p, nil)
		if peakCol != "" {
			if f := psd.Peak(bd); math.IsNaN(f) {
				m.undefined(peakCol, "no power in the band")
			} else {
				m.set(peakCol, f, nil)
			}
		}
		return p
	}
	band("ulf_ms2", "", b.ULF, min.ULFSpanS)
	vlf := band("vlf_ms2", "vlf_peak_hz", b.VLF, min.VLFSpanS)
	lf := band("lf_ms2", "lf_peak_hz", b.LF, min.LFSpanS)
	hf := band("hf_ms2", "hf_peak_hz", b.HF, min.HFSpanS)
	total := psd.BandPower(Band{0, b.HF.Hi})
	m.TotalPowerms2 = total
	ratio := func(col string, num, den float64, what string) {
		switch {
		case math.IsNaN(num) || math.IsNaN(den):
			m.undefined(col, "needs "+what+", which is undefined")
		case den <= 0:
			m.undefined(col, what+" is zero")
		default:
			m.set(col, 100*num/den, nil)
		}
	}
	ratio("vlf_pct", vlf, total, "total power")
	ratio("lf_pct", lf, total, "total power")
	ratio("hf_pct", hf, total, "total power")
	ratio("lf_nu", lf, total-vlf, "total minus VLF power")
	ratio("hf_nu", hf, total-vlf, "total minus VLF power")
	ratio("lf_nu_sum", lf, lf+hf, "LF + HF power")
	ratio("hf_nu_sum", hf, lf+hf, "LF + HF power")
	ratio("lf_hf_ratio", lf, hf, "HF power")
	if !math.IsNaN(m.LFHF) {
		m.LFHF /= 100
	}
}

func (w *work) nonlinear(m *Metrics, nn []float64, opt Options, min MinData) {
	n := len(nn)
	em := opt.EntropyM
	if em == 0 {
		em = 2
	}
	er := opt.EntropyR
	if er == 0 {
		er = 0.2
	}
	if n < min.EntropyN {
		r := fmt.Sprintf("%d intervals, entropy needs %d", n, min.EntropyN)
		m.undefined("sampen", r)
		m.undefined("apen", r)
	} else {
		s := sd(nn, Sample)
		r := er * s
		v, err := SampleEntropy(nn, em, r)
		m.set("sampen", v, err)
		v, err = ApproximateEntropy(nn, em, r)
		m.set("apen", v, err)
	}
	dfa := func(col string, boxes [2]int, def [2]int, need int) {
		if boxes == ([2]int{}) {
			boxes = def
		}
		if n < need {
			m.undefined(col, fmt.Sprintf("%d intervals, %s needs %d", n, col, need))
			return
		}
		o := opt.DFA
		o.MinBox, o.MaxBox = boxes[0], boxes[1]
		v, err := DFAWith(nn, o)
		m.set(col, v, err)
	}
	dfa("dfa_alpha1", opt.Alpha1Boxes, [2]int{4, 16}, min.Alpha1N)
	dfa("dfa_alpha2", opt.Alpha2Boxes, [2]int{16, 64}, min.Alpha2N)
}
