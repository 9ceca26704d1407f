package integral

// Distance-dependent bounds on electron-repulsion integrals.
//
// Every primitive product of a shell pair (α on A, β on B, ζ = α+β, centre
// P = (αA+βB)/ζ) is bounded in absolute value, for every Cartesian
// component, by a function that is spherically symmetric about P:
//
//	|x_A^{ax}y_A^{ay}z_A^{az} x_B^{bx}y_B^{by}z_B^{bz}| e^{−α r_A²−β r_B²}
//	    ≤ (|r−P| + c)^{la+lb} exp(−αβ/ζ·AB²) e^{−ζ|r−P|²},
//
// with c = max(|PA|, |PB|), since |x^{ax}y^{ay}z^{az}| ≤ |r|^{ax+ay+az}
// and |r−A| ≤ |r−P|+|PA|. Its integral, the primitive's charge bound q,
// is the bound of eriPrimThreshold. By Newton's theorem the potential of a
// non-negative distribution that is spherically symmetric about P is at
// most its charge over the distance from P, everywhere (1/max(r, R) ≤ 1/R).
// Applying that twice,
//
//	|(ab|cd)| ≤ Σ_pq q_p q_q / |P_p − Q_q|
//
// for every pair of primitive products p of the bra and q of the ket: a
// rigorous bound that falls off with distance, unlike the Cauchy–Schwarz
// bound (the far-field bound of the QQR idea of S. A. Maurer,
// D. S. Lambrecht, D. Flaig and C. Ochsenfeld, J. Chem. Phys. 136, 144107
// (2012), here without estimates: the Gaussian tails need no extent because
// Newton's theorem holds for overlapping distributions too). The primitive
// centres of a pair are grouped into a few shells around a pair centre,
// |P_p − Q_q| ≥ R − e_p − e_q, which keeps the bound cheap. The final
// functions are linear combinations of the Cartesian components: each row
// of a shell's transformation is bounded by the sum of its absolute
// coefficients times the largest value of its monomial on the unit sphere.

import (
	"math"
	"sort"
)

// PairChargeLevels is the number of nested spheres of a PairCharge.
const PairChargeLevels = 3

// PairCharge bounds the charge distribution of a shell pair by nested
// spheres around Center: Charge[k] bounds the absolute charge of the
// primitive products whose centres lie farther than Extent[k−1] and at most
// Extent[k] from Center (Extent is nondecreasing). The charges include the
// bounds of the shells' final transformations, so that FarFieldBound holds
// for every integral over the final functions.
type PairCharge struct {
	Center [3]float64
	Extent [PairChargeLevels]float64
	Charge [PairChargeLevels]float64
}

// pairChargeTail is the fraction of a pair's charge bound allowed beyond the
// inner spheres: level 0 holds all but a fraction pairChargeTail[0] of the
// charge, level 1 all but pairChargeTail[1] (a choice that only affects the
// tightness of the bound, never its validity).
var pairChargeTail = [PairChargeLevels - 1]float64{1e-3, 1e-8}

