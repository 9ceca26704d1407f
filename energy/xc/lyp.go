package xc

import "math"

// LYP correlation: C. Lee, W. Yang, R. G. Parr, Phys. Rev. B 37, 785 (1988),
// in the form without Laplacians of B. Miehlich, A. Savin, H. Stoll,
// H. Preuss, Chem. Phys. Lett. 157, 200 (1989), eq. (2):
//
//	E_c = −a·4/(1+dρ^(−1/3))·ρα ρβ/ρ
//	      − ab ω {ρα ρβ [2^(11/3) C_F (ρα^(8/3)+ρβ^(8/3))
//	                   + (47/18 − 7δ/18)|∇ρ|² − (5/2 − δ/18)(|∇ρα|²+|∇ρβ|²)
//	                   − (δ−11)/9 (ρα/ρ |∇ρα|² + ρβ/ρ |∇ρβ|²)]
//	             − (2/3)ρ²|∇ρ|² + ((2/3)ρ² − ρα²)|∇ρβ|² + ((2/3)ρ² − ρβ²)|∇ρα|²},
//	ω = exp(−cρ^(−1/3))/(1+dρ^(−1/3)) ρ^(−11/3),
//	δ = cρ^(−1/3) + dρ^(−1/3)/(1+dρ^(−1/3)),  C_F = (3/10)(3π²)^(2/3).
//
// For a fully polarized density (ρβ = 0, ∇ρβ = 0) every term vanishes.
const (
	lypA = 0.04918
	lypB = 0.132
	lypC = 0.2533
	lypD = 0.349
	// lypK1 is 2^(11/3) C_F.
	lypK1 = 36.46239897876477709830531007679444286812
)

// lypPoint evaluates the LYP energy per volume and its derivatives for
// spin densities ra, rb and gradient invariants saa, sab, sbb.
func lypPoint(ra, rb, saa, sab, sbb float64) (e, va, vb, vsaa, vsab, vsbb float64) {
	n := ra + rb
	n13 := math.Cbrt(n)
	r := 1 / n13 // ρ^(−1/3)
	dd := 1 + lypD*r
	delta := lypC*r + lypD*r/dd
	dDelta := -r / (3 * n) * (lypC + lypD/(dd*dd)) // dδ/dρ
	n2 := n * n
	omega := math.Exp(-lypC*r) / dd * r * r / (n2 * n) // ρ^(−11/3) = r²/ρ³
	dOmega := omega * (delta - 11) / (3 * n)

	// First term.
	rab := ra * rb
	t1 := -4 * lypA * rab / (n * dd)
	t1n := 4 * lypA * rab * (dd - lypD*r/3) / (n2 * dd * dd) // ∂t1/∂n at fixed ρα ρβ
	t1a := -4*lypA*rb/(n*dd) + t1n
	t1b := -4*lypA*ra/(n*dd) + t1n

	// Braces.
	g := saa + 2*sab + sbb
	ra13 := math.Cbrt(ra)
	rb13 := math.Cbrt(rb)
	ra53 := ra * ra13 * ra13
	rb53 := rb * rb13 * rb13
	c47 := 47.0/18.0 - 7.0/18.0*delta
	c52 := 2.5 - delta/18
	c11 := (delta - 11) / 9
	wsum := (ra*saa + rb*sbb) / n
	bb := lypK1*(ra53*ra+rb53*rb) + c47*g - c52*(saa+sbb) - c11*wsum
	// ∂B/∂ρα, ∂B/∂ρβ.
	bDelta := dDelta * (-7.0/18.0*g + (saa+sbb)/18 - wsum/9)
	ba := lypK1*8.0/3.0*ra53 + bDelta - c11*(saa-wsum)/n
	bbd := lypK1*8.0/3.0*rb53 + bDelta - c11*(sbb-wsum)/n
	twoThirdsN2 := 2.0 / 3.0 * n2
	w := rab*bb - twoThirdsN2*g + (twoThirdsN2-ra*ra)*sbb + (twoThirdsN2-rb*rb)*saa
	fourThirdsN := 4.0 / 3.0 * n
	wa := rb*bb + rab*ba - fourThirdsN*g + (fourThirdsN-2*ra)*sbb + fourThirdsN*saa
	wb := ra*bb + rab*bbd - fourThirdsN*g + fourThirdsN*sbb + (fourThirdsN-2*rb)*saa
	wsaa := rab*(c47-c52-c11*ra/n) - rb*rb
	wsab := 2*rab*c47 - 2*twoThirdsN2
	wsbb := rab*(c47-c52-c11*rb/n) - ra*ra

	ab := lypA * lypB
	e = t1 - ab*omega*w
	va = t1a - ab*(dOmega*w+omega*wa)
	vb = t1b - ab*(dOmega*w+omega*wb)
	vsaa = -ab * omega * wsaa
	vsab = -ab * omega * wsab
	vsbb = -ab * omega * wsbb
	return e, va, vb, vsaa, vsab, vsbb
}

// lypUnpol adds c × LYP correlation for unpolarized densities.
func lypUnpol(c float64, sc screen, rho, sigma, exc, vrho, vsigma []float64) {
	for i, r := range rho {
		if r < sc.dens {
			continue
		}
		s := max(sc.sigma2, sigma[i]) / 4
		h := r / 2
		e, va, vb, vsaa, vsab, vsbb := lypPoint(h, h, s, s, s)
		exc[i] += c * e
		vrho[i] += c * (va + vb) / 2
		vsigma[i] += c * (vsaa + vsab + vsbb) / 4
	}
}

// lypPol adds c × LYP correlation for spin-polarized densities.
func lypPol(c float64, sc screen, rhoA, rhoB, sAA, sAB, sBB,
	exc, va, vb, vsAA, vsAB, vsBB []float64) {
	for i := range rhoA {
		ra, rb, ok := sc.clampPol(rhoA[i], rhoB[i])
		if !ok {
			continue
		}
		saa, sab, sbb := sc.clampSigmaPol(sAA[i], sAB[i], sBB[i])
		e, da, db, dsaa, dsab, dsbb := lypPoint(ra, rb, saa, sab, sbb)
		exc[i] += c * rawScale(rhoA[i]+rhoB[i], ra+rb) * e
		va[i] += c * da
		vb[i] += c * db
		vsAA[i] += c * dsaa
		vsAB[i] += c * dsab
		vsBB[i] += c * dsbb
	}
}
