package grid

import "math"

// partition holds what Becke's cell functions need for one molecule
// (A. D. Becke, J. Chem. Phys. 88, 2547 (1988)).
type partition struct {
	n    int
	pos  [][3]float64
	invR []float64 // n×n: 1/|R_A − R_B| (0 on the diagonal)
	adj  []float64 // n×n: atomic-size adjustment a_AB (Becke 1988, appendix)
}

func newPartition(z []int, pos [][3]float64) *partition {
	n := len(z)
	p := &partition{n: n, pos: pos, invR: make([]float64, n*n), adj: make([]float64, n*n)}
	for a := 0; a < n; a++ {
		for b := 0; b < n; b++ {
			if a == b {
				continue
			}
			p.invR[a*n+b] = 1 / math.Sqrt(sqDist(pos[a], pos[b]))
			p.adj[a*n+b] = sizeAdjustment(braggSlaterAngstrom[z[a]] / braggSlaterAngstrom[z[b]])
		}
	}
	return p
}

// sizeAdjustment returns Becke's a_AB for the radius ratio χ = R_A/R_B:
// u = (χ−1)/(χ+1), a = u/(u²−1), limited to |a| ≤ 1/2 (Becke 1988,
// appendix, eqs. A2, A5, A6). Then a_BA = −a_AB.
func sizeAdjustment(chi float64) float64 {
	u := (chi - 1) / (chi + 1)
	a := u / (u*u - 1)
	return math.Max(-0.5, math.Min(0.5, a))
}

// weight returns the cell function w_owner(r) = P_owner(r) / Σ_B P_B(r) at
// point r, with P_A = Π_{B≠A} s(ν_AB), ν_AB = μ_AB + a_AB(1 − μ_AB²) and
// μ_AB = (|r − R_A| − |r − R_B|)/|R_A − R_B| (Becke 1988, eqs. 11, 13, A2).
// d and cell are scratch buffers of length n.
func (p *partition) weight(r [3]float64, owner int, d, cell []float64) float64 {
	n := p.n
	if n == 1 {
		return 1
	}
	for b := 0; b < n; b++ {
		d[b] = math.Sqrt(sqDist(r, p.pos[b]))
		cell[b] = 1
	}
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			mu := (d[a] - d[b]) * p.invR[a*n+b]
			s := beckeS(mu + p.adj[a*n+b]*(1-mu*mu))
			cell[a] *= s
			cell[b] *= 1 - s // s(ν_BA) = s(−ν_AB) = 1 − s(ν_AB)
		}
	}
	sum := 0.0
	for b := 0; b < n; b++ {
		sum += cell[b]
	}
	if sum == 0 {
		return 0
	}
	return cell[owner] / sum
}

// beckeS is Becke's cell function s(ν) = ½(1 − f₃(ν)), f₃ = p∘p∘p,
// p(x) = 3x/2 − x³/2 (Becke 1988, eqs. 19–21).
func beckeS(nu float64) float64 {
	f := nu
	for k := 0; k < 3; k++ {
		f = 1.5*f - 0.5*f*f*f
	}
	return 0.5 * (1 - f)
}

func sqDist(a, b [3]float64) float64 {
	dx, dy, dz := a[0]-b[0], a[1]-b[1], a[2]-b[2]
	return dx*dx + dy*dy + dz*dz
}
