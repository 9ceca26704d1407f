package gradient

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"

	"poise/energy/basis"
	"poise/energy/dft"
	"poise/energy/fit"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
)

// Contributions is an analytic gradient and its parts, each [atom][x, y, z]
// in hartree/bohr. Total is the sum of the others.
type Contributions struct {
	Total [][3]float64
	// Overlap is −Σ W_μν ∂S_μν/∂R_A, W the energy-weighted density.
	Overlap [][3]float64
	// Core is Σ D_μν ∂h_μν/∂R_A: kinetic and nuclear attraction, the
	// latter with its operator (Hellmann–Feynman) part.
	Core [][3]float64
	// TwoElectron is the derivative of the Coulomb and exact-exchange
	// energy at fixed densities.
	TwoElectron [][3]float64
	// XC is the exchange–correlation part (DFT; zero for Hartree–Fock).
	XC [][3]float64
	// NuclearRepulsion is the derivative of Σ Z_A Z_B / R_AB.
	NuclearRepulsion [][3]float64
}

// ErrNotConverged is returned (wrapped) by Analytic for an SCF result that
// did not converge: the analytic formula assumes a stationary energy.
var ErrNotConverged = errors.New("the analytic gradient needs a converged SCF")

// Analytic returns the analytic nuclear gradient of a converged SCF result
// res for mol in shells (the shells the SCF used; shell centres on the
// atoms). xc is the Kohn–Sham potential the SCF used (nil for
// Hartree–Fock); its grid must be the one of this geometry, and its stored
// function values are freed first (dft.Potential.ReleaseCache: the
// gradient does not use them, and a density fit needs the room; the
// XCCacheBytes budget counts on it). The density fit of a fitted SCF
// (res.Fit) is used up by its gradient, which forms its two-particle
// density in the fit's memory (fit.GradientReleasing): res.Fit is nil
// afterwards. threads ≤ 0 means all cores; the result does not depend on
// threads.
//
// The formula is that of a variational SCF energy (J. A. Pople,
// R. Krishnan, H. B. Schlegel, J. S. Binkley, Int. J. Quantum Chem. Symp.
// 13, 225 (1979); for Kohn–Sham, B. G. Johnson, P. M. W. Gill, J. A. Pople,
// J. Chem. Phys. 98, 5612 (1993)):
//
//	dE/dR_A = Σ D ∂h/∂R_A + ∂E2/∂R_A − Σ W ∂S/∂R_A + ∂E_xc/∂R_A + ∂V_nn/∂R_A
//
// with D the total density and W = Σ_s Σ_i n_i ε_i C_i C_iᵀ, both formed
// from the final orbitals of res.
func Analytic(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, res *scf.Result, xc *dft.Potential, threads int) (*Contributions, error) {
	if res == nil {
		return nil, errors.New("gradient: no SCF result")
	}
	if !res.Converged {
		return nil, fmt.Errorf("gradient: %w (last orbital gradient %.2e)", ErrNotConverged, res.FinalGradient)
	}
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	if xc != nil {
		xc.ReleaseCache()
	}
	nat := len(mol.Atoms)
	b := integral.NewBasis(shells)
	n := b.NBF
	if res.NBF != n {
		return nil, fmt.Errorf("gradient: SCF result has %d basis functions, shells have %d", res.NBF, n)
	}
	for i := range shells {
		if a := shells[i].Atom; a < 0 || a >= nat {
			return nil, fmt.Errorf("gradient: shell %d sits on atom %d of %d", i, a, nat)
		}
	}
	dens, w, err := densities(res)
	if err != nil {
		return nil, err
	}
	dtot := dens[0]
	if len(dens) == 2 {
		dtot = make([]float64, n*n)
		for i := range dtot {
			dtot[i] = dens[0][i] + dens[1][i]
		}
	}
	charges := make([]float64, nat)
	centers := make([][3]float64, nat)
	for i, a := range mol.Atoms {
		charges[i] = float64(a.Z)
		centers[i] = a.Position
	}
	c := &Contributions{NuclearRepulsion: nuclearRepulsionGradient(mol)}

	// Two-electron part: the largest cost, parallel inside.
	ax := 1.0
	if xc != nil {
		ax = xc.ExactExchange()
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if res.AuxShells != nil {
		// The same density fit as the SCF: the derivative of the fitted
		// energy.
		f := res.Fit
		if f == nil {
			var err error
			if f, err = fit.New(ctx, b, integral.NewBasis(res.AuxShells), threads); err != nil {
				return nil, fmt.Errorf("gradient: density fitting: %w", err)
			}
		}
		// The SCF's fit is not needed after its gradient: G takes B's
		// memory, and the result no longer holds the fit.
		g, err := f.GradientReleasing(ctx, dens, ax, nat)
		res.Fit = nil
		if err != nil {
			return nil, fmt.Errorf("gradient: density-fitted two-electron part: %w", err)
		}
		c.TwoElectron = trim(g, nat)
	} else {
		eri := integral.NewERI(b)
		c.TwoElectron = trim(eri.GradientJK(dens, ax, nat, threads), nat)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if xc != nil {
		g, err := xc.Gradient(ctx, dens, nat)
		if err != nil {
			return nil, fmt.Errorf("gradient: exchange–correlation part: %w", err)
		}
		// The fixed-grid form leaves out the derivatives of the grid
		// weights. Their sum over atoms is exactly minus the net force of
		// the fixed-grid form, because the energy does not change when the
		// molecule and its grid are translated together; removing the net
		// force restores that invariance exactly (the remaining
		// weight-derivative error is ~1e-6 Eh/bohr on the default grid).
		removeNetForce(g)
		c.XC = g
	} else {
		c.XC = make([][3]float64, nat)
	}

	// One-electron parts: three independent serial routines, run side by
	// side within the thread budget.
	var ovl, kin, nuc [][3]float64
	jobs := []func(){
		func() { ovl = trim(b.OverlapGradient(w, nat), nat) },
		func() { kin = trim(b.KineticGradient(dtot, nat), nat) },
		func() { nuc = trim(b.NuclearGradient(dtot, charges, centers), nat) },
	}
	runJobs(jobs, threads)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	c.Overlap = make([][3]float64, nat)
	c.Core = make([][3]float64, nat)
	c.Total = make([][3]float64, nat)
	for a := 0; a < nat; a++ {
		for k := 0; k < 3; k++ {
			c.Overlap[a][k] = -ovl[a][k]
			c.Core[a][k] = kin[a][k] + nuc[a][k]
			c.Total[a][k] = c.Overlap[a][k] + c.Core[a][k] + c.TwoElectron[a][k] + c.XC[a][k] + c.NuclearRepulsion[a][k]
		}
	}
	return c, nil
}

// runJobs runs the jobs on up to threads goroutines.
func runJobs(jobs []func(), threads int) {
	if threads <= 1 {
		for _, j := range jobs {
			j()
		}
		return
	}
	var wg sync.WaitGroup
	next := make(chan func())
	for t := 0; t < min(threads, len(jobs)); t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := range next {
				j()
			}
		}()
	}
	for _, j := range jobs {
		next <- j
	}
	close(next)
	wg.Wait()
}

