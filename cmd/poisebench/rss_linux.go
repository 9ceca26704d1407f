//go:build linux

package main

import (
	"os"
	"syscall"
)

// peakRSS is the peak resident memory of a finished process, in bytes
// (Linux reports ru_maxrss in KiB); 0 when unknown.
func peakRSS(ps *os.ProcessState) int64 {
	if ps == nil {
		return 0
	}
	if ru, ok := ps.SysUsage().(*syscall.Rusage); ok {
		return ru.Maxrss * 1024
	}
	return 0
}

// processCPUSeconds is the user plus system CPU time of this process so
// far; 0 when unknown.
func processCPUSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)*1e-6
}
