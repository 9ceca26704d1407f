package xc

import (
	"fmt"
	"math"
	"testing"
)

// relErr is |a−b|/|b|, or |a−b| when b = 0.
func relErr(a, b float64) float64 {
	if b == 0 {
		return math.Abs(a)
	}
	return math.Abs(a-b) / math.Abs(b)
}

var limitDensities = []float64{1e-8, 1e-6, 1e-4, 1e-2, 0.1, 1, 10, 1e3}

// TestUniformGasLimits: for a uniform density (σ = 0) B88 and PBE exchange
// reduce to Slater exchange (F(0) = 1, Becke 1988 eq. (8); PBE eq. (14)),
// and PBE correlation to PW92 with the modified constants (H(t=0) = 0,
// PBE eq. (7)). Closed and open shell, to 1e-12.
func TestUniformGasLimits(t *testing.T) {
	cases := []struct {
		name      string
		gga, ref  *Functional
		densScale float64
	}{
		{"B88 → Slater", newFunctional("b88", 0, b88Term(1)), newFunctional("x", 0, slaterTerm(1)), 1},
		{"PBE X → Slater", newFunctional("pbex", 0, pbexTerm(1)), newFunctional("x", 0, slaterTerm(1)), 1},
		{"PBE C → PW92 mod", newFunctional("pbec", 0, pbecTerm(1)), newFunctional("c", 0, pwTerm(1, pwModified())), 1},
	}
	for _, c := range cases {
		n := len(limitDensities)
		zero := make([]float64, n)
		e1, v1, s1 := make([]float64, n), make([]float64, n), make([]float64, n)
		e2, v2 := make([]float64, n), make([]float64, n)
		c.gga.EvalUnpolarized(n, limitDensities, zero, e1, v1, s1)
		c.ref.EvalUnpolarized(n, limitDensities, nil, e2, v2, nil)
		for i := range limitDensities {
			if relErr(e1[i], e2[i]) > 1e-12 || relErr(v1[i], v2[i]) > 1e-12 {
				t.Errorf("%s closed shell ρ=%g: e %.17g vs %.17g, v %.17g vs %.17g", c.name, limitDensities[i], e1[i], e2[i], v1[i], v2[i])
			}
		}
		// Open shell, ζ = 0.4.
		ra, rb := make([]float64, n), make([]float64, n)
		for i, r := range limitDensities {
			ra[i], rb[i] = 0.7*r, 0.3*r
		}
		var g, h [6][]float64
		for k := range g {
			g[k], h[k] = make([]float64, n), make([]float64, n)
		}
		c.gga.EvalPolarized(n, ra, rb, zero, zero, zero, g[0], g[1], g[2], g[3], g[4], g[5])
		c.ref.EvalPolarized(n, ra, rb, nil, nil, nil, h[0], h[1], h[2], nil, nil, nil)
		for i := range limitDensities {
			for k := 0; k < 3; k++ {
				if relErr(g[k][i], h[k][i]) > 1e-12 {
					t.Errorf("%s open shell ρ=%g output %d: %.17g vs %.17g", c.name, limitDensities[i], k, g[k][i], h[k][i])
				}
			}
		}
	}
}

// gradPoints returns closed-shell test points away from thresholds.
func gradPoints() (rho, sigma []float64) {
	for _, r := range []float64{1e-5, 1e-3, 0.05, 0.7, 3, 80} {
		for _, s := range []float64{0.01, 0.3, 1, 2.5, 7} {
			g := 2 * math.Cbrt(3*math.Pi*math.Pi) * math.Pow(r, 4.0/3.0) * s
			rho = append(rho, r)
			sigma = append(sigma, g*g)
		}
	}
	return rho, sigma
}

// termScale returns, per point, Σ over the functional's components of
// |e|, |vrho| and |vsigma| (closed shell): the scale against which the
// round-off of a sum with cancellation (PBE's gradient terms at small s)
// is judged.
func termScale(f *Functional, rho, sigma []float64) (se, sv, ss []float64) {
	n := len(rho)
	se, sv, ss = make([]float64, n), make([]float64, n), make([]float64, n)
	e, v, s := make([]float64, n), make([]float64, n), make([]float64, n)
	for _, tm := range f.terms {
		g := newFunctional("term", 0, tm)
		g.EvalUnpolarized(n, rho, sigma, e, v, s)
		for i := range rho {
			se[i] += math.Abs(e[i])
			sv[i] += math.Abs(v[i])
			ss[i] += math.Abs(s[i])
		}
	}
	return se, sv, ss
}

