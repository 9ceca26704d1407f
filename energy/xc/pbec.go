package xc

import "math"

// PBE correlation: J. P. Perdew, K. Burke, M. Ernzerhof, Phys. Rev. Lett.
// 77, 3865 (1996), eqs. (3), (7), (8):
//
//	ε_c = ε_c^PW92(rs, ζ) + H,  H = γφ³ ln[1 + (β/γ)t²(1+At²)/(1+At²+A²t⁴)],
//	A = (β/γ)/[exp(−ε_c^PW92/(γφ³)) − 1],  φ = [(1+ζ)^(2/3) + (1−ζ)^(2/3)]/2,
//	t = |∇ρ|/(2φ k_s ρ),  k_s = √(4k_F/π),  k_F = (3π²ρ)^(1/3),
//
// with β = 0.06672455060314922, γ = (1 − ln 2)/π², and ε_c^PW92 in the
// modified parametrization (pwModified).
const (
	pbeBeta  = 0.06672455060314922
	pbeGamma = 0.03109069086965489503494086371273062927148
	// pbeTConst is π/(16(3π²)^(1/3)): t² = pbeTConst·|∇ρ|²/(φ² ρ^(7/3)).
	pbeTConst = 0.06346820609770370420246162509321621809282
)

// pbecPoint returns the PBE correlation energy per particle and its partial
// derivatives with respect to n, ζ and σ = |∇ρ|², given n, ζ, 1±ζ and σ,
// for the spin-polarized point p.
func pbecPoint(pw *pwSet, p *polPoint, sigma float64) (eps, dn, dz, ds float64) {
	sp := &p.sp
	ec, ecRs, ecZ := pw.epsPol(p.rs, p.srs, sp, p.fz, p.dfz)
	ha, dha := pow23(p.opz13, corrLo(sp.opz))
	hb, dhb := pow23(p.omz13, corrLo(sp.omz))
	phi := (ha + hb) / 2
	dphi := (dha - dhb) / 2
	return pbecH(sp.n, p.n13, p.rs, ec, ecRs, ecZ, phi, dphi, sigma, true)
}

// pbecUnpolEps is pbecPoint at ζ = 0 (φ = 1) given n^(1/3), rs and √rs:
// ε and its derivatives with respect to n and σ.
func pbecUnpolEps(pw *pwSet, n, n13, rs, srs, sigma float64) (eps, dn, ds float64) {
	ec, ecRs := pw.para.eval(rs, srs)
	eps, dn, _, ds = pbecH(n, n13, rs, ec, ecRs, 0, 1, 0, sigma, false)
	return eps, dn, ds
}

// pbecH adds the gradient correction H to the local correlation ε_c(rs, ζ)
// (ec, with derivatives ecRs and ecZ) given φ and dφ/dζ, and returns ε and
// its partial derivatives with respect to n, ζ (when polarized) and σ.
func pbecH(n, n13, rs, ec, ecRs, ecZ, phi, dphi, sigma float64, polarized bool) (eps, dn, dz, ds float64) {
	phi2 := phi * phi
	g := pbeGamma * phi2 * phi
	dg := 3 * pbeGamma * phi2 * dphi
	const bg = pbeBeta / pbeGamma
	ySigma := pbeTConst / (phi2 * n * n * n13) // ∂y/∂σ, y = t²
	y := ySigma * sigma
	ex := math.Exp(-ec / g)
	em1 := ex - 1
	a := bg / em1
	aEps := bg * ex / (g * em1 * em1) // ∂A/∂ε_c
	aG := -aEps * ec / g              // ∂A/∂g
	f1 := y + a*y*y
	den := 1 + a*f1
	l := 1 + bg*f1/den
	hG := math.Log(l) // ∂H/∂g
	h := g * hG
	pre := g * bg / (l * den * den)
	hY := pre * (1 + 2*a*y)
	hA := pre * (y*y - f1*f1)

	eps = ec + h
	ecN := -rs / (3 * n) * ecRs
	dn = ecN*(1+hA*aEps) - 7.0/3.0*hY*y/n
	if polarized {
		dz = ecZ*(1+hA*aEps) + (hA*aG+hG)*dg - 2*hY*y*dphi/phi
	}
	ds = hY * ySigma
	return eps, dn, dz, ds
}
