package integral

import (
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// eriBenzeneShells returns the 6-31G* shells (Cartesian d, the set's own
// convention) of benzene from testdata/molecules/benzene.xyz.
func eriBenzeneShells(tb testing.TB) []basis.Shell {
	tb.Helper()
	return eriBenzeneShellsIn(tb, "6-31G*")
}

// eriBenzeneShellsIn returns the shells of benzene in the named basis set
// with the set's own convention.
func eriBenzeneShellsIn(tb testing.TB, name string) []basis.Shell {
	tb.Helper()
	mol, err := molecule.ReadXYZFile("../../testdata/molecules/benzene.xyz")
	if err != nil {
		tb.Fatal(err)
	}
	set, err := basis.Load(name)
	if err != nil {
		tb.Fatal(err)
	}
	shells, err := set.Shells(mol, basis.Default)
	if err != nil {
		tb.Fatal(err)
	}
	return shells
}

// eriAllUnique evaluates every unique shell quartet (i ≥ j, k ≥ l,
// ij ≥ kl) without screening and returns the number of integrals and
// their sum.
func eriAllUnique(e *ERIEngine, w *ERIWorkspace) (count int, checksum float64) {
	n := e.NumShells()
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			for k := 0; k <= i; k++ {
				lmax := k
				if k == i {
					lmax = j
				}
				for l := 0; l <= lmax; l++ {
					v := e.Quartet(w, i, j, k, l)
					for _, x := range v {
						checksum += x
					}
					count += len(v)
				}
			}
		}
	}
	return count, checksum
}

// BenchmarkERIBenzene631GsPoise times all unique shell quartets of
// benzene/6-31G* on one goroutine.
func BenchmarkERIBenzene631GsPoise(b *testing.B) {
	e := NewERI(NewBasis(eriBenzeneShells(b)))
	w := e.NewWorkspace()
	b.ResetTimer()
	var count int
	for b.Loop() {
		count, _ = eriAllUnique(e, w)
	}
	b.ReportMetric(float64(count), "integrals")
}
