package grid

import "math"

// partition holds what the atomic cell functions need for one molecule.
type partition struct {
	n     int
	pos   [][3]float64
	invR  []float64 // n×n: 1/|R_A − R_B| (0 on the diagonal)
	adj   []float64 // n×n: size adjustment a_AB (Becke 1988, appendix)
	scheme int
}

const (
	schemeBecke = iota
	schemeSSF
)

// ssfA is the Stratmann–Scuseria–Frisch cutoff a = 0.64.
const ssfA = 0.64

func newPartition(z []int, pos [][3]float64, scheme int) *partition {
	n := len(z)
	p := &partition{n: n, pos: pos, invR: make([]float64, n*n), adj: make([]float64, n*n), scheme: scheme}
	for a := 0; a < n; a++ {
		for b := 0; b < n; b++ {
			if a == b {
				continue
			}
			d := math.Sqrt(sqDist(pos[a], pos[b]))
			p.invR[a*n+b] = 1 / d
			// Becke's appendix: χ = R_a/R_b, u = (χ−1)/(χ+1),
			// a = u/(u²−1), limited to |a| ≤ 1/2.
			chi := braggSlaterAngstrom[z[a]] / braggSlaterAngstrom[z[b]]
			u := (chi - 1) / (chi + 1)
			aab := u / (u*u - 1)
			if aab > 0.5 {
				aab = 0.5
			} else if aab < -0.5 {
				aab = -0.5
			}
			p.adj[a*n+b] = aab
		}
	}
	return p
}

// weight returns the cell function w_owner(r) = P_owner / Σ_B P_B at point
// r. d and cell are scratch buffers of length n.
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
			nu := mu + p.adj[a*n+b]*(1-mu*mu)
			var s float64
			if p.scheme == schemeSSF {
				s = ssfS(nu)
			} else {
				s = beckeS(nu)
			}
			cell[a] *= s
			cell[b] *= 1 - s
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
// p(x) = 3x/2 − x³/2 (A. D. Becke, J. Chem. Phys. 88, 2547 (1988), eqs. 19–21).
func beckeS(nu float64) float64 {
	f := nu
	for k := 0; k < 3; k++ {
		f = 1.5*f - 0.5*f*f*f
	}
	return 0.5 * (1 - f)
}

// ssfS is the Stratmann–Scuseria–Frisch cell function.
func ssfS(nu float64) float64 {
	if nu <= -ssfA {
		return 1
	}
	if nu >= ssfA {
		return 0
	}
	z := nu / ssfA
	z2 := z * z
	g := z * (35 + z2*(-35+z2*(21-5*z2))) / 16
	return 0.5 * (1 - g)
}

func sqDist(a, b [3]float64) float64 {
	dx, dy, dz := a[0]-b[0], a[1]-b[1], a[2]-b[2]
	return dx*dx + dy*dy + dz*dz
}
