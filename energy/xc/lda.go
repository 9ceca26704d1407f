package xc

import "math"

// Mathematical constants of the local density functionals.
const (
	// rsFactor is (3/(4π))^(1/3): rs = rsFactor·n^(−1/3).
	rsFactor = 0.6203504908994000166680068120477781673508
	// slaterCx is (3/4)(3/π)^(1/3): unpolarized Slater exchange is −Cx ρ^(4/3).
	slaterCx = 0.7385587663820224058842300326808362677823
	// slaterSpin is −(3/8)(3/π)^(1/3): the exchange energy density of spin
	// channel σ is slaterSpin·n^(4/3)(1±ζ)^(4/3) = −(3/4)(6/π)^(1/3) ρσ^(4/3).
	slaterSpin = -0.3692793831910112029421150163404181338912
)

// ---------------------------------------------------------------------------
// Slater (Dirac) exchange.
// P. A. M. Dirac, Proc. Camb. Phil. Soc. 26, 376 (1930); J. C. Slater,
// Phys. Rev. 81, 385 (1951). Spin scaling: E_x[ρα,ρβ] = (E_x[2ρα]+E_x[2ρβ])/2.

// spinScale returns P = n^(4/3)·h(1+ζσ) for one spin channel σ of GGA
// exchange, with h the thresholded (1+ζσ)^(4/3), and its derivatives with
// respect to the channel's own density and the other one. opz = 1+ζσ,
// omz = 1−ζσ, lo reports 1+ζσ at the zeta threshold. When frozen (ζ held
// at ±(1−zetaThreshold), see ggaXPolPoint) ζ does not depend on the
// densities and P depends on n only.
// c is opz^(1/3).
func spinScale(n, n13, opz, c, omz float64, lo, frozen bool) (p, dOwn, dOther float64) {
	h, dh := pow43(opz, c, lo)
	p = n * n13 * h
	if frozen || lo {
		d := 4.0 / 3.0 * n13 * h
		return p, d, d
	}
	// ∂P/∂ρσ = n^(1/3)[(4/3)h + h'(1−ζσ)] and ∂P/∂ρσ' = n^(1/3)[(4/3)h − h'(1+ζσ)];
	// the latter is exactly zero unless h is held at the zeta threshold.
	return p, n13 * (4.0/3.0*h + dh*omz), 0
}

// slaterChannel returns one spin channel's Slater exchange energy density
// and its derivatives with respect to the own and other spin density. In
// libxc's Slater exchange the channel depends on ρσ alone,
// −(3/4)(6/π)^(1/3)ρσ^(4/3), except below the zeta threshold where
// (1+ζσ)^(4/3) is held at zetaThreshold^(4/3): then n^(4/3)·zetaThr43.
// rho13 and n13 are the cube roots of rho and n.
func slaterChannel(rho, rho13, n, n13 float64, lo bool) (e, dOwn, dOther float64) {
	if lo {
		e = slaterSpin * n * n13 * zetaThr43
		d := 4.0 / 3.0 * slaterSpin * n13 * zetaThr43
		return e, d, d
	}
	r2 := 2 * rho
	c := cbrt2 * rho13 // (2ρσ)^(1/3)
	return slaterSpin * r2 * c, 8.0 / 3.0 * slaterSpin * c, 0
}

// cbrt2 is 2^(1/3).
const cbrt2 = 1.259921049894873164767210607278228350570

// rawScale is nRaw/n: outputs e = nRaw·ε where ε is evaluated at the
// clamped density n, matching what one gets from libxc's energy per
// particle times the input density.
func rawScale(nRaw, n float64) float64 {
	if nRaw == n {
		return 1
	}
	return nRaw / n
}

// ---------------------------------------------------------------------------
// Local correlation: shared chain rule.

// ldaCorrPot turns ε(rs, ζ) and its partial derivatives into ∂(nε)/∂ρα and
// ∂(nε)/∂ρβ, using ∂rs/∂n = −rs/(3n), ∂ζ/∂ρα = (1−ζ)/n, ∂ζ/∂ρβ = −(1+ζ)/n.
func ldaCorrPot(rs, opz, omz, eps, dRs, dZ float64) (va, vb float64) {
	common := eps - rs/3*dRs
	return common + omz*dZ, common - opz*dZ
}

