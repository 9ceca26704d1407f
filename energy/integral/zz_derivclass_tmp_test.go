package integral

import (
	"math/rand/v2"
	"runtime"
	"syscall"
	"testing"
	"time"

	"poise/energy/basis"
)

func zzDerivThreadCPU() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(1, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func TestTmpDerivClassCost(t *testing.T) {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	rng := rand.New(rand.NewPCG(1, 2))
	for _, ls := range [][4]int{{0, 0, 0, 0}, {1, 0, 0, 0}, {1, 0, 1, 0}, {1, 1, 0, 0}, {1, 1, 1, 0}, {1, 1, 1, 1}, {2, 0, 0, 0}, {2, 1, 1, 0}, {2, 2, 2, 2}} {
		var shells []basis.Shell
		for x := 0; x < 4; x++ {
			s := eriRandomShell(rng, ls[x], false)
			s.Exponents = []float64{3, 1, 0.3}
			s.Coefficients = []float64{0.3, 0.5, 0.4}
			shells = append(shells, s)
		}
		b := NewBasis(shells)
		e := NewERI(b)
		d := newERIDeriv(e)
		dw := d.newWork()
		w := e.NewWorkspace()
		bra, ket := d.pair(0, 1), d.pair(2, 3)
		n := 20000
		t0 := zzDerivThreadCPU()
		for r := 0; r < n; r++ {
			e.Quartet(w, 0, 1, 2, 3)
		}
		t1 := zzDerivThreadCPU()
		for r := 0; r < n; r++ {
			d.cartesianDeriv(dw, bra, ket)
		}
		t2 := zzDerivThreadCPU()
		t.Logf("%v: energy %v deriv %v ratio %.1f", ls, (t1-t0)/time.Duration(n), (t2-t1)/time.Duration(n), float64((t2-t1))/float64((t1-t0)))
	}
}
