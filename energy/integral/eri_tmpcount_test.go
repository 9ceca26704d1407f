//go:build eritmp

package integral

import (
	"poise/energy/basis"
	"poise/energy/molecule"
	"runtime"
	"sort"
	"syscall"
	"testing"
	"time"
)

func threadCPU() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(1, &ru) // RUSAGE_THREAD
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func TestTmpCPU(t *testing.T) {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	e := NewERI(NewBasis(eriBenzeneShells(t)))
	w := e.NewWorkspace()
	var ds []float64
	var sum float64
	for r := 0; r < 9; r++ {
		c0 := threadCPU()
		_, sum = eriAllUnique(e, w)
		ds = append(ds, (threadCPU() - c0).Seconds())
	}
	sort.Float64s(ds)
	t.Logf("cpu min %.3f median %.3f checksum %.12f", ds[0], ds[4], sum)
}

func TestTmpOnce(t *testing.T) {
	e := NewERI(NewBasis(eriBenzeneShells(t)))
	w := e.NewWorkspace()
	_, sum := eriAllUnique(e, w)
	t.Logf("checksum %.12f", sum)
}

func BenchmarkTmpWaterQZ(b *testing.B) {
	mol, _ := molecule.ReadXYZFile("../../testdata/molecules/water.xyz")
	set, _ := basis.Load("cc-pVQZ")
	shells, _ := set.Shells(mol, basis.Default)
	e := NewERI(NewBasis(shells))
	w := e.NewWorkspace()
	for b.Loop() {
		eriAllUnique(e, w)
	}
}
