//go:build libxc

package libxcref

import "testing"

func TestProbeMix(t *testing.T) {
	rho := []float64{0, 749, 309, 0, 0.5, 0.3}
	sig := []float64{0, 0, 1e3, 5e4, 0, 0, 0.1, 0.02, 0.3}
	ev := func(id int) ([]float64, []float64, []float64) {
		f, _ := New(id, true)
		defer f.Close()
		return f.Eval(3, rho, sig)
	}
	z, v, s := ev(406)
	z1, v1, s1 := ev(101)
	z2, v2, s2 := ev(130)
	for i := 0; i < 3; i++ {
		t.Logf("pt %d zk %g vs %g", i, z[i], 0.75*z1[i]+z2[i])
		t.Logf("   vrho %g %g vs %g %g", v[2*i], v[2*i+1], 0.75*v1[2*i]+v2[2*i], 0.75*v1[2*i+1]+v2[2*i+1])
		t.Logf("   vsig %g %g %g vs %g %g %g", s[3*i], s[3*i+1], s[3*i+2], 0.75*s1[3*i]+s2[3*i], 0.75*s1[3*i+1]+s2[3*i+1], 0.75*s1[3*i+2]+s2[3*i+2])
		t.Logf("   x: vrho %g %g  c: vrho %g %g", v1[2*i], v1[2*i+1], v2[2*i], v2[2*i+1])
	}
}
