package xc

import "math"

// GGA exchange in the spin-scaled form
//
//	e_x = Σσ slaterSpin·n^(4/3)(1±ζ)^(4/3)·F(xσ²),  xσ = |∇ρσ|/ρσ^(4/3),
//
// i.e. E_x[ρα,ρβ] = (E_x[2ρα] + E_x[2ρβ])/2 with an enhancement factor F.

const (
	// b88Beta is β of A. D. Becke, Phys. Rev. A 38, 3098 (1988), eq. (8).
	b88Beta = 0.0042
	// b88Gamma is the 6 in the denominator 1 + 6βx sinh⁻¹x of eq. (8).
	b88Gamma = 6.0
	// xFactorC is (3/8)(3/π)^(1/3)4^(2/3) = (3/4)(6/π)^(1/3), the local
	// exchange prefactor per spin, so that F = 1 + (β/xFactorC)x²/(…).
	xFactorC = 0.9305257363491000250020102180716672510262

	// pbeKappa and pbeMu are κ and μ = βπ²/3 of PBE exchange,
	// J. P. Perdew, K. Burke, M. Ernzerhof, Phys. Rev. Lett. 77, 3865
	// (1996), eq. (14) (μ with β = 0.06672455060314922).
	pbeKappa = 0.8040
	pbeMu    = 0.2195149727645171
	// x2s is 1/(2(6π²)^(1/3)): s = x2s·xσ for the spin-scaled density.
	x2s = 0.1282782438530421943003109254455883701296

	// cbrt4 is 2^(2/3): for unpolarized input xσ² = 2^(2/3) σ/ρ^(8/3).
	cbrt4 = 1.587401051968199474751705639272308260391
)

// ggaXKind selects the enhancement factor of a GGA exchange functional.
type ggaXKind int

const (
	ggaXB88 ggaXKind = iota
	ggaXPBE
)

// b88Enh returns Becke's F(x²) = 1 + (β/xFactorC)x²/(1+6βx sinh⁻¹x) and dF/d(x²).
func b88Enh(x2 float64) (f, df float64) {
	x := math.Sqrt(x2)
	ash := math.Asinh(x)
	den := 1 + b88Gamma*b88Beta*x*ash
	// den − x²·d(den)/d(x²), finite at x = 0.
	num := 1 + b88Gamma*b88Beta*(x*ash-x2/math.Sqrt(1+x2))/2
	f = 1 + b88Beta/xFactorC*x2/den
	df = b88Beta / xFactorC * num / (den * den)
	return f, df
}

// pbeXEnh returns F(s) = 1 + κ − κ/(1 + μs²/κ), s² = x2s²x², and dF/d(x²).
func pbeXEnh(x2 float64) (f, df float64) {
	s2 := x2s * x2s * x2
	d := pbeKappa + pbeMu*s2
	f = 1 + pbeKappa - pbeKappa*pbeKappa/d
	df = x2s * x2s * pbeMu * pbeKappa * pbeKappa / (d * d)
	return f, df
}

func ggaXEnh(kind ggaXKind, x2 float64) (f, df float64) {
	if kind == ggaXB88 {
		return b88Enh(x2)
	}
	return pbeXEnh(x2)
}

// ggaXUnpol adds c × GGA exchange for unpolarized densities.
func ggaXUnpol(c float64, sc screen, kind ggaXKind, rho, sigma, exc, vrho, vsigma []float64) {
	for i, r := range rho {
		if r/2 <= sc.dens { // libxc screens the spin channel ρ/2
			continue
		}
		s := max(sc.sigma2, sigma[i])
		r13 := math.Cbrt(r)
		r43 := r * r13
		r83 := r43 * r43
		x2 := cbrt4 * s / r83
		f, df := ggaXEnh(kind, x2)
		e := 2 * slaterSpin * r43 // = −Cx ρ^(4/3)
		exc[i] += c * e * f
		vrho[i] += c * (4.0 / 3.0 * e / r * (f - 2*x2*df))
		vsigma[i] += c * e * df * cbrt4 / r83
	}
}

// ggaXPol adds c × GGA exchange for spin-polarized densities.
func ggaXPol(c float64, sc screen, kind ggaXKind, rhoA, rhoB, sAA, sAB, sBB,
	exc, va, vb, vsAA, vsAB, vsBB []float64) {
	for i := range rhoA {
		ra, rb, ok := sc.clampPol(rhoA[i], rhoB[i])
		if !ok {
			continue
		}
		saa, _, sbb := sc.clampSigmaPol(sAA[i], sAB[i], sBB[i])
		sp, frozen := ggaExchangeSpin(ra, rb)
		n := sp.n
		n13 := math.Cbrt(n)
		var e, da, db, dsa, dsb float64
		if ra > sc.dens {
			p, dOwn, dOther := spinScale(n, n13, sp.opz, sp.omz, sp.loA, frozen)
			ra13 := math.Cbrt(ra)
			ra83 := ra13 * ra13 * ra * ra
			x2 := saa / ra83
			f, df := ggaXEnh(kind, x2)
			e += slaterSpin * p * f
			da += slaterSpin * (dOwn*f - p*df*8.0/3.0*x2/ra)
			db += slaterSpin * dOther * f
			dsa += slaterSpin * p * df / ra83
		}
		if rb > sc.dens {
			p, dOwn, dOther := spinScale(n, n13, sp.omz, sp.opz, sp.loB, frozen)
			rb13 := math.Cbrt(rb)
			rb83 := rb13 * rb13 * rb * rb
			x2 := sbb / rb83
			f, df := ggaXEnh(kind, x2)
			e += slaterSpin * p * f
			db += slaterSpin * (dOwn*f - p*df*8.0/3.0*x2/rb)
			da += slaterSpin * dOther * f
			dsb += slaterSpin * p * df / rb83
		}
		exc[i] += c * rawScale(rhoA[i]+rhoB[i], n) * e
		va[i] += c * da
		vb[i] += c * db
		vsAA[i] += c * dsa
		vsBB[i] += c * dsb
		_ = vsAB // exchange does not depend on σαβ
	}
}
