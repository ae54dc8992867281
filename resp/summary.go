package resp

import (
	"fmt"
	"math"
	"sort"

	"github.com/tidalbeat/tidalbeat/window"
)

// Summary holds the breathing features of one window: a fixed list of
// columns (SummaryColumns) with their values (NaN when undefined) and, for
// each NaN, the reason. Package features writes it as part of a row without
// knowing respiration.
type Summary struct {
	Window window.Window
	values [numCols]float64
	reason [numCols]string
}

// Column indices of Summary.
const (
	colBreaths = iota
	colClean
	colRate
	colRateCV
	colRateIQR
	colVtL
	colVtAU
	colVtCV
	colVtIQRL
	colVtIQRAU
	colVEL
	colVEAU
	colTi
	colTe
	colTiTtot
	colTiTtotCV
	colTiTtotIQR
	colFlowL
	colFlowAU
	colFlowCV
	colSighs
	colPhaseXC
	colPhaseLis
	colParadox
	colApneas
	colHypopneas
	colApneasObs
	colApneasCen
	colApneasMix
	colHypDesat
	colCoverage
	colQuality
	numCols
)

// summaryColumns are the column names: quantity then unit. Volumes appear in
// litres (NaN unless calibrated absolutely) and in arbitrary units; they are
// never mixed in one column.
var summaryColumns = [numCols]string{
	colBreaths:   "resp_n_breaths",        // breaths with onset in the window
	colClean:     "resp_n_clean_breaths",  // of which without a quality flag
	colRate:      "resp_rate_per_min",     // 60 * breaths / sum(Ttot + pause)
	colRateCV:    "resp_rate_cv_pct",      // CV of per-breath rate
	colRateIQR:   "resp_rate_iqr_per_min", // IQR of per-breath rate
	colVtL:       "vt_l",                  // median tidal volume, L
	colVtAU:      "vt_au",                 // median tidal volume, AU
	colVtCV:      "vt_cv_pct",
	colVtIQRL:    "vt_iqr_l",
	colVtIQRAU:   "vt_iqr_au",
	colVEL:       "ve_l_min",  // minute ventilation, 60 * sum(Vt) / sum(Ttot + pause), L/min
	colVEAU:      "ve_au_min", // the same in AU/min
	colTi:        "ti_s",      // median inspiratory time
	colTe:        "te_s",      // median expiratory time
	colTiTtot:    "ti_ttot_ratio",
	colTiTtotCV:  "ti_ttot_cv_pct",
	colTiTtotIQR: "ti_ttot_iqr_ratio",
	colFlowL:     "insp_flow_l_s",  // median mean inspiratory flow Vt/Ti, L/s
	colFlowAU:    "insp_flow_au_s", // the same in AU/s
	colFlowCV:    "insp_flow_cv_pct",
	colSighs:     "n_sighs",
	colPhaseXC:   "phase_xcorr_deg",     // median per-breath cross-correlation phase (WindowPhase gives it from samples)
	colPhaseLis:  "phase_lissajous_deg", // median per-breath Lissajous phase
	colParadox:   "paradox_time_frac",   // share of breath time in paradoxical breaths
	colApneas:    "n_apneas",            // candidate apneas starting in the window
	colHypopneas: "n_hypopneas",         // candidate hypopneas starting in the window
	colApneasObs: "n_apneas_obstructive",
	colApneasCen: "n_apneas_central",
	colApneasMix: "n_apneas_mixed",
	colHypDesat:  "n_hypopneas_desat3", // candidate hypopneas with >= 3 % SpO2 desaturation (AASM rule 1A's criterion); NaN without SpO2
	colCoverage:  "resp_coverage_frac", // share of the window with valid band samples
	colQuality:   "resp_quality_frac",  // share of the window's breaths without a quality flag
}

// SummaryColumns returns the column names of Summary.Values, in order, each
// with its unit: _n counts, _per_min, _pct, _l litres, _au arbitrary units,
// _l_min and _au_min per minute, _s seconds, _l_s and _au_s per second,
// _ratio, _deg degrees, _frac fractions.
func SummaryColumns() []string { return append([]string(nil), summaryColumns[:]...) }

// Columns returns SummaryColumns().
func (s Summary) Columns() []string { return SummaryColumns() }

// Values returns the values in column order (NaN when undefined).
func (s Summary) Values() []float64 { return append([]float64(nil), s.values[:]...) }

// Reasons returns, per column, why the value is NaN ("" when it is not).
func (s Summary) Reasons() []string { return append([]string(nil), s.reason[:]...) }

// Value returns the value of the named column and whether the name exists.
func (s Summary) Value(name string) (float64, bool) {
	for i, c := range summaryColumns {
		if c == name {
			return s.values[i], true
		}
	}
	return math.NaN(), false
}

