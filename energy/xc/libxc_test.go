//go:build libxc

package xc

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/xc/libxcref"
)

// Reference: libxc 5.2 (Debian libxc-dev), called through libxcref.

// single returns our functional equivalent to a libxc ID.
func single(id int) *Functional {
	switch id {
	case 1:
		return newFunctional("LDA_X", 0, slaterTerm(1))
	case 7:
		return newFunctional("LDA_C_VWN", 0, vwnTerm(1, vwn5()))
	case 8:
		return newFunctional("LDA_C_VWN_RPA", 0, vwnTerm(1, vwnRPA()))
	case 12:
		return newFunctional("LDA_C_PW", 0, pwTerm(1, pwOriginal()))
	case 13:
		return newFunctional("LDA_C_PW_MOD", 0, pwTerm(1, pwModified()))
	case 106:
		return newFunctional("GGA_X_B88", 0, b88Term(1))
	case 131:
		return newFunctional("GGA_C_LYP", 0, lypTerm(1))
	case 101:
		return newFunctional("GGA_X_PBE", 0, pbexTerm(1))
	case 130:
		return newFunctional("GGA_C_PBE", 0, pbecTerm(1))
	}
	name := map[int]string{402: "b3lyp", 475: "b3lyp5", 406: "pbe0"}[id]
	f, err := Lookup(name)
	if err != nil {
		panic(err)
	}
	return f
}

// refSet is a batch of points and libxc's results on them.
type pointSet struct {
	n                  int
	rho, sigma         []float64 // unpolarized
	ra, rb, saa, sab, sbb []float64 // polarized
}

// sigmaOf returns |∇ρ|² for density r and reduced gradient s = |∇ρ|/(2(3π²)^(1/3)ρ^(4/3)).
func sigmaOf(r, s float64) float64 {
	g := 2 * math.Cbrt(3*math.Pi*math.Pi) * math.Pow(r, 4.0/3.0) * s
	return g * g
}

func makePoints(seed uint64, count int) pointSet {
	rng := rand.New(rand.NewPCG(seed, 7))
	var p pointSet
	for i := 0; i < count; i++ {
		r := math.Pow(10, -8+11*rng.Float64())
		s := 10 * rng.Float64()
		if i%25 == 0 {
			s = 0
		}
		p.rho = append(p.rho, r)
		p.sigma = append(p.sigma, sigmaOf(r, s))

		n := math.Pow(10, -8+11*rng.Float64())
		zeta := 2*rng.Float64() - 1
		switch i % 20 {
		case 0:
			zeta = 1
		case 1:
			zeta = -1
		case 2:
			zeta = 0
		case 3:
			zeta = 1 - 1e-9
		}
		ra, rb := n*(1+zeta)/2, n*(1-zeta)/2
		if zeta == 1 {
			rb = 0
		} else if zeta == -1 {
			ra = 0
		}
		ga := math.Sqrt(sigmaOf(ra, 10*rng.Float64()))
		gb := math.Sqrt(sigmaOf(rb, 10*rng.Float64()))
		if i%25 == 5 {
			ga, gb = 0, 0
		}
		cosT := 2*rng.Float64() - 1
		p.ra = append(p.ra, ra)
		p.rb = append(p.rb, rb)
		p.saa = append(p.saa, ga*ga)
		p.sbb = append(p.sbb, gb*gb)
		p.sab = append(p.sab, ga*gb*cosT)
	}
	p.n = count
	return p
}

func TestProbeLibxc(t *testing.T) {
	p := makePoints(1, 400)
	for _, id := range []int{1, 7, 8, 12, 13, 106, 131, 101, 130, 402, 475, 406} {
		f := single(id)
		// unpolarized
		ref, err := libxcref.New(id, false)
		if err != nil {
			t.Fatal(err)
		}
		zk, vr, vs := ref.Eval(p.n, p.rho, p.sigma)
		ref.Close()
		exc := make([]float64, p.n)
		vrho := make([]float64, p.n)
		vsig := make([]float64, p.n)
		f.EvalUnpolarized(p.n, p.rho, p.sigma, exc, vrho, vsig)
		worst := [3]float64{}
		wi := [3]int{}
		for i := 0; i < p.n; i++ {
			upd := func(k int, a, b float64) {
				d := math.Abs(a-b) / math.Max(math.Abs(b), 1e-300)
				if d > worst[k] {
					worst[k], wi[k] = d, i
				}
			}
			upd(0, exc[i], zk[i]*p.rho[i])
			upd(1, vrho[i], vr[i])
			if f.IsGGA() {
				upd(2, vsig[i], vs[i])
			}
		}
		t.Logf("%d unpol worst rel e %.2e (rho %.3g) vrho %.2e (rho %.3g) vsigma %.2e (rho %.3g)", id,
			worst[0], p.rho[wi[0]], worst[1], p.rho[wi[1]], worst[2], p.rho[wi[2]])

		// polarized
		ref, err = libxcref.New(id, true)
		if err != nil {
			t.Fatal(err)
		}
		rho := make([]float64, 2*p.n)
		sig := make([]float64, 3*p.n)
		for i := 0; i < p.n; i++ {
			rho[2*i], rho[2*i+1] = p.ra[i], p.rb[i]
			sig[3*i], sig[3*i+1], sig[3*i+2] = p.saa[i], p.sab[i], p.sbb[i]
		}
		zk, vr, vs = ref.Eval(p.n, rho, sig)
		ref.Close()
		va := make([]float64, p.n)
		vb := make([]float64, p.n)
		vaa := make([]float64, p.n)
		vab := make([]float64, p.n)
		vbb := make([]float64, p.n)
		f.EvalPolarized(p.n, p.ra, p.rb, p.saa, p.sab, p.sbb, exc, va, vb, vaa, vab, vbb)
		w := map[string]float64{}
		wp := map[string]string{}
		nfail := 0
		for i := 0; i < p.n; i++ {
			upd := func(k string, a, b float64) {
				d := math.Abs(a-b) / math.Max(math.Abs(b), 1e-300)
				if a == b {
					d = 0
				}
				if d > 1e-10 && nfail < 40 {
					nfail++
					t.Logf("FAIL %d %s at (%.3g,%.3g | %.3g %.3g %.3g): %.6g vs %.6g", id, k, p.ra[i], p.rb[i], p.saa[i], p.sab[i], p.sbb[i], a, b)
				}
				if d > w[k] {
					w[k] = d
					wp[k] = fmt.Sprintf("(%.3g,%.3g; %.3g vs %.3g)", p.ra[i], p.rb[i], a, b)
				}
			}
			upd("e", exc[i], zk[i]*(p.ra[i]+p.rb[i]))
			upd("va", va[i], vr[2*i])
			upd("vb", vb[i], vr[2*i+1])
			if f.IsGGA() {
				upd("vaa", vaa[i], vs[3*i])
				upd("vab", vab[i], vs[3*i+1])
				upd("vbb", vbb[i], vs[3*i+2])
			}
		}
		for _, k := range []string{"e", "va", "vb", "vaa", "vab", "vbb"} {
			if w[k] > 1e-12 {
				t.Logf("%d pol %s worst %.2e at %s", id, k, w[k], wp[k])
			}
		}
	}
}
