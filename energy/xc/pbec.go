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
// derivatives with respect to n, ζ and σ = |∇ρ|², given n, ζ, 1±ζ and σ.
// polarized false means ζ = 0 and skips the spin terms.
func pbecPoint(pw *pwSet, sp *spin, sigma float64, polarized bool) (eps, dn, dz, ds float64) {
	n := sp.n
	n13 := math.Cbrt(n)
	rs := rsFactor / n13
	var ec, ecRs, ecZ, phi, dphi float64
	if polarized {
		ec, ecRs, ecZ = pw.epsPol(rs, sp)
		ha, dha := pow23(sp.opz, corrLo(sp.opz))
		hb, dhb := pow23(sp.omz, corrLo(sp.omz))
		phi = (ha + hb) / 2
		dphi = (dha - dhb) / 2
	} else {
		ec, ecRs = pw.epsUnpol(rs)
		phi = 1
	}
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
	h := g * math.Log(l)
	pre := g * bg / (l * den * den)
	hY := pre * (1 + 2*a*y)
	hA := pre * (y*y - f1*f1)
	hG := math.Log(l)

	eps = ec + h
	ecN := -rs / (3 * n) * ecRs
	dn = ecN*(1+hA*aEps) - 7.0/3.0*hY*y/n
	if polarized {
		dz = ecZ*(1+hA*aEps) + (hA*aG+hG)*dg - 2*hY*y*dphi/phi
	}
	ds = hY * ySigma
	return eps, dn, dz, ds
}

// pbecUnpol adds c × PBE correlation for unpolarized densities.
func pbecUnpol(c float64, sc screen, pw *pwSet, rho, sigma, exc, vrho, vsigma []float64) {
	for i, r := range rho {
		if r < sc.dens {
			continue
		}
		s := max(sc.sigma2, sigma[i])
		sp := spin{n: r, opz: 1, omz: 1}
		eps, dn, _, ds := pbecPoint(pw, &sp, s, false)
		exc[i] += c * r * eps
		vrho[i] += c * (eps + r*dn)
		vsigma[i] += c * r * ds
	}
}

// pbecPol adds c × PBE correlation for spin-polarized densities.
func pbecPol(c float64, sc screen, pw *pwSet, rhoA, rhoB, sAA, sAB, sBB,
	exc, va, vb, vsAA, vsAB, vsBB []float64) {
	for i := range rhoA {
		ra, rb, ok := sc.clampPol(rhoA[i], rhoB[i])
		if !ok {
			continue
		}
		saa, sab, sbb := sc.clampSigmaPol(sAA[i], sAB[i], sBB[i])
		sp := spinVars(ra, rb)
		n, opz, omz := sp.n, sp.opz, sp.omz
		eps, dn, dz, ds := pbecPoint(pw, &sp, saa+2*sab+sbb, true)
		common := eps + n*dn
		exc[i] += c * (rhoA[i] + rhoB[i]) * eps
		va[i] += c * (common + omz*dz)
		vb[i] += c * (common - opz*dz)
		vsAA[i] += c * n * ds
		vsAB[i] += c * 2 * n * ds
		vsBB[i] += c * n * ds
	}
}