// Reason returns the reason for the named column's NaN, "" if defined.
func (s Summary) Reason(name string) string {
	for i, c := range summaryColumns {
		if c == name {
			return s.reason[i]
		}
	}
	return "no such column"
}

// SummaryOptions configures Summarize.
type SummaryOptions struct {
	// MinBreaths is the fewest clean breaths for timing and volume
	// features: 3 when zero (common practice, methods reference 7).
	MinBreaths int
	// MaxFlaggedFrac: when more of the breath time than this is flagged
	// (motion, clipping, band loss) the window's breath features are NaN:
	// 0.2 when zero (common practice, methods reference 7: flat/clipped
	// more than 20 % of the time).
	MaxFlaggedFrac float64
	// SpO2 says that the events were detected with an SpO2 series
	// (EventOptions.SpO2), so n_hypopneas_desat3 is defined; without it
	// that column is NaN with the reason.
	SpO2 bool
}

// Summarize computes the breathing features of window w from the breaths
// whose onset lies in it (typically breaths[w.Lo:w.Hi] from the window
// engine laid over breath onsets) and the candidate events (the whole sorted
// list; those starting in [w.Start, w.End) are counted). It is a pure
// function: batch and streaming callers get the same numbers for the same
// inputs. Breaths with a quality flag count in resp_quality_frac and
// n_sighs but not in timing and volume features. Event counts are NaN when
// the window is invalid.
func Summarize(w window.Window, breaths []Breath, events []Event, opt SummaryOptions) Summary {
	s := Summary{Window: w}
	for i := range s.values {
		s.values[i] = math.NaN()
	}
	minB := opt.MinBreaths
	if minB <= 0 {
		minB = 3
	}
	maxFl := opt.MaxFlaggedFrac
	if maxFl <= 0 || math.IsNaN(maxFl) {
		maxFl = 0.2
	}
	s.values[colCoverage] = w.Coverage
	s.values[colBreaths] = float64(len(breaths))
	var clean []Breath
	var sighs, flaggedT, totalT float64
	for _, b := range breaths {
		d := b.TtotS + b.PauseS
		totalT += d
		if b.Sigh {
			sighs++
		}
		if b.Quality&^QualityLongPause != 0 {
			flaggedT += d
			continue
		}
		clean = append(clean, b)
	}
	s.values[colClean] = float64(len(clean))
	s.values[colSighs] = sighs
	if len(breaths) > 0 {
		s.values[colQuality] = float64(len(clean)) / float64(len(breaths))
	} else {
		s.reason[colQuality] = "no breaths in window"
	}
	invalid := ""
	switch {
	case !w.Valid:
		invalid = "window invalid: " + w.Reason
	case len(clean) < minB:
		invalid = fmt.Sprintf("%d clean breaths, need %d", len(clean), minB)
	case totalT > 0 && flaggedT/totalT > maxFl:
		invalid = fmt.Sprintf("%.0f %% of breath time flagged, limit %.0f %%", 100*flaggedT/totalT, 100*maxFl)
	}
	if !w.Valid {
		for _, c := range []int{colApneas, colHypopneas, colApneasObs, colApneasCen, colApneasMix, colHypDesat} {
			s.reason[c] = invalid
		}
	} else {
		lo := sort.Search(len(events), func(i int) bool { return events[i].Start >= w.Start })
		var na, nh, no, nc, nm, nd float64
		for i := lo; i < len(events) && events[i].Start < w.End; i++ {
			e := events[i]
			if e.Kind == EventApnea {
				na++
				switch e.Class {
				case ClassObstructive:
					no++
				case ClassCentral:
					nc++
				case ClassMixed:
					nm++
				}
			} else {
				nh++
				if e.Rule1A {
					nd++
				}
			}
		}
		if opt.SpO2 {
			s.values[colHypDesat] = nd
		} else {
			s.reason[colHypDesat] = "no SpO2 channel: desaturation unknown"
		}
		s.values[colApneas], s.values[colHypopneas] = na, nh
		s.values[colApneasObs], s.values[colApneasCen], s.values[colApneasMix] = no, nc, nm
	}
	breathCols := []int{colRate, colRateCV, colRateIQR, colVtL, colVtAU, colVtCV, colVtIQRL, colVtIQRAU, colVEL, colVEAU,
		colTi, colTe, colTiTtot, colTiTtotCV, colTiTtotIQR, colFlowL, colFlowAU, colFlowCV, colPhaseXC, colPhaseLis, colParadox}
	if invalid != "" {
		for _, c := range breathCols {
			s.reason[c] = invalid
		}
		return s
	}
	n := len(clean)
	rate, vt, ti, te, duty, flow := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	var pxc, plis []float64
	var sumVt, sumT, parT, brT float64
	litres := true
	for i, b := range clean {
		litres = litres && finite(b.VtL)
		rate[i], vt[i], ti[i], te[i], duty[i], flow[i] = b.RatePerMin, b.VtAU, b.TiS, b.TeS, b.TiTtot, b.FlowAUs
		sumVt += b.VtAU
		sumT += b.TtotS + b.PauseS
		brT += b.TtotS
		if b.Paradox {
			parT += b.TtotS
		}
		if finite(b.PhaseXcorrDeg) {
			pxc = append(pxc, b.PhaseXcorrDeg)
		}
		if finite(b.PhaseLissajousDeg) {
			plis = append(plis, b.PhaseLissajousDeg)
		}
	}
	s.values[colRate] = 60 * float64(n) / sumT
	s.values[colRateCV] = cvPct(rate)
	_, s.values[colRateIQR] = sortedStats(rate)
	s.values[colVtCV] = cvPct(vt)
	s.values[colVtAU], s.values[colVtIQRAU] = sortedStats(vt)
	s.values[colVEAU] = 60 * sumVt / sumT
	s.values[colTi], _ = sortedStats(ti)
	s.values[colTe], _ = sortedStats(te)
	s.values[colTiTtotCV] = cvPct(duty)
	s.values[colTiTtot], s.values[colTiTtotIQR] = sortedStats(duty)
	s.values[colFlowCV] = cvPct(flow)
	s.values[colFlowAU], _ = sortedStats(flow)
	// Breath volumes in litres exist only under an absolute calibration
	// (Breath.VtL is NaN otherwise); then VtL equals VtAU.
	if litres {
		s.values[colVtL] = s.values[colVtAU]
		s.values[colVtIQRL] = s.values[colVtIQRAU]
		s.values[colVEL] = s.values[colVEAU]
		s.values[colFlowL] = s.values[colFlowAU]
	} else {
		for _, c := range []int{colVtL, colVtIQRL, colVEL, colFlowL} {
			s.reason[c] = "uncalibrated: volumes are in arbitrary units (see the _au columns)"
		}
	}
	s.values[colPhaseXC], _ = sortedStats(pxc)
	s.values[colPhaseLis], _ = sortedStats(plis)
	if len(pxc) == 0 {
		s.reason[colPhaseXC] = "phase undefined for every breath"
	}
	if len(plis) == 0 {
		s.reason[colPhaseLis] = "phase undefined for every breath"
	}
	s.values[colParadox] = parT / brT
	for _, c := range []int{colRateCV, colVtCV, colTiTtotCV, colFlowCV} {
		if math.IsNaN(s.values[c]) {
			s.reason[c] = "undefined (mean zero or fewer than two breaths)"
		}
	}
	return s
}