// ---------------------------------------------------------------------------
// PW92 correlation.
// J. P. Perdew, Y. Wang, Phys. Rev. B 45, 13244 (1992), eqs. (8)–(10) and
// Table I. The "modified" set (libxc LDA_C_PW_MOD, used inside PBE
// correlation) carries more digits in A and f''(0):
// A = (1−ln2)/π² = 0.0310907, 0.01554535, 0.0168869, f''(0) = 1.70992093…,
// as in the reference implementation accompanying J. P. Perdew, K. Burke,
// M. Ernzerhof, Phys. Rev. Lett. 77, 3865 (1996).

// pwG holds the parameters of one PW92 G(rs) fit (p = 1 throughout).
type pwG struct {
	a, alpha1, beta1, beta2, beta3, beta4 float64
}

// eval returns G(rs) = −2A(1+α1 rs) ln[1 + 1/(2A(β1 rs^½+β2 rs+β3 rs^(3/2)+β4 rs²))]
// and dG/drs; srs = √rs.
func (g *pwG) eval(rs, srs float64) (val, d float64) {
	q0 := -2 * g.a * (1 + g.alpha1*rs)
	q1 := 2 * g.a * (g.beta1*srs + g.beta2*rs + g.beta3*rs*srs + g.beta4*rs*rs)
	q1p := g.a * (g.beta1/srs + 2*g.beta2 + 3*g.beta3*srs + 4*g.beta4*rs)
	l := math.Log(1 + 1/q1)
	val = q0 * l
	d = -2*g.a*g.alpha1*l - q0*q1p/(q1*(q1+1))
	return val, d
}

// pwSet is a full PW92 parametrization: paramagnetic ε_c(rs,0),
// ferromagnetic ε_c(rs,1), and −α_c(rs), plus f”(0).
type pwSet struct {
	para, ferro, malpha pwG
	fz20                float64
}

// pwOriginal returns the constants of PW92 Table I (libxc LDA_C_PW).
func pwOriginal() pwSet {
	return pwSet{
		para:   pwG{0.031091, 0.21370, 7.5957, 3.5876, 1.6382, 0.49294},
		ferro:  pwG{0.015545, 0.20548, 14.1189, 6.1977, 3.3662, 0.62517},
		malpha: pwG{0.016887, 0.11125, 10.357, 3.6231, 0.88026, 0.49671},
		fz20:   1.709921,
	}
}

// pwModified returns the modified constants (libxc LDA_C_PW_MOD).
func pwModified() pwSet {
	s := pwOriginal()
	s.para.a = 0.0310907
	s.ferro.a = 0.01554535
	s.malpha.a = 0.0168869
	s.fz20 = 1.709920934161365617563962776245
	return s
}

// epsPol returns ε_c(rs, ζ) = ε_P + ζ⁴f(ζ)[ε_F − ε_P + (−α_c)/f”(0)]
// − f(ζ)(−α_c)/f”(0) (PW92 eq. (8)) and its partial derivatives.
// srs is √rs, and fz, dfzz are f(ζ) and f'(ζ) (fZeta).
func (s *pwSet) epsPol(rs, srs float64, sp *spin, fz, dfzz float64) (eps, dRs, dZ float64) {
	zeta := sp.zeta
	p, dp := s.para.eval(rs, srs)
	f, dfz := s.ferro.eval(rs, srs)
	a, da := s.malpha.eval(rs, srs)
	z3 := zeta * zeta * zeta
	z4 := z3 * zeta
	bracket := f - p + a/s.fz20
	dBracket := dfz - dp + da/s.fz20
	eps = p + z4*fz*bracket - fz*a/s.fz20
	dRs = dp + z4*fz*dBracket - fz*da/s.fz20
	dZ = (4*z3*fz+z4*dfzz)*bracket - dfzz*a/s.fz20
	return eps, dRs, dZ
}

// ---------------------------------------------------------------------------
// VWN correlation.
// S. H. Vosko, L. Wilk, M. Nusair, Can. J. Phys. 58, 1200 (1980): eq. (4.4)
// for the fit form; parameters in hartree (the paper's rydberg A halved).
// "VWN5" uses the fits to the Ceperley–Alder energies and the paper's spin
// interpolation eq. (3.2) with the fitted spin stiffness α_c (libxc
// LDA_C_VWN, ID 7). The RPA parametrization uses the fits to the RPA
// energies with the plain interpolation ε = ε_P + f(ζ)(ε_F − ε_P), as libxc
// implements LDA_C_VWN_RPA (ID 8).

