package integral

import (
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
)

func BenchmarkTmpDerivSSSS(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	ls := [4]int{0, 0, 0, 0}
	var shells []basis.Shell
	for x := 0; x < 4; x++ {
		s := eriRandomShell(rng, ls[x], false)
		s.Exponents = []float64{3, 1, 0.3}
		s.Coefficients = []float64{0.3, 0.5, 0.4}
		shells = append(shells, s)
	}
	bs := NewBasis(shells)
	e := NewERI(bs)
	d := newERIDeriv(e)
	dw := d.newWork()
	bra, ket := d.pair(0, 1), d.pair(2, 3)
	for b.Loop() {
		d.cartesianDeriv(dw, bra, ket)
	}
}
