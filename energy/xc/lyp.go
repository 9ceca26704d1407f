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
//
// It is evaluated per particle in the variables libxc uses, so that the
// rounding of 1±ζ near full polarization is the same: r = ρ^(−1/3), ζ,
// xt² = |∇ρ|²/ρ^(8/3), xσ² = |∇ρσ|²/ρσ^(8/3), with ρσ = ρ(1±ζ)/2 where
// it multiplies xσ²:
//
//	ε = a{−(1−ζ²)/(1+dr) + ω(r)[t2 + t3 + t4 + t5 + t6]},  ω = b e^(−cr)/(1+dr),
//	t2 = −xt²[(1−ζ²)(47−7δ)/72 − 2/3],
//	t3 = −(C_F/2)(1−ζ²)[(1+ζ)^(8/3) + (1−ζ)^(8/3)],
//	t4 = 2^(−8/3)/4 (1−ζ²)(5/2 − δ/18) Σσ xσ²(1±ζ)^(8/3),
//	t5 = 2^(−8/3)/72 (1−ζ²)(δ − 11) Σσ xσ²(1±ζ)^(11/3),
//	t6 = −2^(−8/3)[(2/3)Σσ xσ²(1±ζ)^(8/3) − (1+ζ)²x_β²(1−ζ)^(8/3)/4 − (1−ζ)²x_α²(1+ζ)^(8/3)/4],
//
// which is eq. (2) of Miehlich et al. divided by ρ.
const (
	lypA = 0.04918
	lypB = 0.132
	lypC = 0.2533
	lypD = 0.349
	// lypCF is C_F = (3/10)(3π²)^(2/3).
	lypCF = 2.871234000188191815942496659453719672232
	// lypAux6 is 2^(−8/3).
	lypAux6 = 0.1574901312368591455959013259097786716426
	lypAux4 = lypAux6 / 4
	lypAux5 = lypAux4 / 18
)

// lypPowers returns the thresholded (1+z)^(8/3), (1+z)^(11/3), (1+z)² for
// opz = 1+z, c = opz^(1/3) and their derivatives with respect to z (sign
// s = ±1 for 1±ζ).
func lypPowers(opz, c, s float64) (p8, p11, p2, d8, d11, d2 float64) {
	if corrLo(opz) {
		z83 := zetaThr23 * zetaThreshold * zetaThreshold
		return z83, z83 * zetaThreshold, zetaThreshold * zetaThreshold, 0, 0, 0
	}
	p2 = opz * opz
	p8 = c * c * p2
	p11 = p8 * opz
	return p8, p11, p2, s * 8.0 / 3.0 * c * c * opz, s * 11.0 / 3.0 * p8, s * 2 * opz
}

// lypPoint evaluates the LYP energy per volume and its derivatives for
// the spin densities of p and gradient invariants saa, sab, sbb.
func lypPoint(p *polPoint, saa, sab, sbb float64) (e, va, vb, vsaa, vsab, vsbb float64) {
	sp := &p.sp
	ra, rb := p.ra, p.rb
	n, z, opz, omz := sp.n, sp.zeta, sp.opz, sp.omz
	n13 := p.n13
	r := 1 / n13
	n83 := n * n * n13 * n13
	ra13, rb13 := p.ra13, p.rb13
	ra83 := ra * ra * ra13 * ra13
	rb83 := rb * rb * rb13 * rb13
	xt := (saa + 2*sab + sbb) / n83
	x0 := saa / ra83
	x1 := sbb / rb83

	dd := 1 + lypD*r
	delta := (lypC + lypD/dd) * r
	dDelta := lypC + lypD/(dd*dd) // dδ/dr
	omega := lypB * math.Exp(-lypC*r) / dd
	dOmega := omega * (-lypC - lypD/dd) // dω/dr

	q := 1 - z*z
	dq := -2 * z
	pa8, pa11, pa2, pa8z, pa11z, pa2z := lypPowers(opz, p.opz13, 1)
	pb8, pb11, pb2, pb8z, pb11z, pb2z := lypPowers(omz, p.omz13, -1)

	t1 := -q / dd
	c47 := (47 - 7*delta) / 72
	t2 := -xt * (q*c47 - 2.0/3.0)
	t3 := -lypCF / 2 * q * (pa8 + pb8)
	c52 := 2.5 - delta/18
	s8 := x0*pa8 + x1*pb8
	t4 := lypAux4 * q * c52 * s8
	s11 := x0*pa11 + x1*pb11
	t5 := lypAux5 * q * (delta - 11) * s11
	t6 := -lypAux6 * (2.0/3.0*s8 - pa2*x1*pb8/4 - pb2*x0*pa8/4)
	sum := t2 + t3 + t4 + t5 + t6
	eps := lypA * (t1 + omega*sum)

	// ∂/∂r
	t1r := q * lypD / (dd * dd)
	sumR := xt*q*7.0/72.0*dDelta - lypAux4*q*s8*dDelta/18 + lypAux5*q*s11*dDelta
	epsR := lypA * (t1r + dOmega*sum + omega*sumR)
	// ∂/∂ζ
	s8z := x0*pa8z + x1*pb8z
	s11z := x0*pa11z + x1*pb11z
	t1z := -dq / dd
	sumZ := -xt*dq*c47 -
		lypCF/2*(dq*(pa8+pb8)+q*(pa8z+pb8z)) +
		lypAux4*c52*(dq*s8+q*s8z) +
		lypAux5*(delta-11)*(dq*s11+q*s11z) -
		lypAux6*(2.0/3.0*s8z-(pa2z*pb8+pa2*pb8z)*x1/4-(pb2z*pa8+pb2*pa8z)*x0/4)
	epsZ := lypA * (t1z + omega*sumZ)
	// ∂/∂xt², ∂/∂x0², ∂/∂x1²
	epsXt := -lypA * omega * (q*c47 - 2.0/3.0)
	epsX0 := lypA * omega * (lypAux4*q*c52*pa8 + lypAux5*q*(delta-11)*pa11 - lypAux6*(2.0/3.0*pa8-pb2*pa8/4))
	epsX1 := lypA * omega * (lypAux4*q*c52*pb8 + lypAux5*q*(delta-11)*pb11 - lypAux6*(2.0/3.0*pb8-pa2*pb8/4))

	// Chain rule to (ρα, ρβ, σαα, σαβ, σββ); e = nε.
	common := eps - r/3*epsR - 8.0/3.0*xt*epsXt // ε + n∂ε/∂n (at fixed xσ²) with ∂xt²/∂n
	e = n * eps
	va = common + omz*epsZ - 8.0/3.0*n/ra*x0*epsX0
	vb = common - opz*epsZ - 8.0/3.0*n/rb*x1*epsX1
	vsaa = n * (epsXt/n83 + epsX0/ra83)
	vsab = 2 * n * epsXt / n83
	vsbb = n * (epsXt/n83 + epsX1/rb83)
	return e, va, vb, vsaa, vsab, vsbb
}
