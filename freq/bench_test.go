package freq

import (
	"context"
	"fmt"
	"testing"

	"poise/energy/molecule"
	"poise/gradient"
)

// coldStart is a surface whose every evaluation starts from the default
// guess instead of the reference density (for the warm-start comparison;
// evaluations must not overlap).
type coldStart struct{ s *gradient.SCFSurface }

func (c coldStart) NumAtoms() int    { return c.s.NumAtoms() }
func (c coldStart) Evaluations() int { return c.s.Evaluations() }
func (c coldStart) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	if err := c.s.SetWarmStart(nil); err != nil {
		return err
	}
	return c.s.Evaluate(ctx, x, req, out)
}

// benchHessian measures one Hessian with dipole derivatives and reports
// the gradients per Hessian and the mean SCF iterations per displaced
// point.
func benchHessian(b *testing.B, m *molecule.Molecule, method, basisName string, threads int, warm bool) {
	s := scfSurface(b, m, method, basisName, threads)
	x := gradient.Coordinates(m)
	var surf gradient.Surface = s
	concurrent := 0
	if !warm {
		surf, concurrent = coldStart{s}, 1
	}
	b.ResetTimer()
	var h *Hessian
	for i := 0; i < b.N; i++ {
		var err error
		h, err = ComputeHessian(context.Background(), surf, x, HessianOptions{Threads: threads, Concurrent: concurrent, Dipole: true})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	sum := 0
	for _, it := range h.SCFIterations {
		sum += it
	}
	b.ReportMetric(float64(h.Evaluations), "gradients/Hessian")
	b.ReportMetric(float64(sum)/float64(len(h.SCFIterations)), "SCF-iterations/point")
	b.ReportMetric(float64(h.ReferenceSCFIterations), "SCF-iterations/reference")
}

// BenchmarkHessianWater: water at B3LYP/6-31G*, 1 and 2 threads, every
// displaced point warm-started from the reference density or not.
func BenchmarkHessianWater(b *testing.B) {
	m := buildMolecule(b, waterStart)
	for _, c := range []struct {
		threads int
		warm    bool
	}{{1, true}, {2, true}, {1, false}} {
		name := fmt.Sprintf("threads=%d/warm=%v", c.threads, c.warm)
		b.Run(name, func(b *testing.B) { benchHessian(b, m, "b3lyp", "6-31G*", c.threads, c.warm) })
	}
}

// BenchmarkHessianBenzene: benzene at B3LYP/6-31G* (72 displaced points;
// long: run with -benchtime 1x).
func BenchmarkHessianBenzene(b *testing.B) {
	mol, err := molecule.ReadXYZFile("../testdata/molecules/benzene.xyz")
	if err != nil {
		b.Fatal(err)
	}
	if err := mol.SetSpin(0, 0); err != nil {
		b.Fatal(err)
	}
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) { benchHessian(b, mol, "b3lyp", "6-31G*", threads, true) })
	}
}