// PairCharges returns the PairCharge of every shell pair i ≥ j at index
// i(i+1)/2+j.
func (e *ERIEngine) PairCharges() []PairCharge {
	b := e.basis
	tb := make([]float64, e.nshell)
	for i := range tb {
		tb[i] = transformBound(&b.shells[i])
	}
	out := make([]PairCharge, e.nshell*(e.nshell+1)/2)
	type prim struct {
		p    [3]float64
		q, d float64
	}
	var prims []prim
	for i := 0; i < e.nshell; i++ {
		for j := 0; j <= i; j++ {
			sa, sb := &b.shells[i], &b.shells[j]
			var ab2 float64
			for k := 0; k < 3; k++ {
				d := sa.center[k] - sb.center[k]
				ab2 += d * d
			}
			L := float64(sa.l + sb.l)
			gL := math.Gamma((L+3)/2) / math.Gamma(1.5)
			prims = prims[:0]
			var qsum float64
			var cen [3]float64
			for u, al := range sa.exps {
				for v, be := range sb.exps {
					z := al + be
					var pr prim
					var dpa, dpb float64
					for k := 0; k < 3; k++ {
						pr.p[k] = (al*sa.center[k] + be*sb.center[k]) / z
						x := pr.p[k] - sa.center[k]
						dpa += x * x
						y := pr.p[k] - sb.center[k]
						dpb += y * y
					}
					pr.q = math.Abs(sa.coefs[u]*sb.coefs[v]) * math.Exp(-al*be/z*ab2) * math.Pow(math.Pi/z, 1.5) * gL *
						math.Pow(math.Sqrt(math.Max(dpa, dpb))+1/math.Sqrt(z), L)
					pr.q *= tb[i] * tb[j]
					qsum += pr.q
					for k := 0; k < 3; k++ {
						cen[k] += pr.q * pr.p[k]
					}
					prims = append(prims, pr)
				}
			}
			var pc PairCharge
			if qsum > 0 {
				for k := 0; k < 3; k++ {
					cen[k] /= qsum
				}
			} else {
				cen = sa.center
			}
			pc.Center = cen
			for x := range prims {
				var d2 float64
				for k := 0; k < 3; k++ {
					d := prims[x].p[k] - cen[k]
					d2 += d * d
				}
				prims[x].d = math.Sqrt(d2)
			}
			sort.Slice(prims, func(x, y int) bool { return prims[x].d < prims[y].d })
			// Walk outward: level k closes once the charge beyond is at
			// most pairChargeTail[k] of the total.
			lev, beyond := 0, qsum
			for _, pr := range prims {
				for lev < PairChargeLevels-1 && beyond <= pairChargeTail[lev]*qsum {
					lev++
					pc.Extent[lev] = pc.Extent[lev-1]
				}
				pc.Charge[lev] += pr.q
				pc.Extent[lev] = math.Max(pc.Extent[lev], pr.d)
				beyond -= pr.q
			}
			for k := lev + 1; k < PairChargeLevels; k++ {
				pc.Extent[k] = pc.Extent[lev]
			}
			// Round the extents up a little so that rounding in the
			// distances computed from them never makes the bound too small.
			for k := range pc.Extent {
				pc.Extent[k] = pc.Extent[k]*(1+1e-12) + 1e-12
			}
			out[i*(i+1)/2+j] = pc
		}
	}
	return out
}

// FarFieldBound returns an upper bound on |(ij|kl)| for every integral over
// the final functions of the pairs described by a and b (see the comment
// at the top of chargebound.go), or +Inf when the spheres overlap too much
// for it.
func FarFieldBound(a, b *PairCharge) float64 {
	var r2 float64
	for k := 0; k < 3; k++ {
		d := a.Center[k] - b.Center[k]
		r2 += d * d
	}
	r := math.Sqrt(r2)
	if r <= a.Extent[PairChargeLevels-1]+b.Extent[PairChargeLevels-1] {
		return math.Inf(1)
	}
	var s float64
	for x := 0; x < PairChargeLevels; x++ {
		if a.Charge[x] == 0 {
			continue
		}
		var t float64
		for y := 0; y < PairChargeLevels; y++ {
			if b.Charge[y] != 0 {
				t += b.Charge[y] / (r - a.Extent[x] - b.Extent[y])
			}
		}
		s += a.Charge[x] * t
	}
	return s * (1 + 1e-12)
}

// transformBound bounds the absolute value of every final function of a
// shell by that of the axial component's radial factor: the largest sum
// over a row of the transformation of |coefficient| times the maximum of
// the component's monomial on the unit sphere,
// max |x^a y^b z^c| = √(a^a b^b c^c / l^l).
func transformBound(s *shellData) float64 {
	comps := cartesianExponents(s.l)
	mono := make([]float64, len(comps))
	for c, e := range comps {
		v := 1.0
		for _, a := range e {
			if a > 0 {
				v *= math.Pow(float64(a)/float64(s.l), float64(a))
			}
		}
		mono[c] = math.Sqrt(v)
	}
	var best float64
	for r := 0; r < s.nfunc; r++ {
		var sum float64
		for c := range comps {
			sum += math.Abs(s.trans[r*s.ncart+c]) * mono[c]
		}
		best = math.Max(best, sum)
	}
	return best * (1 + 1e-12)
}
