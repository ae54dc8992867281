package resp

import (
	"fmt"
	"math"
	"sort"
)

// Calibration weights the two bands into one volume signal,
// sum = RibWeight*rib + AbdWeight*abdomen (the two-compartment model of
// Konno and Mead 1967). The zero value means equal weights of 1 in arbitrary
// units (no calibration at all).
type Calibration struct {
	RibWeight, AbdWeight float64
	// Litres is true when the weights turn band units into litres
	// (absolute calibration against reference volumes); otherwise volumes
	// are in arbitrary units (AU) and are never reported as litres.
	Litres bool
	// Method says how the weights were found: "none", "qdc",
	// "qdc+volume" (QDC ratio, one volume factor) or "two-weight".
	Method string
	// References is the number of reference breaths of an absolute fit;
	// ResidualL is the root-mean-square residual of that fit (L).
	References int
	ResidualL  float64
	// Caveat is the limitation that applies to these weights, in words;
	// empty when none is known.
	Caveat string
}

// QDCCaveat is the limitation of qualitative diagnostic calibration, carried
// in every QDC result and calibration.
const QDCCaveat = "QDC gives relative weights only; it is exact only for constant tidal volume, and with varying volume K depends on the breath-selection rule (De Groote et al. 2001); it is posture-specific, so recalibrate after a posture change and prefer a reference-volume calibration when one is available"

func (c Calibration) weights() (rib, abd float64) {
	if c.RibWeight == 0 && c.AbdWeight == 0 {
		return 1, 1
	}
	return c.RibWeight, c.AbdWeight
}

func (c Calibration) validate() error {
	for _, v := range []float64{c.RibWeight, c.AbdWeight} {
		if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
			return fmt.Errorf("resp: calibration weights %v, %v: %w", c.RibWeight, c.AbdWeight, ErrInput)
		}
	}
	if c.Litres && c.RibWeight == 0 && c.AbdWeight == 0 {
		return fmt.Errorf("resp: absolute calibration with zero weights: %w", ErrInput)
	}
	return nil
}

// VolumeUnit returns "L" for an absolute calibration and "AU" otherwise.
func (c Calibration) VolumeUnit() string {
	if c.Litres {
		return "L"
	}
	return "AU"
}

// Selection is the QDC breath-selection rule.
type Selection int

const (
	// SelectWithinSD keeps breaths whose uncalibrated volume lies within
	// mean +- QDCOptions.SDs standard deviations: Sackner's criterion with
	// one SD (Sackner et al. 1989; the exact wording is from memory,
	// unverified). It is the default.
	SelectWithinSD Selection = iota
	// SelectAll keeps every breath.
	SelectAll
)

// String names the rule.
func (s Selection) String() string {
	switch s {
	case SelectWithinSD:
		return "within-sd"
	case SelectAll:
		return "all"
	}
	return fmt.Sprintf("Selection(%d)", int(s))
}

// QDCOptions configures qualitative diagnostic calibration.
type QDCOptions struct {
	Selection  Selection // SelectWithinSD when zero
	SDs        float64   // width of the SelectWithinSD band in SDs: 1 when zero (Sackner et al. 1989, from memory)
	MinBreaths int       // fewest selected breaths for an estimate: 10 when zero (our choice; Sackner used ~5 min of breathing)
}

// QDCResult is a relative calibration by QDC.
type QDCResult struct {
	// K is the rib-cage weight relative to the abdomen,
	// SD(abdominal rise)/SD(rib-cage rise) over the selected breaths
	// (Sackner et al. 1989). NaN when undefined.
	K         float64
	Used      int       // breaths selected
	Total     int       // breaths offered
	Selection Selection // rule applied
	// Caveat is QDCCaveat: the weights are exact only for constant tidal
	// volume and are posture-specific (De Groote et al. 2001).
	Caveat string
}

// Calibration returns the relative calibration RibWeight = K, AbdWeight = 1
// in arbitrary units.
func (q QDCResult) Calibration() Calibration {
	return Calibration{RibWeight: q.K, AbdWeight: 1, Method: "qdc", Caveat: QDCCaveat}
}

