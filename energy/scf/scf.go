package scf

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"time"

	"poise/energy/basis"
	"poise/energy/integral"
	"poise/energy/molecule"
)

// Default convergence thresholds. They are tight enough for energies that
// are differentiated numerically later (finite-difference gradients and
// Hessians): an orbital-gradient error ε leaves an energy error of order ε².
const (
	DefaultEnergyTolerance   = 1e-10 // Eh, change of the total energy between iterations
	DefaultGradientTolerance = 1e-7  // largest element of FDS − SDF in the orthonormal basis
	DefaultMaxIterations     = 128
	DefaultLinearDependence  = 1e-7 // overlap eigenvalues below this are dropped
	defaultDIISVectors       = 8
	levelShiftHartree        = 0.5 // virtual-orbital shift applied when DIIS stalls
)

// ErrNotConverged is returned (wrapped) when the SCF exhausts its iterations.
var ErrNotConverged = errors.New("SCF did not converge")

// XC is an exchange–correlation potential for Kohn–Sham DFT. Hartree–Fock
// uses none.
type XC interface {
	// ExactExchange is the fraction of exact (Hartree–Fock) exchange.
	ExactExchange() float64
	// Build evaluates the exchange–correlation energy for the given densities
	// (one total density for restricted, α and β for unrestricted) and adds
	// the potential matrices into v (same layout). It returns the energy and
	// the integrated number of electrons.
	Build(ctx context.Context, dens [][]float64, v [][]float64) (exc, electrons float64, err error)
}

// Options controls one SCF calculation. The zero value asks for defaults.
type Options struct {
	Unrestricted      bool    // UHF/UKS even for a closed-shell singlet
	MaxIterations     int     // default DefaultMaxIterations
	EnergyTolerance   float64 // default DefaultEnergyTolerance
	GradientTolerance float64 // default DefaultGradientTolerance
	LinearDependence  float64 // default DefaultLinearDependence
	Threads           int     // default: all cores
	MemoryBytes       int64   // budget for in-core integrals; 0: 1 GiB
	XC                XC      // nil for Hartree–Fock
	Guess             *State  // warm start from an earlier density (same basis)
	// Progress, if set, is called after every iteration.
	Progress func(Iteration)
}

// Iteration describes one SCF cycle, for progress display.
type Iteration struct {
	Number        int
	EnergyHartree float64
	Change        float64
	Gradient      float64 // largest element of the orbital gradient
	LevelShift    bool
}

// State is what a later SCF can start from: the spin densities in the AO
// basis. It is plain data that can be saved and restored.
type State struct {
	NBF     int         `json:"nbf"`
	Density [][]float64 `json:"density"` // one total density (restricted) or α and β
}

// Result is a finished (or abandoned) SCF calculation.
type Result struct {
	Converged    bool
	Iterations   int
	Unrestricted bool

	EnergyHartree       float64 // total energy
	NuclearRepulsion    float64
	OneElectronEnergy   float64 // Tr[D h]
	TwoElectronEnergy   float64 // Coulomb and exact exchange
	XCEnergy            float64 // exchange–correlation energy (DFT)
	IntegratedElectrons float64 // ∫ρ on the DFT grid (DFT)

	NumAlpha, NumBeta int
	NBF               int // basis functions
	NumDropped        int // functions removed for near-linear dependence
	InCore            bool

	// OrbitalEnergies[s] and Coefficients[s] per spin (one entry for
	// restricted): energies ascending; coefficients NBF×NMO row-major.
	OrbitalEnergies [][]float64
	Coefficients    [][]float64
	NMO             int

	Density         [][]float64 // per spin (restricted: the total density)
	S2              float64     // ⟨S²⟩ (unrestricted; exact value for restricted)
	DipoleAU        [3]float64  // about the centre of mass, e·bohr
	MullikenCharges []float64
	FinalGradient   float64
	Wall            time.Duration
}

