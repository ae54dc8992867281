//go:build !unix

package motion_test

import "math"

// processCPU is not available here; benchmarks report NaN CPU time.
func processCPU() float64 { return math.NaN() }