// QDCFromRises computes the QDC weight from per-breath inspiratory rises of
// the uncalibrated rib-cage and abdominal bands (Breath.RibRise, AbdRise).
// When the rib-cage rises do not vary (constant split) K is undefined: it
// returns NaN and ErrUndefined.
func QDCFromRises(ribRise, abdRise []float64, opt QDCOptions) (QDCResult, error) {
	res := QDCResult{K: math.NaN(), Total: len(ribRise), Selection: opt.Selection, Caveat: QDCCaveat}
	if len(ribRise) != len(abdRise) {
		return res, fmt.Errorf("resp: QDC: %d rib-cage and %d abdominal rises: %w", len(ribRise), len(abdRise), ErrInput)
	}
	sds := opt.SDs
	if sds == 0 {
		sds = 1
	}
	minN := opt.MinBreaths
	if minN == 0 {
		minN = 10
	}
	if math.IsNaN(sds) || sds < 0 || minN < 2 {
		return res, fmt.Errorf("resp: QDC options SDs %v, MinBreaths %d: %w", opt.SDs, opt.MinBreaths, ErrInput)
	}
	var rc, ab, tot []float64
	for i := range ribRise {
		if finite(ribRise[i]) && finite(abdRise[i]) {
			rc = append(rc, ribRise[i])
			ab = append(ab, abdRise[i])
			tot = append(tot, ribRise[i]+abdRise[i])
		}
	}
	if opt.Selection == SelectWithinSD {
		m, sd := meanSD(tot)
		k := 0
		for i := range tot {
			if math.Abs(tot[i]-m) <= sds*sd*(1+1e-12) {
				rc[k], ab[k] = rc[i], ab[i]
				k++
			}
		}
		rc, ab = rc[:k], ab[:k]
	} else if opt.Selection != SelectAll {
		return res, fmt.Errorf("resp: QDC selection %v: %w", opt.Selection, ErrInput)
	}
	res.Used = len(rc)
	if res.Used < minN {
		return res, fmt.Errorf("resp: QDC: %d breaths selected, need %d: %w", res.Used, minN, ErrTooFew)
	}
	_, sdRC := meanSD(rc)
	_, sdAB := meanSD(ab)
	if !(sdRC > 1e-12*(math.Abs(rc[0])+1e-300)) {
		return res, fmt.Errorf("resp: QDC: rib-cage rises do not vary (SD %v): K undefined: %w", sdRC, ErrUndefined)
	}
	res.K = sdAB / sdRC
	return res, nil
}

// QDC runs breath detection on the bands with opt (its Calibration is the
// provisional weighting used to find breaths, equal weights when zero) and
// returns the QDC weight from the detected breaths' rises. Use a period of
// natural breathing in one posture (Sackner et al. 1989 used about 5 min).
// Breaths with a quality flag are left out.
func QDC(rib, abd []float64, opt Options, qopt QDCOptions) (QDCResult, error) {
	r, err := Detect(rib, abd, opt)
	if err != nil {
		return QDCResult{K: math.NaN(), Caveat: QDCCaveat}, err
	}
	var rc, ab []float64
	for _, b := range r.Breaths {
		if b.Quality == 0 {
			rc = append(rc, b.RibRise)
			ab = append(ab, b.AbdRise)
		}
	}
	return QDCFromRises(rc, ab, qopt)
}

// Reference is one reference breath for absolute calibration: the
// uncalibrated inspiratory rises of both bands (Breath.RibRise, AbdRise) and
// the volume measured by a spirometer, pneumotachograph or fixed-volume bag.
type Reference struct {
	RibRise, AbdRise float64
	VolumeL          float64 // reference tidal volume (L)
}

// MinTwoWeightRefs is the number of reference breaths from which
// CalibrateAbsolute fits both band weights instead of one volume factor
// (common practice: 5-10 breaths for a single factor, methods reference 5.1;
// two free weights want more).
const MinTwoWeightRefs = 10

// FitVolume scales a relative calibration (rib-cage weight k, abdominal
// weight 1) to litres by least squares through the origin:
// M = sum(V_i S_i) / sum(S_i^2) with S_i = k*rib_i + abd_i (common practice,
// methods reference 5.1). It needs at least two reference breaths.
func FitVolume(k float64, refs []Reference) (Calibration, error) {
	if !finite(k) || k < 0 {
		return Calibration{}, fmt.Errorf("resp: volume fit: rib-cage weight %v: %w", k, ErrInput)
	}
	if err := checkRefs(refs, 2); err != nil {
		return Calibration{}, err
	}
	var sv, ss float64
	for _, r := range refs {
		s := k*r.RibRise + r.AbdRise
		sv += r.VolumeL * s
		ss += s * s
	}
	if !(ss > 0) {
		return Calibration{}, fmt.Errorf("resp: volume fit: reference breaths show no excursion: %w", ErrUndefined)
	}
	m := sv / ss
	if !(m > 0) {
		return Calibration{}, fmt.Errorf("resp: volume fit: factor %v not positive: %w", m, ErrUndefined)
	}
	c := Calibration{RibWeight: m * k, AbdWeight: m, Litres: true, Method: "qdc+volume", References: len(refs),
		Caveat: "rib-cage/abdomen ratio from QDC: " + QDCCaveat}
	c.ResidualL = residual(c, refs)
	return c, nil
}

