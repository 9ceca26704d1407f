package gradient

import (
	"context"
	"testing"
	"time"

	"poise/energy/basis"
	"poise/energy/dft"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/xc"
)

func TestXCProf(t *testing.T) {
	m, _ := molecule.ReadXYZFile("../testdata/molecules/benzene.xyz")
	m.SetSpin(0, 0)
	set, _ := basis.Load("6-31g*")
	sh, _ := set.Shells(m, basis.Default)
	fn, _ := xc.Lookup("b3lyp")
	z, pos := atomsOf(m)
	frame, _ := grid.StandardFrame(z, pos)
	g, _ := grid.New(z, pos, 3, frame, 2)
	pot := dft.New(fn, g, integral.NewBasis(sh), 2)
	res, err := scf.Run(context.Background(), m, sh, scf.Options{XC: pot, Threads: 2})
	if err != nil { t.Fatal(err) }
	v := [][]float64{make([]float64, res.NBF*res.NBF)}
	t0 := time.Now()
	pot.Build(context.Background(), res.Density, v)
	t1 := time.Now()
	pot.Gradient(context.Background(), res.Density, 12)
	t2 := time.Now()
	t.Logf("points %d, iterations %d, scf %v, build %v, gradient %v", g.NumPoints(), res.Iterations, res.Wall, t1.Sub(t0), t2.Sub(t1))
}
