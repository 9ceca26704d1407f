package xc

import "math"

// Closed-shell evaluation, fused over the components of a functional.
//
// EvalUnpolarized walks the points once. At each point the density powers
// that every component needs (ρ^(1/3), and rs = (3/(4π ρ))^(1/3) with √rs
// when a local correlation is present) are computed once and handed to the
// per-point kernels below, which are straight-line code on float64 values.
// Each component is applied with its own thresholds exactly as a separate
// pass would, and the contributions are added in the order of f.terms, so
// the result is the sum of the components up to floating-point rounding.
// Points below every component's density threshold cost one comparison.

// unpolPoint holds the shared per-point quantities of a closed-shell point.
type unpolPoint struct {
	r, r13   float64 // ρ and ρ^(1/3)
	r43, r83 float64 // ρ^(4/3) and ρ^(8/3)
	ir13     float64 // ρ^(−1/3) (GGAs only)
	ir83     float64 // ρ^(−8/3) (GGAs only)
	rs, srs  float64 // rs and √rs (only when the functional needs them)
	sigma    float64 // σ as given (each GGA component clamps it itself)
}

// evalUnpol is the fused closed-shell loop. It overwrites the outputs; all
// slices have the length of rho, and sigma and vsigma are nil for an LDA.
func (f *Functional) evalUnpol(rho, sigma, exc, vrho, vsigma []float64) {
	needRs := f.needRs
	minDens := f.minDens
	gga := f.gga
	terms := f.terms
	for i, r := range rho {
		// Every component skips ρ below its threshold, and minDens is the
		// smallest of them (NaN goes on and propagates, as in each term).
		if r < minDens {
			exc[i], vrho[i] = 0, 0
			if gga {
				vsigma[i] = 0
			}
			continue
		}
		var p unpolPoint
		p.r = r
		p.r13 = math.Cbrt(r)
		p.r43 = r * p.r13
		p.r83 = p.r43 * p.r43
		if needRs {
			p.rs = rsFactor / p.r13
			p.srs = math.Sqrt(p.rs)
		}
		if gga {
			p.sigma = sigma[i]
			p.ir13 = 1 / p.r13
			p.ir83 = 1 / p.r83
		}
		var e, v, vs float64
		for k := range terms {
			t := &terms[k]
			var de, dv, ds float64
			switch t.kind {
			case kSlater:
				if r/2 <= t.sc.dens { // libxc screens the spin channel ρ/2
					continue
				}
				de, dv = slaterPointUnpol(&p)
			case kVWN:
				if r < t.sc.dens {
					continue
				}
				de, dv = vwnPointUnpol(&t.vwn.para, &p)
			case kPW:
				if r < t.sc.dens {
					continue
				}
				de, dv = pwPointUnpol(&t.pw.para, &p)
			case kB88, kPBEX:
				if r/2 <= t.sc.dens {
					continue
				}
				de, dv, ds = ggaXPointUnpol(t.kind, t.sc.sigma2, &p)
			case kLYP:
				if r < t.sc.dens {
					continue
				}
				de, dv, ds = lypPointUnpol(t.sc.sigma2, &p)
			case kPBEC:
				if r < t.sc.dens {
					continue
				}
				de, dv, ds = pbecPointUnpol(&t.pw, t.sc.sigma2, &p)
			}
			e += t.coef * de
			v += t.coef * dv
			vs += t.coef * ds
		}
		exc[i] = e
		vrho[i] = v
		if gga {
			vsigma[i] = vs
		}
	}
}

// slaterPointUnpol returns Slater exchange e = −Cx ρ^(4/3) and ∂e/∂ρ.
func slaterPointUnpol(p *unpolPoint) (e, v float64) {
	return -slaterCx * p.r * p.r13, -4.0 / 3.0 * slaterCx * p.r13
}

// vwnPointUnpol returns VWN correlation e = ρ ε_P(rs) and ∂e/∂ρ from the
// paramagnetic fit g.
func vwnPointUnpol(g *vwnFit, p *unpolPoint) (e, v float64) {
	eps, dRs := g.eval(p.rs, p.srs)
	return p.r * eps, eps - p.rs/3*dRs
}

// pwPointUnpol returns PW92 correlation e = ρ ε_c(rs, 0) and ∂e/∂ρ from
// the paramagnetic fit g.
func pwPointUnpol(g *pwG, p *unpolPoint) (e, v float64) {
	eps, dRs := g.eval(p.rs, p.srs)
	return p.r * eps, eps - p.rs/3*dRs
}

