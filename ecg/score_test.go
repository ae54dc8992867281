package ecg_test

import (
	"errors"
	"math"
	"testing"

	"github.com/tidalbeat/tidalbeat/ecg"
)

func TestMatchBeats(t *testing.T) {
	// EC57-style matching as restated in methods 1.6 (from memory): within
	// 150 ms, nearest first, each beat used once. Hand-derived expectations.
	ref := []float64{1.0, 2.0, 3.0, 4.0}
	test := []float64{1.14, 1.02, 2.16, 2.9, 3.05, 5.0}
	s, err := ecg.MatchBeats(ref, test, 0)
	if err != nil {
		t.Fatal(err)
	}
	// 1.0 takes 1.02 (nearer than 1.14); 2.0 has nothing within 150 ms
	// (2.16); 3.0 takes 3.05 (nearer than 2.9); 4.0 unmatched.
	if s.TP != 2 || s.FN != 2 || s.FP != 4 {
		t.Fatalf("TP %d FN %d FP %d, want 2 2 4", s.TP, s.FN, s.FP)
	}
	if s.Pairs[0] != [2]int{0, 1} || s.Pairs[1] != [2]int{2, 4} {
		t.Errorf("pairs %v", s.Pairs)
	}
	if se, pp := s.Sensitivity(), s.PositivePredictivity(); se != 0.5 || math.Abs(pp-2.0/6) > 1e-12 {
		t.Errorf("Se %v +P %v, want 0.5 and 1/3", se, pp)
	}
	// Boundary: exactly 150 ms matches (the window is inclusive).
	s, _ = ecg.MatchBeats([]float64{1}, []float64{1.15 - 1e-12}, 0)
	if s.TP != 1 {
		t.Errorf("150 ms apart: TP %d, want 1", s.TP)
	}
	if _, err := ecg.MatchBeats([]float64{math.NaN()}, nil, 0); !errors.Is(err, ecg.ErrInput) {
		t.Errorf("NaN reference: %v", err)
	}
	if _, err := ecg.MatchBeats(nil, nil, -1); !errors.Is(err, ecg.ErrOptions) {
		t.Errorf("negative tolerance: %v", err)
	}
	if s, _ := ecg.MatchBeats(nil, nil, 0); !math.IsNaN(s.Sensitivity()) || !math.IsNaN(s.PositivePredictivity()) {
		t.Errorf("empty: Se %v +P %v, want NaN", s.Sensitivity(), s.PositivePredictivity())
	}
}

func TestSummarize(t *testing.T) {
	// Gross pools the counts; average weighs records equally (methods 1.6).
	a := ecg.Score{TP: 90, FN: 10, FP: 0}
	b := ecg.Score{TP: 10, FN: 0, FP: 10}
	s := ecg.Summarize([]ecg.Score{a, b})
	if s.TP != 100 || s.FN != 10 || s.FP != 10 {
		t.Fatalf("sums %+v", s)
	}
	if math.Abs(s.GrossSe-100.0/110) > 1e-12 || math.Abs(s.AverageSe-0.95) > 1e-12 {
		t.Errorf("Se gross %v average %v, want 100/110 and (0.9+1)/2", s.GrossSe, s.AverageSe)
	}
	if math.Abs(s.GrossPP-100.0/110) > 1e-12 || math.Abs(s.AveragePP-0.75) > 1e-12 {
		t.Errorf("+P gross %v average %v, want 100/110 and (1+0.5)/2", s.GrossPP, s.AveragePP)
	}
}
