package xc

import "math"

// Screening thresholds, the defaults of libxc 5.2 (read from an initialized
// xc_func_type: dens_threshold, zeta_threshold, sigma_threshold). They are
// per component functional; see doc.go for how they are applied.
const (
	// zetaThreshold is libxc's default zeta_threshold, DBL_EPSILON: a
	// factor (1±ζ)^p is frozen at zetaThreshold^p when 1±ζ ≤ zetaThreshold.
	zetaThreshold = 2.220446049250313e-16

	// densThresholdDefault is the density threshold of Slater exchange,
	// VWN (both), PW92 (both), Becke 88 and PBE exchange.
	densThresholdDefault = 1e-15
	// densThresholdLYP is the density threshold of LYP correlation.
	densThresholdLYP = 1e-14
	// densThresholdPBEC is the density threshold of PBE correlation.
	densThresholdPBEC = 1e-12
)

// screen holds the thresholds one component functional applies.
type screen struct {
	dens   float64 // density threshold
	sigma2 float64 // square of the gradient threshold, sigma_threshold = dens^(4/3)
}

func newScreen(dens float64) screen {
	s := math.Pow(dens, 4.0/3.0)
	return screen{dens: dens, sigma2: s * s}
}

// clampPol applies libxc's input sanitation to a polarized point: the point
// is skipped when ρα+ρβ is below the threshold; otherwise each spin density
// is raised to at least the threshold.
func (s screen) clampPol(ra, rb float64) (float64, float64, bool) {
	if ra+rb < s.dens {
		return 0, 0, false
	}
	return max(s.dens, ra), max(s.dens, rb), true
}

// clampSigmaPol raises σαα and σββ to at least sigma_threshold² and clips
// σαβ to ±(σαα+σββ)/2, as libxc does, so that |∇ρ|² ≥ 0.
func (s screen) clampSigmaPol(saa, sab, sbb float64) (float64, float64, float64) {
	saa = max(s.sigma2, saa)
	sbb = max(s.sigma2, sbb)
	ave := 0.5 * (saa + sbb)
	if !(sab >= -ave) {
		sab = -ave
	}
	if !(sab <= ave) {
		sab = ave
	}
	return saa, sab, sbb
}

// spin holds the spin variables of one point as libxc forms them.
type spin struct {
	n, zeta  float64
	opz, omz float64 // 1+ζ and 1−ζ
	// loA, loB report 1±ζ at or below the zeta threshold as libxc's
	// exchange functionals test it: 2ρα/n ≤ zetaThreshold (resp. ρβ),
	// without the cancellation in 1±ζ. Its correlation functionals test
	// the computed 1±ζ instead (corrLo).
	loA, loB bool
}

// spinVars returns the spin variables of (ρα, ρβ). ζ and 1±ζ are computed
// in the same order of floating-point operations as libxc, so that 1∓ζ
// carries the same rounding when |ζ| ≈ 1.
func spinVars(ra, rb float64) spin {
	n := ra + rb
	inv := 1 / n
	zeta := (ra - rb) * inv
	return spin{n: n, zeta: zeta, opz: 1 + zeta, omz: 1 + (-zeta),
		loA: 2*ra*inv <= zetaThreshold, loB: 2*rb*inv <= zetaThreshold}
}

// corrLo is the zeta-threshold test of libxc's correlation functionals:
// the computed 1±ζ at or below zetaThreshold.
func corrLo(opz float64) bool { return opz <= zetaThreshold }

// pow43 returns h = (1+z)^(4/3) given opz = 1+z and c = opz^(1/3), held
// at zetaThreshold^(4/3) when lo (1+z at the zeta threshold), and dh/dopz.
func pow43(opz, c float64, lo bool) (h, dh float64) {
	if lo {
		return zetaThr43, 0
	}
	return c * opz, 4.0 / 3.0 * c
}

// pow23 is pow43 for the exponent 2/3.
func pow23(c float64, lo bool) (h, dh float64) {
	if lo {
		return zetaThr23, 0
	}
	return c * c, 2.0 / 3.0 / c
}

// zetaThreshold^(1/3) powers, written out (cbrt(2^-52) = 2^-52/3).
const (
	zetaThr13 = 6.0554544523933390607898927279369669e-06 // zetaThreshold^(1/3)
	zetaThr23 = zetaThr13 * zetaThr13
	zetaThr43 = zetaThr13 * zetaThreshold
)

// fZeta is the spin-interpolation function
// f(ζ) = [(1+ζ)^(4/3) + (1−ζ)^(4/3) − 2]/(2^(4/3) − 2)
// with thresholded powers, and df/dζ, given ca = (1+ζ)^(1/3) and
// cb = (1−ζ)^(1/3).
func fZeta(s *spin, ca, cb float64) (f, df float64) {
	a, da := pow43(s.opz, ca, corrLo(s.opz))
	b, db := pow43(s.omz, cb, corrLo(s.omz))
	return (a + b - 2) / fZetaDen, (da - db) / fZetaDen
}

// fZetaDen is 2^(4/3) − 2.
const fZetaDen = 0.51984209978974632953442121455645670