// vwnFit is one VWN fit, with its derived constants.
type vwnFit struct {
	a, b, c, x0 float64
	q           float64 // √(4c − b²)
	bx0X0       float64 // b x0 / X(x0)
	c1, c2      float64 // 2b/Q and 2(b+2x0)/Q
}

func newVWNFit(a, b, c, x0 float64) vwnFit {
	q := math.Sqrt(4*c - b*b)
	return vwnFit{a: a, b: b, c: c, x0: x0, q: q,
		bx0X0: b * x0 / (x0*x0 + b*x0 + c),
		c1:    2 * b / q, c2: 2 * (b + 2*x0) / q}
}

// eval returns F(x) = A{ln(x²/X) + (2b/Q) atan(Q/(2x+b))
// − (b x0/X(x0))[ln((x−x0)²/X) + (2(b+2x0)/Q) atan(Q/(2x+b))]},
// X = x²+bx+c, x = √rs, and dF/drs.
func (v *vwnFit) eval(rs, x float64) (val, d float64) {
	xx := rs + v.b*x + v.c
	at := math.Atan(v.q / (2*x + v.b))
	xmx0 := x - v.x0
	val = v.a * (math.Log(rs/xx) + v.c1*at -
		v.bx0X0*(math.Log(xmx0*xmx0/xx)+v.c2*at))
	// d atan(Q/(2x+b))/dx = −Q/(2X). The divisions are kept apart: at
	// large rs the bracket cancels to O(1/x³).
	dx := v.a * (2/x - (2*x+v.b)/xx - v.b/xx -
		v.bx0X0*(2/xmx0-(2*x+v.b)/xx-(v.b+2*v.x0)/xx))
	return val, dx / (2 * x)
}

// vwnSet is a VWN parametrization: paramagnetic, ferromagnetic and spin
// stiffness fits, and whether the spin stiffness interpolation is used.
type vwnSet struct {
	para, ferro, alpha vwnFit
	stiffness          bool
}

// vwnFpp is f”(0) = 4/(9(2^(1/3) − 1)).
const vwnFpp = 1.709920934161365617563962776244682938205

// vwn5 returns the Ceperley–Alder fits of VWN (their "V"), libxc ID 7.
func vwn5() vwnSet {
	return vwnSet{
		para:      newVWNFit(0.0310907, 3.72744, 12.9352, -0.10498),
		ferro:     newVWNFit(0.01554535, 7.06042, 18.0578, -0.32500),
		alpha:     newVWNFit(-1/(6*math.Pi*math.Pi), 1.13107, 13.0045, -0.0047584),
		stiffness: true,
	}
}

// vwnRPA returns the RPA fits of VWN, libxc ID 8 (no spin stiffness term).
func vwnRPA() vwnSet {
	return vwnSet{
		para:  newVWNFit(0.0310907, 13.0720, 42.7198, -0.409286),
		ferro: newVWNFit(0.01554535, 20.1231, 101.578, -0.743294),
		alpha: newVWNFit(-1/(6*math.Pi*math.Pi), 1.06835, 11.4813, -0.228344),
	}
}

// epsPol returns ε_c(rs, ζ) and its partial derivatives, given x = √rs
// and fz, dfz = f(ζ), f'(ζ) (fZeta).
func (s *vwnSet) epsPol(rs, x float64, sp *spin, fz, dfz float64) (eps, dRs, dZ float64) {
	zeta := sp.zeta
	p, dp := s.para.eval(rs, x)
	f, df := s.ferro.eval(rs, x)
	if !s.stiffness {
		return p + fz*(f-p), dp + fz*(df-dp), dfz * (f - p)
	}
	a, da := s.alpha.eval(rs, x)
	z3 := zeta * zeta * zeta
	z4 := z3 * zeta
	eps = p + a*fz*(1-z4)/vwnFpp + (f-p)*fz*z4
	dRs = dp + da*fz*(1-z4)/vwnFpp + (df-dp)*fz*z4
	dZ = a*(dfz*(1-z4)-4*z3*fz)/vwnFpp + (f-p)*(dfz*z4+4*z3*fz)
	return eps, dRs, dZ
}
