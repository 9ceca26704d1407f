package integral

import (
	"math/rand/v2"
	"runtime"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// threeBenchBases returns the orbital (6-31G*) and auxiliary
// (def2-universal-JKFIT) shells of a test molecule.
func threeBenchBases(b *testing.B, file string) (*Basis, *Basis) {
	b.Helper()
	mol, err := molecule.ReadXYZFile(file)
	if err != nil {
		b.Fatal(err)
	}
	var out [2]*Basis
	for i, name := range []string{"6-31g*", "def2-universal-jkfit"} {
		set, err := basis.Load(name)
		if err != nil {
			b.Fatal(err)
		}
		shells, err := set.Shells(mol, basis.Default)
		if err != nil {
			b.Fatal(err)
		}
		out[i] = NewBasis(shells)
	}
	return out[0], out[1]
}

// BenchmarkThreeCentre measures, on benzene (and aspirin) with 6-31G* and
// def2-universal-JKFIT: every block (ab|P) over orbital shell pairs a ≥ b
// whose Schwarz product with the largest auxiliary factor exceeds 1e-12
// (serial, one workspace), the metric, and Gradient with GOMAXPROCS threads.
func BenchmarkThreeCentre(b *testing.B) {
	for _, m := range []struct{ name, file string }{
		{"benzene", "../../testdata/molecules/benzene.xyz"},
		{"aspirin", "../../testdata/molecules/aspirin.xyz"},
	} {
		ob, ab := threeBenchBases(b, m.file)
		tc := NewThreeCentre(ob, ab)
		e := NewERI(ob)
		var qmax float64
		for p := 0; p < tc.NumAuxShells(); p++ {
			qmax = max(qmax, tc.AuxSchwarz(p))
		}
		b.Run(m.name+"/blocks", func(b *testing.B) {
			w := tc.NewWorkspace()
			var sum float64
			for b.Loop() {
				for a := 0; a < tc.NumOrbitalShells(); a++ {
					for c := 0; c <= a; c++ {
						if e.Schwarz(a, c)*qmax < 1e-12 {
							continue
						}
						for p := 0; p < tc.NumAuxShells(); p++ {
							sum += tc.Block(w, a, c, p)[0]
						}
					}
				}
			}
			_ = sum
		})
		b.Run(m.name+"/metric", func(b *testing.B) {
			for b.Loop() {
				_ = tc.TwoCentre(0)
			}
		})
		rng := rand.New(rand.NewPCG(1, 2))
		G := threePackedRandom(rng, ab.NBF, ob.NBF)
		b.Run(m.name+"/gradient", func(b *testing.B) {
			for b.Loop() {
				_ = tc.Gradient(G, 0, runtime.GOMAXPROCS(0))
			}
		})
	}
}