// trim returns the first n entries of g (the integral routines may return
// more when shells name higher atoms, which Analytic rules out).
func trim(g [][3]float64, n int) [][3]float64 {
	if len(g) < n {
		out := make([][3]float64, n)
		copy(out, g)
		return out
	}
	return g[:n]
}

// densities returns the density matrices per spin as the SCF and the
// integral routines lay them out (one total density for restricted, α and
// β for unrestricted) and the total energy-weighted density, all formed
// from the occupied orbitals of res.
func densities(res *scf.Result) (dens [][]float64, w []float64, err error) {
	n, m := res.NBF, res.NMO
	occ := []int{res.NumAlpha}
	fill := []float64{2}
	if res.Unrestricted {
		occ = []int{res.NumAlpha, res.NumBeta}
		fill = []float64{1, 1}
	}
	if len(res.Coefficients) != len(occ) || len(res.OrbitalEnergies) != len(occ) {
		return nil, nil, fmt.Errorf("gradient: SCF result has %d coefficient sets, want %d", len(res.Coefficients), len(occ))
	}
	w = make([]float64, n*n)
	dens = make([][]float64, len(occ))
	for s := range occ {
		cs, es := res.Coefficients[s], res.OrbitalEnergies[s]
		if len(cs) != n*m || len(es) < occ[s] || occ[s] > m {
			return nil, nil, fmt.Errorf("gradient: SCF result has inconsistent orbitals for spin %d", s)
		}
		d := make([]float64, n*n)
		for mu := 0; mu < n; mu++ {
			rm := cs[mu*m : mu*m+occ[s]]
			for nu := 0; nu <= mu; nu++ {
				rn := cs[nu*m : nu*m+occ[s]]
				var dv, wv float64
				for i, c := range rm {
					p := c * rn[i]
					dv += p
					wv += es[i] * p
				}
				dv *= fill[s]
				wv *= fill[s]
				d[mu*n+nu], d[nu*n+mu] = dv, dv
				w[mu*n+nu] += wv
				if nu != mu {
					w[nu*n+mu] += wv
				}
			}
		}
		dens[s] = d
	}
	return dens, w, nil
}

// nuclearRepulsionGradient returns ∂/∂R_A Σ_{B<C} Z_B Z_C / R_BC.
func nuclearRepulsionGradient(mol *molecule.Molecule) [][3]float64 {
	nat := len(mol.Atoms)
	g := make([][3]float64, nat)
	for a := 0; a < nat; a++ {
		pa := mol.Atoms[a].Position
		za := float64(mol.Atoms[a].Z)
		for b := 0; b < nat; b++ {
			if b == a {
				continue
			}
			pb := mol.Atoms[b].Position
			d := [3]float64{pa[0] - pb[0], pa[1] - pb[1], pa[2] - pb[2]}
			r := math.Sqrt(d[0]*d[0] + d[1]*d[1] + d[2]*d[2])
			f := za * float64(mol.Atoms[b].Z) / (r * r * r)
			for k := 0; k < 3; k++ {
				g[a][k] -= f * d[k]
			}
		}
	}
	return g
}

// removeNetForce subtracts the mean over atoms from every atom's vector.
func removeNetForce(g [][3]float64) {
	if len(g) == 0 {
		return
	}
	var net [3]float64
	for _, v := range g {
		for k := 0; k < 3; k++ {
			net[k] += v[k]
		}
	}
	for a := range g {
		for k := 0; k < 3; k++ {
			g[a][k] -= net[k] / float64(len(g))
		}
	}
}
