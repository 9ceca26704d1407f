//go:build libxc

package xc

import (
	"math"
	"testing"

	"poise/energy/xc/libxcref"
)

func TestDbgFreeze(t *testing.T) {
	f, _ := libxcref.New(106, true)
	defer f.Close()
	prev := false
	for k := 0; k < 40000; k++ {
		n := 1 + 40*float64(k)/40000
		rho := []float64{0, n}
		sig := []float64{0, 0, 1}
		_, v, _ := f.Eval(1, rho, sig)
		frozen := math.Abs(v[0]) > 1e-3
		if frozen != prev || k%4000 == 0 {
			ra, rb := 1e-15, n
			nn := ra + rb
			t.Logf("n=%.6f frozen=%v va=%.4g  1+z(div)=%.3g 1+z(recip)=%.3g ra/n=%.3g", n, frozen, v[0], 1+(ra-rb)/nn, 1+(ra-rb)*(1/nn), ra/nn)
		}
		prev = frozen
	}
}