func cvPct(x []float64) float64 {
	m, sd := meanSD(x)
	if !(m != 0) || math.IsNaN(sd) {
		return math.NaN()
	}
	return 100 * sd / math.Abs(m)
}

// sortedStats sorts x in place and returns its median and interquartile
// range (type-7 quantiles); NaN for an empty x.
func sortedStats(x []float64) (med, iqr float64) {
	if len(x) == 0 {
		return math.NaN(), math.NaN()
	}
	sort.Float64s(x)
	return sortedQuantile(x, 0.5), sortedQuantile(x, 0.75) - sortedQuantile(x, 0.25)
}

func sortedQuantile(s []float64, q float64) float64 {
	h := q * float64(len(s)-1)
	lo := int(math.Floor(h))
	if lo >= len(s)-1 {
		return s[len(s)-1]
	}
	return s[lo] + (h-float64(lo))*(s[lo+1]-s[lo])
}

// Windows lays grid over the breath onsets of r (its gaps reduce each
// window's coverage) for a recording whose band data end at endS seconds,
// and summarises every window with Summarize. It is the batch convenience
// around the shared window engine; a streaming caller feeds the engine's
// event stream with breaths as they complete and calls Summarize on each
// ready window, which gives the same summaries.
func Windows(grid window.Grid, r Result, events []Event, endS float64, opt SummaryOptions) ([]Summary, error) {
	on := make([]float64, len(r.Breaths))
	for i, b := range r.Breaths {
		on[i] = b.Onset
	}
	// Onsets are corrected for the filter delay and may precede 0 by a
	// fraction of a second at the very start; the engine's extent starts at
	// 0, so such a breath is counted in the first window.
	for i := range on {
		if on[i] < 0 {
			on[i] = 0
		}
	}
	seq, err := grid.Events(on, endS, r.Gaps)
	if err != nil {
		return nil, fmt.Errorf("resp: windows: %w", err)
	}
	var out []Summary
	for w := range seq {
		out = append(out, Summarize(w, r.Breaths[w.Lo:w.Hi], events, opt))
	}
	return out, nil
}
