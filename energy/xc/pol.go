package xc

import "math"

// Spin-polarized evaluation, fused over the components of a functional.
//
// As for closed shells (unpol.go) the points are walked once and the cube
// roots every component needs (n, ρα, ρβ, 1+ζ, 1−ζ) and rs, √rs and f(ζ)
// are computed once per point (polPoint). Each component clamps the spin
// densities to its own threshold (screen.clampPol); when both are at or
// above every component's threshold the clamping changes nothing and one
// polPoint serves all components. Otherwise (a spin density near zero) the
// point is prepared again for each distinct threshold, from the clamped
// densities, exactly as a separate pass per component would see them.

// polPoint holds the shared quantities of a spin-polarized point.
type polPoint struct {
	ra, rb       float64 // spin densities (clamped)
	sp           spin
	n13          float64 // n^(1/3)
	ra13, rb13   float64 // ρα^(1/3), ρβ^(1/3)
	opz13, omz13 float64 // (1+ζ)^(1/3), (1−ζ)^(1/3)
	rs, srs      float64 // rs and √rs (if the functional needs them)
	fz, dfz      float64 // f(ζ) and f'(ζ) (if the functional needs them)
}

// prepare fills p for spin densities ra, rb (already clamped).
func (p *polPoint) prepare(ra, rb float64, needRs bool) {
	p.ra, p.rb = ra, rb
	p.sp = spinVars(ra, rb)
	p.n13 = math.Cbrt(p.sp.n)
	p.ra13 = math.Cbrt(ra)
	p.rb13 = math.Cbrt(rb)
	p.opz13 = math.Cbrt(p.sp.opz)
	p.omz13 = math.Cbrt(p.sp.omz)
	if needRs {
		p.rs = rsFactor / p.n13
		p.srs = math.Sqrt(p.rs)
		p.fz, p.dfz = fZeta(&p.sp, p.opz13, p.omz13)
	}
}

// polOut is one component's contribution at a point: e at the clamped
// densities (scaled to the input density by the caller) and the
// derivatives.
type polOut struct {
	e, va, vb, vaa, vab, vbb float64
}

// evalPol is the fused spin-polarized loop. All slices have the length of
// rhoA; the sigma inputs and vsigma outputs are nil for an LDA.
func (f *Functional) evalPol(rhoA, rhoB, sAA, sAB, sBB, exc, va, vb, vsAA, vsAB, vsBB []float64) {
	needRs, gga := f.needRs, f.gga
	minDens, maxDens := f.minDens, f.maxDens
	terms := f.terms
	for i := range rhoA {
		a0, b0 := rhoA[i], rhoB[i]
		raw := a0 + b0
		var acc polOut
		if raw < minDens { // below every component's threshold
			exc[i], va[i], vb[i] = 0, 0, 0
			if gga {
				vsAA[i], vsAB[i], vsBB[i] = 0, 0, 0
			}
			continue
		}
		var saa, sab, sbb float64
		if gga {
			saa, sab, sbb = sAA[i], sAB[i], sBB[i]
		}
		var shared, own polPoint
		unclamped := a0 >= maxDens && b0 >= maxDens
		if unclamped {
			shared.prepare(a0, b0, needRs)
		}
		ownDens := math.NaN() // threshold own was prepared for
		for k := range terms {
			t := &terms[k]
			sc := t.sc
			if raw < sc.dens {
				continue
			}
			p := &shared
			if !unclamped {
				if sc.dens != ownDens {
					ca, cb, _ := sc.clampPol(a0, b0) // raw ≥ sc.dens here
					own.prepare(ca, cb, needRs)
					ownDens = sc.dens
				}
				p = &own
			}
			var o polOut
			switch t.kind {
			case kSlater:
				o = slaterPolPoint(sc.dens, p)
			case kVWN:
				eps, dRs, dZ := t.vwn.epsPol(p.rs, p.srs, &p.sp, p.fz, p.dfz)
				o = ldaCorrOut(p, eps, dRs, dZ)
			case kPW:
				eps, dRs, dZ := t.pw.epsPol(p.rs, p.srs, &p.sp, p.fz, p.dfz)
				o = ldaCorrOut(p, eps, dRs, dZ)
			case kB88, kPBEX:
				s1, _, s3 := sc.clampSigmaPol(saa, sab, sbb)
				o = ggaXPolPoint(t.kind, sc.dens, p, s1, s3)
			case kLYP:
				s1, s2, s3 := sc.clampSigmaPol(saa, sab, sbb)
				o.e, o.va, o.vb, o.vaa, o.vab, o.vbb = lypPoint(p, s1, s2, s3)
			case kPBEC:
				s1, s2, s3 := sc.clampSigmaPol(saa, sab, sbb)
				o = pbecPolPoint(&t.pw, p, s1+2*s2+s3)
			}
			c := t.coef
			acc.e += c * rawScale(raw, p.sp.n) * o.e
			acc.va += c * o.va
			acc.vb += c * o.vb
			acc.vaa += c * o.vaa
			acc.vab += c * o.vab
			acc.vbb += c * o.vbb
		}
		exc[i], va[i], vb[i] = acc.e, acc.va, acc.vb
		if gga {
			vsAA[i], vsAB[i], vsBB[i] = acc.vaa, acc.vab, acc.vbb
		}
	}
}