// State returns the warm-start state of the result.
func (r *Result) State() *State {
	d := make([][]float64, len(r.Density))
	for i := range d {
		d[i] = append([]float64(nil), r.Density[i]...)
	}
	return &State{NBF: r.NBF, Density: d}
}

// Run performs a restricted or unrestricted Hartree–Fock (or Kohn–Sham, with
// opt.XC) calculation for mol in the given shells. mol must have its spin
// set (molecule.SetSpin). On failure to converge it returns the last result
// together with an error wrapping ErrNotConverged.
func Run(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options) (*Result, error) {
	start := time.Now()
	opt = withDefaults(opt)
	na, nb := mol.NumAlpha(), mol.NumBeta()
	if na+nb == 0 {
		return nil, fmt.Errorf("the molecule has no electrons (charge %+d): nothing to compute", mol.Charge)
	}
	unrestricted := opt.Unrestricted || na != nb
	b := integral.NewBasis(shells)
	n := b.NBF
	if na > n {
		return nil, fmt.Errorf("%d α electrons do not fit in %d basis functions", na, n)
	}
	s := b.Overlap()
	h := b.Kinetic()
	charges, centers := nuclei(mol)
	v := b.Nuclear(charges, centers)
	for i := range h {
		h[i] += v[i]
	}
	x, m, dropped, err := orthogonalizer(s, n, opt.LinearDependence)
	if err != nil {
		return nil, err
	}
	if na > m {
		return nil, fmt.Errorf("%d α electrons do not fit in %d linearly independent functions", na, m)
	}
	jk, err := newJKBuilder(ctx, b, opt.Threads, opt.MemoryBytes)
	if err != nil {
		return nil, err
	}

	nspin := 1
	if unrestricted {
		nspin = 2
	}
	occ := occupations(unrestricted, na, nb)

	// Starting density.
	var dens [][]float64
	if g := opt.Guess; g != nil && g.NBF == n && len(g.Density) > 0 {
		dens = adaptDensity(g.Density, nspin)
	} else {
		dsad, err := atomicDensityGuess(ctx, mol, shells, b, opt)
		if err != nil {
			return nil, fmt.Errorf("starting guess: %w", err)
		}
		dens = adaptDensity([][]float64{dsad}, nspin)
		if unrestricted && na != nb {
			// Give the α and β guesses their electron counts.
			ne := float64(na + nb)
			for i := range dens[0] {
				dens[0][i] *= 2 * float64(na) / ne
				dens[1][i] *= 2 * float64(nb) / ne
			}
		}
	}

	res := &Result{
		Unrestricted:     unrestricted,
		NuclearRepulsion: mol.NuclearRepulsion(),
		NumAlpha:         na,
		NumBeta:          nb,
		NBF:              n,
		NMO:              m,
		NumDropped:       dropped,
		InCore:           jk.InCore(),
	}
	ax := 1.0
	if opt.XC != nil {
		ax = opt.XC.ExactExchange()
	}
	acc := newDIIS(defaultDIISVectors)
	var focks [][]float64
	var coefs [][]float64
	var energies [][]float64
	prevE := 0.0
	bestErr := math.Inf(1)
	bestAt := 0
	shift := false
	for it := 1; it <= opt.MaxIterations; it++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		var e float64
		focks, e, err = fockAndEnergy(ctx, jk, h, dens, ax, opt.XC, unrestricted, res)
		if err != nil {
			return nil, err
		}
		e += res.NuclearRepulsion
		// Orbital gradient FDS − SDF in the orthonormal basis.
		errv := make([]float64, 0, nspin*m*m)
		maxErr := 0.0
		for sp := 0; sp < nspin; sp++ {
			fds := mul(mul(focks[sp], n, n, dens[sp], n), n, n, s, n)
			comm := make([]float64, n*n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					comm[i*n+j] = fds[i*n+j] - fds[j*n+i]
				}
			}
			ce := transform(x, n, m, comm)
			for _, v := range ce {
				if a := math.Abs(v); a > maxErr {
					maxErr = a
				}
			}
			errv = append(errv, ce...)
		}
		change := e - prevE
		res.EnergyHartree = e
		res.Iterations = it
		res.FinalGradient = maxErr
		if opt.Progress != nil {
			opt.Progress(Iteration{Number: it, EnergyHartree: e, Change: change, Gradient: maxErr, LevelShift: shift})
		}
		if it > 1 && math.Abs(change) < opt.EnergyTolerance && maxErr < opt.GradientTolerance {
			res.Converged = true
			break
		}
		prevE = e
		// Stall detection: no tenfold improvement of the orbital gradient in
		// 8 iterations switches on a level shift and restarts DIIS.
		if maxErr < bestErr/10 || it == 1 {
			bestErr, bestAt = maxErr, it
		} else if !shift && it-bestAt >= 8 {
			shift = true
			acc.reset()
			bestErr, bestAt = maxErr, it
		}
		acc.push(focks, errv)
		use := focks
		if it > 1 {
			if ex := acc.extrapolate(); ex != nil {
				use = ex
			}
		}
		coefs = make([][]float64, nspin)
		energies = make([][]float64, nspin)
		for sp := 0; sp < nspin; sp++ {
			fo := transform(x, n, m, use[sp])
			if shift && it > 1 {
				applyLevelShift(fo, m, x, s, dens[sp], n, levelShiftHartree, len(occ[sp]))
			}
			vals, vecs, err := eigenSym(fo, m)
			if err != nil {
				return nil, err
			}
			coefs[sp] = mul(x, n, m, vecs, m)
			energies[sp] = vals
			dens[sp] = densityFromOrbitals(coefs[sp], n, m, occ[sp])
		}
	}
	// Final orbitals from the last (unshifted, unextrapolated) Fock matrices.
	coefs = make([][]float64, nspin)
	energies = make([][]float64, nspin)
	for sp := 0; sp < nspin; sp++ {
		vals, vecs, err := eigenSym(transform(x, n, m, focks[sp]), m)
		if err != nil {
			return nil, err
		}
		coefs[sp] = mul(x, n, m, vecs, m)
		energies[sp] = vals
	}
	res.OrbitalEnergies = energies
	res.Coefficients = coefs
	res.Density = dens
	analyze(res, mol, b, s)
	res.Wall = time.Since(start)
	if !res.Converged {
		return res, fmt.Errorf("%w in %d iterations (last energy %.10f Eh, orbital gradient %.2e, energy change above %.0e Eh or gradient above %.0e)",
			ErrNotConverged, res.Iterations, res.EnergyHartree, res.FinalGradient, opt.EnergyTolerance, opt.GradientTolerance)
	}
	return res, nil
}