// FitWeights fits both band weights to the reference volumes by least
// squares without intercept, V_i = a*rib_i + b*abd_i (least-squares
// calibration; Chadha et al. 1982, authors from memory). It needs
// MinTwoWeightRefs breaths whose rises are not collinear, and both weights
// must come out positive.
func FitWeights(refs []Reference) (Calibration, error) {
	if err := checkRefs(refs, MinTwoWeightRefs); err != nil {
		return Calibration{}, err
	}
	var srr, saa, sra, srv, sav float64
	for _, r := range refs {
		srr += r.RibRise * r.RibRise
		saa += r.AbdRise * r.AbdRise
		sra += r.RibRise * r.AbdRise
		srv += r.RibRise * r.VolumeL
		sav += r.AbdRise * r.VolumeL
	}
	det := srr*saa - sra*sra
	if !(math.Abs(det) > 1e-9*srr*saa) {
		return Calibration{}, fmt.Errorf("resp: two-weight fit: band rises are collinear (same split in every breath): %w", ErrUndefined)
	}
	a := (srv*saa - sav*sra) / det
	b := (sav*srr - srv*sra) / det
	if !(a > 0 && b > 0) {
		return Calibration{}, fmt.Errorf("resp: two-weight fit: weights %v, %v not both positive: %w", a, b, ErrUndefined)
	}
	c := Calibration{RibWeight: a, AbdWeight: b, Litres: true, Method: "two-weight", References: len(refs),
		Caveat: "calibration is posture-specific: recalibrate after a posture change"}
	c.ResidualL = residual(c, refs)
	return c, nil
}

// CalibrateAbsolute returns a litre calibration from reference breaths: the
// two-weight fit when at least MinTwoWeightRefs breaths are given and it is
// well defined, otherwise the QDC ratio k scaled by FitVolume.
func CalibrateAbsolute(k float64, refs []Reference) (Calibration, error) {
	if len(refs) >= MinTwoWeightRefs {
		if c, err := FitWeights(refs); err == nil {
			return c, nil
		}
	}
	return FitVolume(k, refs)
}

func checkRefs(refs []Reference, min int) error {
	if len(refs) < min {
		return fmt.Errorf("resp: calibration: %d reference breaths, need %d: %w", len(refs), min, ErrTooFew)
	}
	for i, r := range refs {
		if !finite(r.RibRise) || !finite(r.AbdRise) || !finite(r.VolumeL) || r.VolumeL <= 0 {
			return fmt.Errorf("resp: calibration: reference %d (%v, %v, %v L): %w", i, r.RibRise, r.AbdRise, r.VolumeL, ErrInput)
		}
	}
	return nil
}

func residual(c Calibration, refs []Reference) float64 {
	var s float64
	for _, r := range refs {
		e := c.RibWeight*r.RibRise + c.AbdWeight*r.AbdRise - r.VolumeL
		s += e * e
	}
	return math.Sqrt(s / float64(len(refs)))
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// meanSD returns the mean and the sample standard deviation (N-1).
func meanSD(x []float64) (m, sd float64) {
	if len(x) == 0 {
		return math.NaN(), math.NaN()
	}
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	if len(x) < 2 {
		return m, math.NaN()
	}
	var ss float64
	for _, v := range x {
		ss += (v - m) * (v - m)
	}
	return m, math.Sqrt(ss / float64(len(x)-1))
}

// median returns the median of x (sorting a copy); NaN when empty.
func median(x []float64) float64 {
	return quantile(x, 0.5)
}

// quantile returns the q-quantile by linear interpolation between order
// statistics (type 7, the common default); NaN when empty.
func quantile(x []float64, q float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	h := q * float64(len(s)-1)
	lo := int(math.Floor(h))
	if lo >= len(s)-1 {
		return s[len(s)-1]
	}
	return s[lo] + (h-float64(lo))*(s[lo+1]-s[lo])
}