// slaterPolPoint returns Slater exchange at a polarized point; a channel
// at or below the density threshold dens contributes nothing.
func slaterPolPoint(dens float64, p *polPoint) (o polOut) {
	sp := &p.sp
	if p.ra > dens {
		e, dOwn, dOther := slaterChannel(p.ra, p.ra13, sp.n, p.n13, sp.loA)
		o.e += e
		o.va += dOwn
		o.vb += dOther
	}
	if p.rb > dens {
		e, dOwn, dOther := slaterChannel(p.rb, p.rb13, sp.n, p.n13, sp.loB)
		o.e += e
		o.vb += dOwn
		o.va += dOther
	}
	return o
}

// ldaCorrOut turns a local correlation ε(rs, ζ) with its partial
// derivatives into e = nε and ∂e/∂ρα, ∂e/∂ρβ.
func ldaCorrOut(p *polPoint, eps, dRs, dZ float64) polOut {
	da, db := ldaCorrPot(p.rs, p.sp.opz, p.sp.omz, eps, dRs, dZ)
	return polOut{e: p.sp.n * eps, va: da, vb: db}
}

// ggaXPolPoint returns spin-scaled GGA exchange (B88 or PBE) at a
// polarized point with clamped σαα = saa and σββ = sbb; a channel at or
// below the density threshold dens contributes nothing.
func ggaXPolPoint(kind kernel, dens float64, p *polPoint, saa, sbb float64) (o polOut) {
	sp := p.sp
	opz13, omz13 := p.opz13, p.omz13
	frozen := false
	// As libxc 5.2 does in its GGA exchange (not in Slater exchange), ζ
	// itself is held at ∓(1−zetaThreshold) when 1±ζ is at the zeta
	// threshold (frozen), so that it no longer depends on the densities.
	switch {
	case sp.loA:
		sp.opz, sp.omz = zetaThreshold, 1+(1-zetaThreshold)
		frozen = true
	case sp.loB:
		sp.opz, sp.omz = 1+(1-zetaThreshold), zetaThreshold
		frozen = true
	}
	if frozen {
		opz13, omz13 = math.Cbrt(sp.opz), math.Cbrt(sp.omz)
	}
	n, n13 := sp.n, p.n13
	if p.ra > dens {
		ps, dOwn, dOther := spinScale(n, n13, sp.opz, opz13, sp.omz, sp.loA, frozen)
		ra := p.ra
		ra83 := p.ra13 * p.ra13 * ra * ra
		x2 := saa / ra83
		f, df := ggaXEnh(kind, x2)
		o.e += slaterSpin * ps * f
		o.va += slaterSpin * (dOwn*f - ps*df*8.0/3.0*x2/ra)
		o.vb += slaterSpin * dOther * f
		o.vaa += slaterSpin * ps * df / ra83
	}
	if p.rb > dens {
		ps, dOwn, dOther := spinScale(n, n13, sp.omz, omz13, sp.opz, sp.loB, frozen)
		rb := p.rb
		rb83 := p.rb13 * p.rb13 * rb * rb
		x2 := sbb / rb83
		f, df := ggaXEnh(kind, x2)
		o.e += slaterSpin * ps * f
		o.vb += slaterSpin * (dOwn*f - ps*df*8.0/3.0*x2/rb)
		o.va += slaterSpin * dOther * f
		o.vbb += slaterSpin * ps * df / rb83
	}
	return o // exchange does not depend on σαβ
}

// ggaXEnh returns the enhancement factor of kind (kB88 or kPBEX) and its
// derivative with respect to x².
func ggaXEnh(kind kernel, x2 float64) (f, df float64) {
	if kind == kB88 {
		return b88Enh(x2)
	}
	return pbeXEnh(x2)
}

// pbecPolPoint returns PBE correlation at a polarized point with clamped
// |∇ρ|² = sigma.
func pbecPolPoint(pw *pwSet, p *polPoint, sigma float64) polOut {
	eps, dn, dz, ds := pbecPoint(pw, p, sigma)
	n, opz, omz := p.sp.n, p.sp.opz, p.sp.omz
	common := eps + n*dn
	return polOut{e: n * eps, va: common + omz*dz, vb: common - opz*dz,
		vaa: n * ds, vab: 2 * n * ds, vbb: n * ds}
}