func withDefaults(o Options) Options {
	if o.MaxIterations <= 0 {
		o.MaxIterations = DefaultMaxIterations
	}
	if o.EnergyTolerance <= 0 {
		o.EnergyTolerance = DefaultEnergyTolerance
	}
	if o.GradientTolerance <= 0 {
		o.GradientTolerance = DefaultGradientTolerance
	}
	if o.LinearDependence <= 0 {
		o.LinearDependence = DefaultLinearDependence
	}
	if o.Threads <= 0 {
		o.Threads = runtime.GOMAXPROCS(0)
	}
	if o.MemoryBytes <= 0 {
		o.MemoryBytes = 1 << 30
	}
	return o
}

func nuclei(mol *molecule.Molecule) ([]float64, [][3]float64) {
	charges := make([]float64, len(mol.Atoms))
	centers := make([][3]float64, len(mol.Atoms))
	for i, a := range mol.Atoms {
		charges[i] = float64(a.Z)
		centers[i] = a.Position
	}
	return charges, centers
}

// occupations returns the occupation numbers per spin channel: 2 for the
// doubly occupied orbitals of a restricted calculation, 1 per spin orbital
// otherwise.
func occupations(unrestricted bool, na, nb int) [][]float64 {
	if !unrestricted {
		o := make([]float64, na)
		for i := range o {
			o[i] = 2
		}
		return [][]float64{o}
	}
	oa := make([]float64, na)
	ob := make([]float64, nb)
	for i := range oa {
		oa[i] = 1
	}
	for i := range ob {
		ob[i] = 1
	}
	return [][]float64{oa, ob}
}

