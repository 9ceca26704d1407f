//go:build libint2

package integral

import (
	"runtime"
	"syscall"
	"testing"
	"time"

	"poise/energy/integral/libintref"
)

// eriThreadCPU returns the CPU time used so far by the calling OS thread
// (Linux getrusage with RUSAGE_THREAD = 1).
func eriThreadCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(1, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// BenchmarkERIBenzene631Gs times, in one run and on one thread, all unique
// shell quartets (ij|kl) of benzene/6-31G* (i ≥ j, k ≥ l, ij ≥ kl, no
// screening of quartets) with poise (NewERI included) and with libint2
// (libintref.ERIAllUnique, engine set-up included), alternating which goes
// first. It reports seconds per sweep for each (wall clock and thread CPU
// time) and the ratios poise/libint2.
func BenchmarkERIBenzene631Gs(b *testing.B) { eriBenchVsLibint(b, "6-31G*") }

// BenchmarkERIBenzeneCCPVDZ is the same comparison for cc-pVDZ, with
// spherical d shells and general contractions split into segmented shells.
func BenchmarkERIBenzeneCCPVDZ(b *testing.B) { eriBenchVsLibint(b, "cc-pVDZ") }

func eriBenchVsLibint(b *testing.B, basisName string) {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	shells := eriBenzeneShellsIn(b, basisName)
	ls := make([]libintref.Shell, len(shells))
	for i, s := range shells {
		ls[i] = eriToLibint(s)
	}
	var wallP, wallL, cpuP, cpuL time.Duration
	var sumP, sumL float64
	var cntP, cntL int
	runPoise := func() {
		t0, c0 := time.Now(), eriThreadCPU()
		e := NewERI(NewBasis(shells))
		cntP, sumP = eriAllUnique(e, e.NewWorkspace())
		wallP += time.Since(t0)
		cpuP += eriThreadCPU() - c0
	}
	runLibint := func() {
		t0, c0 := time.Now(), eriThreadCPU()
		cntL, sumL = libintref.ERIAllUnique(ls)
		wallL += time.Since(t0)
		cpuL += eriThreadCPU() - c0
	}
	n := 0
	b.ResetTimer()
	for b.Loop() {
		if n%2 == 0 {
			runPoise()
			runLibint()
		} else {
			runLibint()
			runPoise()
		}
		n++
	}
	if cntP != cntL {
		b.Fatalf("poise computed %d integrals, libint2 %d", cntP, cntL)
	}
	if d := sumP - sumL; d > 1e-9*sumL || d < -1e-9*sumL {
		b.Fatalf("checksums differ: poise %.15g, libint2 %.15g", sumP, sumL)
	}
	f := float64(n)
	b.ReportMetric(wallP.Seconds()/f, "poise-s")
	b.ReportMetric(wallL.Seconds()/f, "libint2-s")
	b.ReportMetric(wallP.Seconds()/wallL.Seconds(), "ratio")
	b.ReportMetric(cpuP.Seconds()/f, "poise-cpu-s")
	b.ReportMetric(cpuL.Seconds()/f, "libint2-cpu-s")
	b.ReportMetric(cpuP.Seconds()/cpuL.Seconds(), "cpu-ratio")
}