// TestSpinConsistency: the polarized evaluation of a closed-shell density
// (ρα = ρβ = ρ/2, σαα = σαβ = σββ = σ/4) equals the unpolarized one, with
// vrho = (vρα+vρβ)/2 and vsigma = (vσαα+vσαβ+vσββ)/4 (chain rule; common
// practice as a consistency check), to 1e-12 of the sum of the components'
// magnitudes.
func TestSpinConsistency(t *testing.T) {
	rho, sigma := gradPoints()
	n := len(rho)
	for _, m := range Names() {
		f, _ := Lookup(m)
		e, v, s := make([]float64, n), make([]float64, n), make([]float64, n)
		f.EvalUnpolarized(n, rho, sigma, e, v, s)
		ra, sa := make([]float64, n), make([]float64, n)
		for i := range rho {
			ra[i], sa[i] = rho[i]/2, sigma[i]/4
		}
		var g [6][]float64
		for k := range g {
			g[k] = make([]float64, n)
		}
		f.EvalPolarized(n, ra, ra, sa, sa, sa, g[0], g[1], g[2], g[3], g[4], g[5])
		se, sv, ss := termScale(f, rho, sigma)
		for i := range rho {
			checks := []struct {
				what             string
				got, want, scale float64
			}{
				{"e", g[0][i], e[i], se[i]},
				{"vrhoA", g[1][i], v[i], sv[i]},
				{"vrhoB", g[2][i], v[i], sv[i]},
				{"vsigma", (g[3][i] + g[4][i] + g[5][i]) / 4, s[i], ss[i]},
			}
			for _, c := range checks {
				if math.Abs(c.got-c.want) > 1e-12*c.scale {
					t.Errorf("%s ρ=%g σ=%g %s: polarized %.17g, unpolarized %.17g", m, rho[i], sigma[i], c.what, c.got, c.want)
				}
			}
		}
	}
}

// TestFiniteDifferences checks every derivative output against central
// differences of the energy density with relative step h = 1e-4: agreement
// to 1e-6 of the largest derivative of its kind at the point, plus the
// round-off bound of the difference quotient, 1e3·ε_mach·|e|/(h·x)
// (common practice).
func TestFiniteDifferences(t *testing.T) {
	rho, sigma := gradPoints()
	type comp struct {
		name string
		f    *Functional
	}
	var comps []comp
	for _, m := range Names() {
		f, _ := Lookup(m)
		comps = append(comps, comp{m, f})
	}
	comps = append(comps, comp{"pw92", newFunctional("pw", 0, pwTerm(1, pwOriginal()))},
		comp{"vwn-rpa", newFunctional("vwn", 0, vwnTerm(1, vwnRPA()))})
	const h = 1e-4
	fdNoise := func(e, x float64) float64 { return 1e3 * 2.2e-16 * math.Abs(e) / (h * math.Abs(x)) }
	for _, c := range comps {
		f := c.f
		// Closed shell.
		one := func(r, s float64) (e, v, vs float64) {
			E, V, S := []float64{0}, []float64{0}, []float64{0}
			f.EvalUnpolarized(1, []float64{r}, []float64{s}, E, V, S)
			return E[0], V[0], S[0]
		}
		for i := range rho {
			e0, v, vs := one(rho[i], sigma[i])
			ep, _, _ := one(rho[i]*(1+h), sigma[i])
			em, _, _ := one(rho[i]*(1-h), sigma[i])
			fd := (ep - em) / (2 * h * rho[i])
			if math.Abs(fd-v) > 1e-6*math.Abs(v)+fdNoise(e0, rho[i]) {
				t.Errorf("%s closed ρ=%g σ=%g: vrho %.12g, finite difference %.12g", c.name, rho[i], sigma[i], v, fd)
			}
			if f.IsGGA() {
				ep, _, _ = one(rho[i], sigma[i]*(1+h))
				em, _, _ = one(rho[i], sigma[i]*(1-h))
				fd = (ep - em) / (2 * h * sigma[i])
				if math.Abs(fd-vs) > 1e-6*math.Abs(vs)+fdNoise(e0, sigma[i]) {
					t.Errorf("%s closed ρ=%g σ=%g: vsigma %.12g, finite difference %.12g", c.name, rho[i], sigma[i], vs, fd)
				}
			}
		}
		// Open shell: ζ = 0.5 and 0.95, spin gradients at an angle.
		pol := func(x [5]float64) [6]float64 {
			var out [6]float64
			o := make([][]float64, 6)
			for k := range o {
				o[k] = []float64{0}
			}
			f.EvalPolarized(1, x[0:1], x[1:2], x[2:3], x[3:4], x[4:5], o[0], o[1], o[2], o[3], o[4], o[5])
			for k := range out {
				out[k] = o[k][0]
			}
			return out
		}
		for i := range rho {
			for _, zeta := range []float64{0.5, 0.95} {
				ra, rb := rho[i]*(1+zeta)/2, rho[i]*(1-zeta)/2
				saa := sigma[i] * (1 + zeta) * (1 + zeta) / 4
				sbb := sigma[i] * (1 - zeta) * (1 - zeta) / 4
				sab := 0.3 * math.Sqrt(saa*sbb)
				x := [5]float64{ra, rb, saa, sab, sbb}
				out := pol(x)
				nk := 2
				if f.IsGGA() {
					nk = 5
				}
				for k := 0; k < nk; k++ {
					d := h * x[k]
					xp, xm := x, x
					xp[k] += d
					xm[k] -= d
					fd := (pol(xp)[0] - pol(xm)[0]) / (2 * d)
					scale := math.Max(math.Abs(out[1+k]), math.Abs(out[1+(k+1)%2]))
					if k >= 2 {
						scale = math.Max(math.Abs(out[3]), math.Max(math.Abs(out[4]), math.Abs(out[5])))
					}
					if math.Abs(fd-out[1+k]) > 1e-6*scale+fdNoise(out[0], x[k]) {
						t.Errorf("%s open ρ=%g ζ=%g: derivative %d = %.12g, finite difference %.12g",
							c.name, rho[i], zeta, k, out[1+k], fd)
					}
				}
			}
		}
	}
}

