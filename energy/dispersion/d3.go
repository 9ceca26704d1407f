package dispersion

import (
	"fmt"
	"math"

	"poise/energy/molecule"
)

// minDistanceBohr is the smallest distance Compute accepts between two
// atoms; closer atoms make the counting function's derivative undefined.
const minDistanceBohr = 1e-6

// Result is the D3(BJ) two-body correction of one structure.
type Result struct {
	// EnergyHartree is the dispersion energy, Eh.
	EnergyHartree float64
	// Gradient is dE/dR per atom, Eh/bohr; nil unless asked for.
	Gradient [][3]float64
	// C6 is the diagonal coefficient C6_AA of each atom at its own
	// coordination number, Eh·bohr⁶.
	C6 []float64
	// CN is the D3 coordination number of each atom.
	CN []float64
}

// ForMolecule is Compute for the nuclei of m.
func ForMolecule(m *molecule.Molecule, p Params, wantGradient bool) (Result, error) {
	z := make([]int, len(m.Atoms))
	pos := make([][3]float64, len(m.Atoms))
	for i := range m.Atoms {
		z[i] = m.Atoms[i].Z
		pos[i] = m.Atoms[i].Position
	}
	return Compute(z, pos, p, wantGradient)
}

// Compute returns the D3(BJ) dispersion energy of atoms with atomic numbers
// z at posBohr, their coordination numbers and C6 coefficients, and with
// wantGradient the analytic gradient (pair terms and the chain rule through
// the coordination numbers). The work is O(N²) in the number of atoms and
// allocates only O(N) scratch. Elements beyond Kr, coincident atoms and
// non-finite coordinates or parameters are errors. Compute only reads the
// embedded tables and is safe for concurrent use.
func Compute(z []int, posBohr [][3]float64, p Params, wantGradient bool) (Result, error) {
	t, err := loadTables()
	if err != nil {
		return Result{}, fmt.Errorf("dispersion data: %w", err)
	}
	n := len(z)
	if len(posBohr) != n {
		return Result{}, fmt.Errorf("dispersion: %d atomic numbers but %d positions", n, len(posBohr))
	}
	for _, v := range [4]float64{p.S6, p.A1, p.S8, p.A2Bohr} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return Result{}, fmt.Errorf("dispersion: damping parameters %+v are not finite", p)
		}
	}
	for i, zi := range z {
		if zi < 1 || zi > MaxZ {
			return Result{}, fmt.Errorf("dispersion: atom %d has Z %d; D3 data cover H to Kr (Z 1–%d)", i+1, zi, MaxZ)
		}
		for k := 0; k < 3; k++ {
			if x := posBohr[i][k]; math.IsNaN(x) || math.IsInf(x, 0) {
				return Result{}, fmt.Errorf("dispersion: atom %d has a non-finite coordinate", i+1)
			}
		}
	}

	res := Result{C6: make([]float64, n), CN: make([]float64, n)}
	cn := res.CN

	// Coordination numbers (Grimme et al. 2010, Eq. 15), 40-bohr cutoff.
	const cut2 = CNCutoffBohr * CNCutoffBohr
	for i := 1; i < n; i++ {
		pi := posBohr[i]
		ri := t.rcov[z[i]]
		for j := 0; j < i; j++ {
			dx, dy, dz := pi[0]-posBohr[j][0], pi[1]-posBohr[j][1], pi[2]-posBohr[j][2]
			r2 := dx*dx + dy*dy + dz*dz
			if r2 < minDistanceBohr*minDistanceBohr {
				return Result{}, fmt.Errorf("dispersion: atoms %d and %d coincide", j+1, i+1)
			}
			if r2 >= cut2 {
				continue
			}
			f := 1 / (1 + math.Exp(-countSteepness*((ri+t.rcov[z[j]])/math.Sqrt(r2)-1)))
			cn[i] += f
			cn[j] += f
		}
	}

	// Gaussian weights of the references (Eq. 17) and their CN derivatives,
	// with the largest exponent factored out.
	w := make([]float64, n*maxRef)
	var dw []float64
	if wantGradient {
		dw = make([]float64, n*maxRef)
	}
	for i := 0; i < n; i++ {
		zi := z[i]
		nr := t.nref[zi]
		wi := w[i*maxRef : i*maxRef+nr]
		var d [maxRef]float64
		emax := math.Inf(-1)
		for a := 0; a < nr; a++ {
			x := cn[i] - t.refCN[zi][a]
			e := -weightSteepness * x * x
			wi[a] = e
			d[a] = -2 * weightSteepness * x
			emax = math.Max(emax, e)
		}
		s := 0.0
		for a := range wi {
			wi[a] = math.Exp(wi[a] - emax)
			s += wi[a]
		}
		dbar := 0.0
		for a := range wi {
			wi[a] /= s
			dbar += wi[a] * d[a]
		}
		if wantGradient {
			dwi := dw[i*maxRef : i*maxRef+nr]
			for a := range dwi {
				dwi[a] = wi[a] * (d[a] - dbar)
			}
		}
		// Diagonal C6 at the atom's own CN.
		base := c6Index(zi, zi)
		c := 0.0
		for a := 0; a < nr; a++ {
			row := t.c6[base+a*maxRef : base+a*maxRef+nr]
			sa := 0.0
			for b, v := range row {
				sa += wi[b] * v
			}
			c += wi[a] * sa
		}
		res.C6[i] = c
	}

	var grad [][3]float64
	var dEdCN []float64
	if wantGradient {
		grad = make([][3]float64, n)
		dEdCN = make([]float64, n)
	}
	s6, s8, a1, a2 := p.S6, p.S8, p.A1, p.A2Bohr
	energy := 0.0
	for i := 1; i < n; i++ {
		zi := z[i]
		nri := t.nref[zi]
		wi := w[i*maxRef : i*maxRef+nri]
		var dwi []float64
		if wantGradient {
			dwi = dw[i*maxRef : i*maxRef+nri]
		}
		pi := posBohr[i]
		qi := t.q[zi]
		rowEnergy := 0.0
		for j := 0; j < i; j++ {
			zj := z[j]
			nrj := t.nref[zj]
			wj := w[j*maxRef : j*maxRef+nrj]
			base := c6Index(zi, zj)
			// C6_ij and, for the gradient, its derivatives by CN_i and CN_j.
			c6, dci, dcj := 0.0, 0.0, 0.0
			if wantGradient {
				dwj := dw[j*maxRef : j*maxRef+nrj]
				for a := 0; a < nri; a++ {
					row := t.c6[base+a*maxRef : base+a*maxRef+nrj]
					sa, dsa := 0.0, 0.0
					for b, v := range row {
						sa += wj[b] * v
						dsa += dwj[b] * v
					}
					c6 += wi[a] * sa
					dci += dwi[a] * sa
					dcj += wi[a] * dsa
				}
			} else {
				for a := 0; a < nri; a++ {
					row := t.c6[base+a*maxRef : base+a*maxRef+nrj]
					sa := 0.0
					for b, v := range row {
						sa += wj[b] * v
					}
					c6 += wi[a] * sa
				}
			}
			dx, dy, dz := pi[0]-posBohr[j][0], pi[1]-posBohr[j][1], pi[2]-posBohr[j][2]
			r2 := dx*dx + dy*dy + dz*dz
			r4 := r2 * r2
			r6 := r4 * r2
			r8 := r6 * r2
			qq := 3 * qi * t.q[zj] // C8/C6
			r0 := a1*math.Sqrt(qq) + a2
			r02 := r0 * r0
			r06 := r02 * r02 * r02
			t6 := 1 / (r6 + r06)
			t8 := 1 / (r8 + r06*r02)
			dEdC6 := -(s6*t6 + s8*qq*t8)
			rowEnergy += dEdC6 * c6
			if wantGradient {
				dEdCN[i] += dEdC6 * dci
				dEdCN[j] += dEdC6 * dcj
				// (dE/dr)/r
				f := c6 * (6*s6*r4*t6*t6 + 8*s8*qq*r6*t8*t8)
				grad[i][0] += f * dx
				grad[i][1] += f * dy
				grad[i][2] += f * dz
				grad[j][0] -= f * dx
				grad[j][1] -= f * dy
				grad[j][2] -= f * dz
			}
		}
		energy += rowEnergy
	}
	res.EnergyHartree = energy
	if !wantGradient {
		return res, nil
	}

	// Chain rule through the coordination numbers:
	// dE/dR = Σ_{i<j} (∂E/∂CN_i + ∂E/∂CN_j) dCN_ij/dr · ∂r/∂R.
	for i := 1; i < n; i++ {
		pi := posBohr[i]
		ri := t.rcov[z[i]]
		for j := 0; j < i; j++ {
			dx, dy, dz := pi[0]-posBohr[j][0], pi[1]-posBohr[j][1], pi[2]-posBohr[j][2]
			r2 := dx*dx + dy*dy + dz*dz
			if r2 >= cut2 {
				continue
			}
			r := math.Sqrt(r2)
			rs := ri + t.rcov[z[j]]
			ex := math.Exp(-countSteepness * (rs/r - 1))
			den := 1 + ex
			dfdr := -ex * countSteepness * rs / (r2 * den * den)
			f := (dEdCN[i] + dEdCN[j]) * dfdr / r
			grad[i][0] += f * dx
			grad[i][1] += f * dy
			grad[i][2] += f * dz
			grad[j][0] -= f * dx
			grad[j][1] -= f * dy
			grad[j][2] -= f * dz
		}
	}
	res.Gradient = grad
	return res, nil
}
