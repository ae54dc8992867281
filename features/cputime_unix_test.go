//go:build unix

package features

import "syscall"

// cpuSeconds returns the process's user+system CPU time, for benchmarks
// that report CPU cost beside wall time (the machine may be shared).
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	tv := func(t syscall.Timeval) float64 { return float64(t.Sec) + float64(t.Usec)/1e6 }
	return tv(ru.Utime) + tv(ru.Stime)
}