// TestBelowThreshold: a component gives exactly zero below its density
// threshold, as libxc 5.2 does (thresholds in doc.go; confirmed against
// libxc by TestLibxcThresholds under the libxc build tag).
func TestBelowThreshold(t *testing.T) {
	cases := []struct {
		f   *Functional
		thr float64
	}{
		{newFunctional("x", 0, slaterTerm(1)), 2 * densThresholdDefault}, // channel ρ/2
		{newFunctional("c", 0, vwnTerm(1, vwn5())), densThresholdDefault},
		{newFunctional("c", 0, pwTerm(1, pwModified())), densThresholdDefault},
		{newFunctional("x", 0, b88Term(1)), 2 * densThresholdDefault},
		{newFunctional("x", 0, pbexTerm(1)), 2 * densThresholdDefault},
		{newFunctional("c", 0, lypTerm(1)), densThresholdLYP},
		{newFunctional("c", 0, pbecTerm(1)), densThresholdPBEC},
	}
	for i, c := range cases {
		t.Run(fmt.Sprint(i), func(t *testing.T) {
			rho := []float64{0, 0.3 * c.thr, 0.999 * c.thr, 1.01 * c.thr}
			sigma := []float64{0, 1e-40, 1e-40, 1e-40}
			e, v, s := make([]float64, 4), make([]float64, 4), make([]float64, 4)
			c.f.EvalUnpolarized(4, rho, sigma, e, v, s)
			for k := 0; k < 3; k++ {
				if e[k] != 0 || v[k] != 0 || s[k] != 0 {
					t.Errorf("ρ=%g below threshold %g: e %g v %g vsigma %g", rho[k], c.thr, e[k], v[k], s[k])
				}
			}
			if e[3] == 0 || v[3] == 0 {
				t.Errorf("ρ=%g above threshold %g: zero output", rho[3], c.thr)
			}
		})
	}
}

func TestShortSlicesPanic(t *testing.T) {
	f, _ := Lookup("b3lyp")
	defer func() {
		if recover() == nil {
			t.Error("short sigma slice did not panic")
		}
	}()
	x := make([]float64, 4)
	f.EvalUnpolarized(4, x, x[:2], x, x, x)
}
