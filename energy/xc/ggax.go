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

// b88Enh returns Becke's F(x²) = 1 + (β/xFactorC)x²/(1+6βx sinh⁻¹x) and dF/d(x²).
func b88Enh(x2 float64) (f, df float64) {
	x := math.Sqrt(x2)
	sq := math.Sqrt(1 + x2)
	ash := asinhPos(x, x2, sq)
	den := 1 + b88Gamma*b88Beta*x*ash
	// den − x²·d(den)/d(x²), finite at x = 0.
	num := 1 + b88Gamma*b88Beta*(x*ash-x2/sq)/2
	iden := 1 / den
	f = 1 + b88Beta/xFactorC*x2*iden
	df = b88Beta / xFactorC * num * (iden * iden)
	return f, df
}

// asinhPos returns sinh⁻¹x for x ≥ 0 (or NaN) given x2 = x² and
// sq = √(1+x²), which B88 needs anyway. It follows the range reduction of
// the standard library's math.Asinh (W. Kahan's formulas) with the shared
// square root, so it agrees with math.Asinh to an ulp or so.
func asinhPos(x, x2, sq float64) float64 {
	const (
		ln2   = 6.93147180559945286227e-01 // ln 2
		large = 1 << 28                    // 1 + x² == x² beyond this
		small = 1.0 / (1 << 28)            // sinh⁻¹x == x below this
	)
	switch {
	case x > large:
		return math.Log(x) + ln2
	case x > 2:
		return math.Log(2*x + 1/(sq+x))
	case x < small:
		return x
	}
	return math.Log1p(x + x2/(1+sq))
}

// pbeXEnh returns F(s) = 1 + κ − κ/(1 + μs²/κ), s² = x2s²x², and dF/d(x²).
func pbeXEnh(x2 float64) (f, df float64) {
	s2 := x2s * x2s * x2
	d := pbeKappa + pbeMu*s2
	f = 1 + pbeKappa - pbeKappa*pbeKappa/d
	df = x2s * x2s * pbeMu * pbeKappa * pbeKappa / (d * d)
	return f, df
}
