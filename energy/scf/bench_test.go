package scf

import (
	"context"
	"fmt"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// benchmarkEnergy times a whole SCF energy, integrals and guess included.
func benchmarkEnergy(b *testing.B, file, basisName string) {
	m, err := molecule.ReadXYZFile("../../testdata/molecules/" + file)
	if err != nil {
		b.Fatal(err)
	}
	if err := m.SetSpin(0, 0); err != nil {
		b.Fatal(err)
	}
	set, err := basis.Load(basisName)
	if err != nil {
		b.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		b.Fatal(err)
	}
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			var iters int
			for i := 0; i < b.N; i++ {
				res, err := Run(context.Background(), m, sh, Options{Threads: threads})
				if err != nil {
					b.Fatal(err)
				}
				iters = res.Iterations
			}
			b.ReportMetric(float64(iters), "iterations")
		})
	}
}

func BenchmarkHFWater631Gs(b *testing.B)   { benchmarkEnergy(b, "water.xyz", "6-31g*") }
func BenchmarkHFBenzene631Gs(b *testing.B) { benchmarkEnergy(b, "benzene.xyz", "6-31g*") }
