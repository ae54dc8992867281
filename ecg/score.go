package ecg

import (
	"fmt"
	"math"
	"sort"
)

// MatchWindowS is the default beat-matching tolerance: a detection matches
// a reference beat when their times differ by at most 150 ms (ANSI/AAMI
// EC57 as usually quoted; from memory, unverified against the standard's
// body text).
const MatchWindowS = 0.150

// Score is the beat-by-beat comparison of one record.
type Score struct {
	Record string // caller's label
	TP     int    // reference beats matched by a detection
	FN     int    // reference beats left unmatched
	FP     int    // detections left unmatched
	// Pairs lists the matched (reference index, detection index) pairs in
	// reference order.
	Pairs [][2]int
	// MissedRef and ExtraTest list the indices of unmatched reference beats
	// and unmatched detections.
	MissedRef, ExtraTest []int
}

// Sensitivity returns TP/(TP+FN) in [0, 1], NaN when there are no reference
// beats.
func (s Score) Sensitivity() float64 { return ratio(s.TP, s.TP+s.FN) }

// PositivePredictivity returns TP/(TP+FP) in [0, 1], NaN when there are no
// detections.
func (s Score) PositivePredictivity() float64 { return ratio(s.TP, s.TP+s.FP) }

// ErrorRate returns the detection error rate (FP+FN)/(TP+FN), failed
// detections per reference beat (common practice), NaN with no reference.
func (s Score) ErrorRate() float64 { return ratio(s.FP+s.FN, s.TP+s.FN) }

func ratio(a, b int) float64 {
	if b == 0 {
		return math.NaN()
	}
	return float64(a) / float64(b)
}

// MatchBeats compares detected beat times test against reference beat times
// ref (both seconds, any order): every pair closer than tolS (MatchWindowS
// when zero) is a candidate, and pairs are taken greedily nearest first, each
// reference and each detection used at most once (EC57-style matching, as
// restated in the methods reference section 1.6, from memory). The caller
// passes only beat annotations as references (recording.Annotation.IsBeat).
// Times that are NaN or infinite are an error.
func MatchBeats(ref, test []float64, tolS float64) (Score, error) {
	if tolS == 0 {
		tolS = MatchWindowS
	}
	if !(tolS > 0) || math.IsInf(tolS, 0) {
		return Score{}, fmt.Errorf("ecg: match tolerance %v s: %w", tolS, ErrOptions)
	}
	ri := sortedIndex(ref)
	ti := sortedIndex(test)
	for _, v := range ref {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Score{}, fmt.Errorf("ecg: reference time %v: %w", v, ErrInput)
		}
	}
	for _, v := range test {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Score{}, fmt.Errorf("ecg: detection time %v: %w", v, ErrInput)
		}
	}
	type pair struct {
		r, t int
		d    float64
	}
	var pairs []pair
	lo := 0
	for _, r := range ri {
		for lo < len(ti) && test[ti[lo]] < ref[r]-tolS {
			lo++
		}
		for j := lo; j < len(ti) && test[ti[j]] <= ref[r]+tolS; j++ {
			pairs = append(pairs, pair{r, ti[j], math.Abs(test[ti[j]] - ref[r])})
		}
	}
	sort.SliceStable(pairs, func(a, b int) bool { return pairs[a].d < pairs[b].d })
	usedR := make([]bool, len(ref))
	usedT := make([]bool, len(test))
	var s Score
	for _, p := range pairs {
		if usedR[p.r] || usedT[p.t] {
			continue
		}
		usedR[p.r], usedT[p.t] = true, true
		s.Pairs = append(s.Pairs, [2]int{p.r, p.t})
	}
	sort.Slice(s.Pairs, func(a, b int) bool { return ref[s.Pairs[a][0]] < ref[s.Pairs[b][0]] })
	s.TP = len(s.Pairs)
	for _, r := range ri {
		if !usedR[r] {
			s.MissedRef = append(s.MissedRef, r)
		}
	}
	for _, t := range ti {
		if !usedT[t] {
			s.ExtraTest = append(s.ExtraTest, t)
		}
	}
	s.FN, s.FP = len(s.MissedRef), len(s.ExtraTest)
	return s, nil
}

func sortedIndex(x []float64) []int {
	idx := make([]int, len(x))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return x[idx[a]] < x[idx[b]] })
	return idx
}

// Summary aggregates record scores.
type Summary struct {
	Records    int
	TP, FN, FP int // sums over records
	// GrossSe and GrossPP are computed from the summed counts (each beat
	// weighs the same); AverageSe and AveragePP are the unweighted means of
	// the per-record values (each record weighs the same), skipping records
	// where the value is NaN (methods reference 1.6, EC57 from memory).
	GrossSe, GrossPP     float64
	AverageSe, AveragePP float64
}

// Summarize returns gross and average statistics over records.
func Summarize(scores []Score) Summary {
	var s Summary
	var se, pp float64
	var nse, npp int
	for _, r := range scores {
		s.Records++
		s.TP += r.TP
		s.FN += r.FN
		s.FP += r.FP
		if v := r.Sensitivity(); !math.IsNaN(v) {
			se += v
			nse++
		}
		if v := r.PositivePredictivity(); !math.IsNaN(v) {
			pp += v
			npp++
		}
	}
	s.GrossSe = ratio(s.TP, s.TP+s.FN)
	s.GrossPP = ratio(s.TP, s.TP+s.FP)
	s.AverageSe, s.AveragePP = math.NaN(), math.NaN()
	if nse > 0 {
		s.AverageSe = se / float64(nse)
	}
	if npp > 0 {
		s.AveragePP = pp / float64(npp)
	}
	return s
}
