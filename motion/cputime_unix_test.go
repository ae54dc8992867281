//go:build unix

package motion_test

import "syscall"

// processCPU returns the user+system CPU seconds used by the process so far,
// so benchmarks can report CPU time next to wall time on a shared machine.
func processCPU() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
}