// ggaXPointUnpol returns GGA exchange e = −Cx ρ^(4/3) F(x²), ∂e/∂ρ and
// ∂e/∂σ, with x² = 2^(2/3)σ/ρ^(8/3) the reduced gradient of a spin channel
// and σ raised to at least sigma2.
func ggaXPointUnpol(kind kernel, sigma2 float64, p *unpolPoint) (e, v, vs float64) {
	s := max(sigma2, p.sigma)
	x2 := cbrt4 * s * p.ir83
	f, df := ggaXEnh(kind, x2)
	ex := 2 * slaterSpin * p.r43 // = −Cx ρ^(4/3)
	// ∂e/∂ρ = (4/3)(e/ρ)(F − 2x²F'), e/ρ = −Cx ρ^(1/3)
	return ex * f, 4.0 / 3.0 * 2 * slaterSpin * p.r13 * (f - 2*x2*df), ex * df * cbrt4 * p.ir83
}

// lypPointUnpol returns LYP correlation e = ρε, ∂e/∂ρ and ∂e/∂σ of a
// closed-shell point: lypPoint with ρα = ρβ = ρ/2 and σαα = σαβ = σββ = σ/4
// worked out by hand. At ζ = 0 all (1±ζ) powers are 1, ∂ε/∂ζ vanishes,
// both spin reduced gradients are xσ² = 2^(2/3) xt² with xt² = σ/ρ^(8/3),
// and the bracket of lyp.go becomes
//
//	t2 = −xt²[(47−7δ)/72 − 2/3],  t3 = −C_F,
//	t4 = 2^(−8/3)/4 (5/2 − δ/18) 2xσ²,  t5 = 2^(−8/3)/72 (δ−11) 2xσ²,
//	t6 = −2^(−8/3)(5/6) xσ².
func lypPointUnpol(sigma2 float64, p *unpolPoint) (e, v, vs float64) {
	s := max(sigma2, p.sigma)
	rr := p.ir13 // ρ^(−1/3), lyp.go's r
	xt := s * p.ir83
	xs := cbrt4 * xt // xσ² of either spin channel

	// Divisions by constants are multiplications by their reciprocals.
	const inv18, inv72 = 1.0 / 18, 1.0 / 72
	dd := 1 + lypD*rr
	idd := 1 / dd
	delta := (lypC + lypD*idd) * rr
	dDelta := lypC + lypD*(idd*idd) // dδ/dr
	omega := lypB * math.Exp(-lypC*rr) * idd
	dOmega := omega * (-lypC - lypD*idd) // dω/dr

	t1 := -idd
	c47 := (47-7*delta)*inv72 - 2.0/3.0
	c52 := 2.5 - delta*inv18
	s8 := 2 * xs // Σσ xσ²(1±ζ)^(8/3) = Σσ xσ²(1±ζ)^(11/3)
	sum := -xt*c47 - lypCF + lypAux4*c52*s8 + lypAux5*(delta-11)*s8 - lypAux6*(5.0/6.0)*xs
	eps := lypA * (t1 + omega*sum)

	// ∂ε/∂r
	t1r := lypD * (idd * idd)
	sumR := (xt*(7*inv72) - lypAux4*inv18*s8 + lypAux5*s8) * dDelta
	epsR := lypA * (t1r + dOmega*sum + omega*sumR)
	// ∂ε/∂xt² and ∂ε/∂xσ² (the same for both channels)
	epsXt := -lypA * omega * c47
	epsXs := lypA * omega * (lypAux4*c52 + lypAux5*(delta-11) - lypAux6*(5.0/12.0))

	// ρ∂ε/∂ρ = −(r/3)∂ε/∂r − (8/3)(xt² ∂ε/∂xt² + 2xσ² ∂ε/∂xσ²).
	v = eps - (1.0/3.0)*rr*epsR - 8.0/3.0*xt*epsXt - 16.0/3.0*xs*epsXs
	// ∂e/∂σ = ρ[∂ε/∂xt² + 2·2^(2/3) ∂ε/∂xσ²]/ρ^(8/3).
	vs = p.r * (epsXt + 2*cbrt4*epsXs) * p.ir83
	return p.r * eps, v, vs
}

// pbecPointUnpol returns PBE correlation e = ρε, ∂e/∂ρ and ∂e/∂σ of a
// closed-shell point (φ = 1), σ raised to at least sigma2.
func pbecPointUnpol(pw *pwSet, sigma2 float64, p *unpolPoint) (e, v, vs float64) {
	s := max(sigma2, p.sigma)
	eps, dn, ds := pbecUnpolEps(pw, p.r, p.r13, p.rs, p.srs, s)
	return p.r * eps, eps + p.r*dn, p.r * ds
}
