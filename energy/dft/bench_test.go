package dft

import (
	"context"
	"fmt"
	"testing"
	"time"

	"poise/energy/basis"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/xc"
)

// timedXC wraps a Potential to measure the time spent in the
// exchange–correlation build.
type timedXC struct {
	*Potential
	spent time.Duration
}

func (t *timedXC) Build(ctx context.Context, dens [][]float64, v [][]float64) (float64, float64, error) {
	t0 := time.Now()
	e, n, err := t.Potential.Build(ctx, dens, v)
	t.spent += time.Since(t0)
	return e, n, err
}

// benchmarkB3LYP times a whole B3LYP energy (grid, integrals, guess, SCF)
// and reports the grid size and the share of the time in the
// exchange–correlation build.
func benchmarkB3LYP(b *testing.B, file string) {
	m, err := molecule.ReadXYZFile("../../testdata/molecules/" + file)
	if err != nil {
		b.Fatal(err)
	}
	if err := m.SetSpin(0, 0); err != nil {
		b.Fatal(err)
	}
	set, _ := basis.Load("6-31g*")
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		b.Fatal(err)
	}
	fn, _ := xc.Lookup("b3lyp")
	z := make([]int, len(m.Atoms))
	pos := make([][3]float64, len(m.Atoms))
	for i, a := range m.Atoms {
		z[i], pos[i] = a.Z, a.Position
	}
	frame, _ := grid.StandardFrame(z, pos)
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			var share float64
			var points, iters int
			for i := 0; i < b.N; i++ {
				t0 := time.Now()
				g, err := grid.New(z, pos, grid.DefaultLevel, frame, threads)
				if err != nil {
					b.Fatal(err)
				}
				pot := &timedXC{Potential: New(fn, g, integral.NewBasis(sh), threads)}
				res, err := scf.Run(context.Background(), m, sh, scf.Options{Threads: threads, XC: pot})
				if err != nil {
					b.Fatal(err)
				}
				share = pot.spent.Seconds() / time.Since(t0).Seconds()
				points, iters = g.NumPoints(), res.Iterations
			}
			b.ReportMetric(float64(points), "points")
			b.ReportMetric(float64(iters), "iterations")
			b.ReportMetric(100*share, "%xc")
		})
	}
}

func BenchmarkB3LYPWater631Gs(b *testing.B)   { benchmarkB3LYP(b, "water.xyz") }
func BenchmarkB3LYPBenzene631Gs(b *testing.B) { benchmarkB3LYP(b, "benzene.xyz") }
