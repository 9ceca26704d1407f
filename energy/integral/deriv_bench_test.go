package integral

import (
	"math/rand/v2"
	"strconv"
	"testing"
	"time"

	"poise/energy/basis"
)

// derivBenzeneBasis returns benzene (testdata) with 6-31G* in the set's own
// convention (Cartesian d).
func derivBenzeneBasis(b *testing.B) *Basis {
	mol := derivLoadMolecule(b, "../../testdata/molecules/benzene.xyz", "")
	return NewBasis(derivShellsFor(b, mol, basis.Default))
}

// derivIntegralPass evaluates every unique shell quartet once (i ≥ j,
// k ≥ l, ij ≥ kl, no screening) on one goroutine and returns the wall and
// process CPU time.
func derivIntegralPass(e *ERIEngine) (wall, cpu time.Duration) {
	w := e.NewWorkspace()
	n := e.NumShells()
	var sink float64
	start, c0 := time.Now(), derivCPUTime()
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			for k := 0; k <= i; k++ {
				lmax := k
				if k == i {
					lmax = j
				}
				for l := 0; l <= lmax; l++ {
					sink += e.Quartet(w, i, j, k, l)[0]
				}
			}
		}
	}
	wall, cpu = time.Since(start), derivCPUTime()-c0
	if sink == 0.123456789 {
		println(sink)
	}
	return wall, cpu
}

// BenchmarkGradientJKBenzene631Gs times GradientJK (restricted, HF
// exchange) for benzene/6-31G* with a random symmetric density on 1 and 2
// goroutines and reports its ratio to one single-threaded pass over all
// unique integrals (the work of an in-core integral build), by wall time
// and, for 1 goroutine, by process CPU time (robust on a shared machine).
func BenchmarkGradientJKBenzene631Gs(b *testing.B) {
	bs := derivBenzeneBasis(b)
	e := NewERI(bs)
	passWall, passCPU := derivIntegralPass(e)
	rng := rand.New(rand.NewPCG(3, 4))
	d := derivRandomSymmetric(rng, bs.NBF, 0.5)
	for _, threads := range []int{1, 2} {
		b.Run("threads="+strconv.Itoa(threads), func(b *testing.B) {
			c0 := derivCPUTime()
			for b.Loop() {
				e.GradientJK([][]float64{d}, 1, 12, threads)
			}
			cpu := (derivCPUTime() - c0).Seconds() / float64(b.N)
			per := b.Elapsed().Seconds() / float64(b.N)
			b.ReportMetric(per/passWall.Seconds(), "x-pass-wall")
			b.ReportMetric(passWall.Seconds()*1e3, "ms-pass-wall")
			if threads == 1 && passCPU > 0 {
				b.ReportMetric(cpu/passCPU.Seconds(), "x-pass-cpu")
				b.ReportMetric(passCPU.Seconds()*1e3, "ms-pass-cpu")
			}
		})
	}
}

// BenchmarkOneElectronGradientsBenzene631Gs times the three one-electron
// gradient contractions together.
func BenchmarkOneElectronGradientsBenzene631Gs(b *testing.B) {
	bs := derivBenzeneBasis(b)
	rng := rand.New(rand.NewPCG(3, 4))
	d := derivRandomSymmetric(rng, bs.NBF, 0.5)
	mol := derivLoadMolecule(b, "../../testdata/molecules/benzene.xyz", "")
	charges := make([]float64, len(mol.Atoms))
	centers := make([][3]float64, len(mol.Atoms))
	for a, at := range mol.Atoms {
		charges[a] = float64(at.Z)
		centers[a] = at.Position
	}
	for b.Loop() {
		bs.OverlapGradient(d, 0)
		bs.KineticGradient(d, 0)
		bs.NuclearGradient(d, charges, centers)
	}
}