// adaptDensity converts a list of densities (one total or α and β) to the
// layout of nspin channels.
func adaptDensity(in [][]float64, nspin int) [][]float64 {
	if len(in) == nspin {
		out := make([][]float64, nspin)
		for i := range in {
			out[i] = append([]float64(nil), in[i]...)
		}
		return out
	}
	if nspin == 1 { // α + β → total
		t := append([]float64(nil), in[0]...)
		for i, v := range in[1] {
			t[i] += v
		}
		return [][]float64{t}
	}
	// total → α = β = total/2
	a := make([]float64, len(in[0]))
	for i, v := range in[0] {
		a[i] = 0.5 * v
	}
	return [][]float64{a, append([]float64(nil), a...)}
}

// fockAndEnergy builds the Fock matrices for the densities and returns them
// with the electronic energy (without nuclear repulsion). It records the
// energy parts in res.
func fockAndEnergy(ctx context.Context, jk *jkBuilder, h []float64, dens [][]float64, ax float64, xc XC, unrestricted bool, res *Result) ([][]float64, float64, error) {
	wantK := ax != 0
	J, K, err := jk.build(ctx, dens, wantK)
	if err != nil {
		return nil, 0, err
	}
	nspin := len(dens)
	focks := make([][]float64, nspin)
	var e1, e2 float64
	for sp := 0; sp < nspin; sp++ {
		f := make([]float64, len(h))
		kf := ax
		if !unrestricted {
			kf = 0.5 * ax
		}
		for i := range f {
			f[i] = h[i] + J[i]
			if wantK {
				f[i] -= kf * K[sp][i]
			}
		}
		focks[sp] = f
		e1 += dot(dens[sp], h)
		e2 += 0.5 * dot(dens[sp], J)
		if wantK {
			e2 -= 0.5 * kf * dot(dens[sp], K[sp])
		}
	}
	var exc float64
	if xc != nil {
		var ne float64
		exc, ne, err = xc.Build(ctx, dens, focks)
		if err != nil {
			return nil, 0, err
		}
		res.IntegratedElectrons = ne
	}
	res.OneElectronEnergy = e1
	res.TwoElectronEnergy = e2
	res.XCEnergy = exc
	return focks, e1 + e2 + exc, nil
}

// applyLevelShift adds shift·(1 − P_occ) to the Fock matrix fo in the
// orthonormal basis, where P_occ projects onto the occupied space of the
// current density: virtual orbitals move up by shift, which damps
// occupied–virtual mixing (Saunders & Hillier, Int. J. Quantum Chem. 7, 699
// (1973)). The density d is in the AO basis; in the orthonormal basis the
// occupied projector is Xᵀ S D S X divided by the occupation.
func applyLevelShift(fo []float64, m int, x, s, d []float64, n int, shift float64, nocc int) {
	if nocc == 0 {
		return
	}
	sds := mul(mul(s, n, n, d, n), n, n, s, n)
	p := transform(x, n, m, sds)
	// Occupation per orbital: trace of p is the electron count.
	tr := 0.0
	for i := 0; i < m; i++ {
		tr += p[i*m+i]
	}
	occ := tr / float64(nocc)
	if occ == 0 {
		return
	}
	for i := 0; i < m; i++ {
		for j := 0; j < m; j++ {
			v := -shift * p[i*m+j] / occ
			if i == j {
				v += shift
			}
			fo[i*m+j] += v
		}
	}
}
