//go:build unix

package integral

import (
	"syscall"
	"time"
)

// derivCPUTime returns the CPU time (user + system) used so far by the
// whole process, or 0 where it cannot be read. Benchmarks report it
// besides wall time because the development machines are shared.
func derivCPUTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
