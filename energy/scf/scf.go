package scf

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"time"

	"poise/energy/basis"
	"poise/energy/buffer"
	"poise/energy/fit"
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
	// XCStart, if set, evaluates the same functional more cheaply (on a
	// coarser grid). A cold start (no Guess) uses it for its first
	// iterations, until the orbital gradient falls below
	// CoarseSwitchGradient, and then converges with XC; the result is
	// that of XC alone. Warm starts never use it.
	XCStart XC
	// Progress, if set, is called after every iteration.
	Progress func(Iteration)
	// StartGuess chooses the starting density when Guess is nil (default
	// the superposition of atomic densities).
	StartGuess GuessKind
	// Stability asks for the restricted → unrestricted (and, for
	// unrestricted results, internal) stability check of the converged
	// wavefunction, and optionally for following an instability.
	Stability StabilityMode
	// Log receives notices about the course of the calculation (fallbacks,
	// switches); nil discards them.
	Log func(msg string)
	// AuxShells, if set, is the auxiliary basis (shells on the same atoms)
	// in which the Coulomb and exchange terms are density fitted with the
	// Coulomb metric (RI-JK) instead of computed from four-centre
	// integrals. A Coulomb-only fitting set (basis.RoleJFit) serves
	// methods without exact exchange only.
	AuxShells []basis.Shell
	// Buffers, if set, lends the density fit its three-centre array
	// (fit.NewPooled); the caller hands it back by releasing Result.Fit.
	// It does not change results.
	Buffers *buffer.Pool
}

// Iteration describes one SCF cycle, for progress display.
type Iteration struct {
	Number        int
	EnergyHartree float64
	Change        float64
	Gradient      float64 // largest element of the orbital gradient
	LevelShift    bool
	CoarseGrid    bool // evaluated with Options.XCStart
}

// CoarseSwitchGradient is the orbital gradient below which a cold start
// leaves Options.XCStart for Options.XC: the density is then close to
// converged but still well above the coarse grid's own error (an orbital
// gradient of about 1e-4 on the full grid for benzene at level 1), so the
// last iterations are not spent on the coarse grid's answer. Measured on
// benzene B3LYP/6-31G*, 1e-3 took less CPU than 1e-4 and than a level-2
// start. coarseMaxIterations bounds the iterations on XCStart.
const (
	CoarseSwitchGradient = 1e-3
	coarseMaxIterations  = 16
)

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
	NBF               int  // basis functions
	NumDropped        int  // functions removed for near-linear dependence
	InCore            bool // every electron-repulsion integral kept in memory
	// StoredIntegralFraction is the fraction of the electron-repulsion
	// integrals kept in memory: 1 in core, 0 integral-direct, in between
	// semi-direct (the costliest to compute kept, see --memory).
	StoredIntegralFraction float64
	// AuxShells is the auxiliary basis of a density-fitted calculation
	// (Options.AuxShells), nil for four-centre integrals; the analytic
	// gradient uses the same fit.
	AuxShells []basis.Shell
	// Fit is the density fit of the calculation (nil without fitting),
	// kept so that the analytic gradient need not compute it again.
	Fit *fit.Fit

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

	// Guess names the starting density ("atomic densities", "core
	// Hamiltonian", "Hückel", "previous density").
	Guess string
	// Fallbacks lists, in order, every switch of the convergence ladder
	// and every stability-following step (the same notices go to
	// Options.Log).
	Fallbacks []string
	// Stability is the outcome of the stability check of the returned
	// wavefunction (nil when not asked for); Followed lists the checks of
	// earlier, unstable solutions that were followed to reach it.
	Stability *Stability
	Followed  []Stability

	// restarted: the fallback ladder restarted from the alternative guess.
	restarted bool
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
// set (molecule.SetSpin). Convergence is helped by the fallback ladder
// described in the package documentation; every switch is reported through
// opt.Log and listed in Result.Fallbacks. With opt.Stability set, the
// converged wavefunction is checked (and, for StabilityFollow, followed to a
// stable solution; see CheckStability). On failure to converge it returns
// the last result together with an error wrapping ErrNotConverged.
//
// With opt.StabilityFollow and a cold start (opt.Guess nil), an open-shell
// calculation (Nα ≠ Nβ) is also converged (and followed) from the
// alternative starting guess, and the lower stable solution is returned
// (the second-start search of the package documentation).
func Run(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options) (*Result, error) {
	res, err := runLadder(ctx, mol, shells, opt)
	if err != nil || opt.Stability == StabilityOff {
		return res, err
	}
	res, err = stabilityStage(ctx, mol, shells, opt, res)
	if err != nil || !wantSecondStart(mol, opt, res) {
		return res, err
	}
	return secondStart(ctx, mol, shells, opt, res)
}

// wantSecondStart says whether the second-start search runs for res: in
// follow mode, from a cold start, for open shells. Closed shells and warm
// starts (relaxations, finite differences) are left alone.
func wantSecondStart(mol *molecule.Molecule, opt Options, res *Result) bool {
	if opt.Stability != StabilityFollow || opt.Guess != nil || res == nil || !res.Converged {
		return false
	}
	return mol.NumAlpha() != mol.NumBeta()
}

// secondStart converges the calculation of first again from the
// alternative starting guess, follows it through the stability check, and
// returns the lower of the two stable solutions. Its notices are recorded
// in the returned result and sent to opt.Log.
func secondStart(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options, first *Result) (*Result, error) {
	note := func(r *Result, format string, args ...any) {
		msg := fmt.Sprintf(format, args...)
		r.Fallbacks = append(r.Fallbacks, msg)
		if opt.Log != nil {
			opt.Log(msg)
		}
	}
	alt := alternativeGuess(opt.StartGuess)
	if first.restarted {
		note(first, "second-start search (open shell): the fallback ladder already restarted from the %s guess; not repeated", alt)
		return first, nil
	}
	note(first, "second-start search (open shell): converging again from the %s guess", alt)
	o2 := opt
	o2.StartGuess = alt
	o2.Log = nil // its notices are copied below, in order
	second, err := runLadder(ctx, mol, shells, o2)
	if err == nil && math.Abs(second.EnergyHartree-first.EnergyHartree) <= secondStartMargin {
		// The same solution (or a symmetry-equivalent one): its stability
		// is that of the first, already checked.
		for _, f := range second.Fallbacks {
			note(first, "second-start search: %s", f)
		}
		note(first, "second-start search: the %s guess converges to the same solution (%+.2e Eh) in %d iterations; keeping the first",
			alt, second.EnergyHartree-first.EnergyHartree, second.Iterations)
		return first, nil
	}
	if err == nil {
		second, err = stabilityStage(ctx, mol, shells, o2, second)
	}
	if err != nil {
		if ctx.Err() != nil {
			return first, ctx.Err()
		}
		if second != nil {
			for _, f := range second.Fallbacks {
				note(first, "second-start search: %s", f)
			}
		}
		note(first, "second-start search: the %s guess did not lead to a solution (%v); keeping %.10f Eh", alt, err, first.EnergyHartree)
		return first, nil
	}
	for _, f := range second.Fallbacks {
		note(first, "second-start search: %s", f)
	}
	firstOK := first.Stability != nil && first.Stability.Stable
	secondOK := second.Stability != nil && second.Stability.Stable
	if secondOK && (!firstOK || second.EnergyHartree < first.EnergyHartree-secondStartMargin) {
		second.Fallbacks = first.Fallbacks
		note(second, "second-start search: the %s guess leads to a lower stable solution, %.10f Eh (%.2e Eh below %.10f Eh from the %s guess); keeping it",
			alt, second.EnergyHartree, second.EnergyHartree-first.EnergyHartree, first.EnergyHartree, first.Guess)
		return second, nil
	}
	note(first, "second-start search: the %s guess ends at %.10f Eh (%+.2e Eh); keeping %.10f Eh from the %s guess",
		alt, second.EnergyHartree, second.EnergyHartree-first.EnergyHartree, first.EnergyHartree, first.Guess)
	return first, nil
}

// secondStartMargin (Eh) is how much lower the second start's solution must
// be to replace the first: below it the two are the same solution within
// the convergence thresholds.
const secondStartMargin = 1e-8

// problem is what every SCF iteration of one calculation shares: the basis,
// its one-electron matrices, the orthogonalizer and the Fock builder.
type problem struct {
	mol          *molecule.Molecule
	shells       []basis.Shell
	b            *integral.Basis
	n, m         int
	s, h, x      []float64
	jk           fockBuilder
	unrestricted bool
	na, nb       int
	nspin        int
	occ          [][]float64
	ax           float64
	dropped      int
}

// newProblem sets up the basis, the one-electron matrices and the Fock
// builder for a calculation.
func newProblem(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options) (*problem, error) {
	na, nb := mol.NumAlpha(), mol.NumBeta()
	if na+nb == 0 {
		return nil, fmt.Errorf("the molecule has no electrons (charge %+d): nothing to compute", mol.Charge)
	}
	p := &problem{mol: mol, shells: shells, na: na, nb: nb}
	p.unrestricted = opt.Unrestricted || na != nb
	p.b = integral.NewBasis(shells)
	n := p.b.NBF
	p.n = n
	if na > n {
		return nil, fmt.Errorf("%d α electrons do not fit in %d basis functions", na, n)
	}
	p.s = p.b.Overlap()
	p.h = p.b.Kinetic()
	charges, centers := nuclei(mol)
	v := p.b.Nuclear(charges, centers)
	for i := range p.h {
		p.h[i] += v[i]
	}
	var err error
	p.x, p.m, p.dropped, err = orthogonalizer(p.s, n, opt.LinearDependence)
	if err != nil {
		return nil, err
	}
	if na > p.m {
		return nil, fmt.Errorf("%d α electrons do not fit in %d linearly independent functions", na, p.m)
	}
	if opt.AuxShells != nil {
		p.jk, err = newFittedBuilder(ctx, p.b, integral.NewBasis(opt.AuxShells), opt.Threads, opt.Buffers)
	} else {
		p.jk, err = newJKBuilderLog(ctx, p.b, opt.Threads, opt.MemoryBytes, opt.Log)
	}
	if err != nil {
		return nil, err
	}
	p.nspin = 1
	if p.unrestricted {
		p.nspin = 2
	}
	p.occ = occupations(p.unrestricted, na, nb)
	p.ax = 1.0
	if opt.XC != nil {
		p.ax = opt.XC.ExactExchange()
	}
	return p, nil
}

// Rungs of the fallback ladder (see doc.go). When the last one stalls, the
// SCF restarts once from the other guess and climbs down the ladder again.
const (
	rungDIIS       = iota // Pulay DIIS
	rungLevelShift        // DIIS restarted with a virtual-orbital level shift
	rungADIIS             // ADIIS+DIIS blend, no level shift
)

// Stall windows: a rung is given up when the orbital gradient has not
// improved tenfold over this many iterations.
const (
	stallDIIS  = 8
	stallLater = 12
)

// runLadder is one SCF calculation (without the stability stage).
func runLadder(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options) (*Result, error) {
	start := time.Now()
	opt = withDefaults(opt)
	p, err := newProblem(ctx, mol, shells, opt)
	if err != nil {
		return nil, err
	}
	n, m, nspin := p.n, p.m, p.nspin
	res := &Result{
		Unrestricted:     p.unrestricted,
		NuclearRepulsion: mol.NuclearRepulsion(),
		NumAlpha:         p.na,
		NumBeta:          p.nb,
		NBF:              n,
		NMO:              m,
		NumDropped:       p.dropped,
		InCore:           p.jk.InCore(),

		StoredIntegralFraction: p.jk.StoredFraction(),
		AuxShells:              opt.AuxShells,
	}
	if fb, ok := p.jk.(*fittedBuilder); ok {
		res.Fit = fb.f
	}
	note := func(format string, args ...any) {
		msg := fmt.Sprintf(format, args...)
		res.Fallbacks = append(res.Fallbacks, msg)
		if opt.Log != nil {
			opt.Log(msg)
		}
	}

	// Starting density.
	var dens [][]float64
	guess := opt.StartGuess
	warm := false
	if g := opt.Guess; g != nil && g.NBF == n && len(g.Density) > 0 {
		warm = true
		dens = adaptDensity(g.Density, nspin)
		if len(g.Density) == nspin {
			// The density of a nearby geometry is not idempotent in
			// this geometry's overlap metric; purifying it removes the
			// first-order error that the moved basis functions make.
			for sp := range dens {
				dens[sp] = purifyDensity(dens[sp], p.s, n, p.occ[sp])
			}
		}
		res.Guess = "previous density"
	} else {
		dens, err = startingDensity(ctx, p, guess, opt)
		if err != nil {
			return nil, fmt.Errorf("starting guess: %w", err)
		}
		res.Guess = guess.String()
	}

	xcNow := opt.XC
	coarse := opt.XC != nil && opt.XCStart != nil && !warm
	if coarse {
		xcNow = opt.XCStart
	}
	acc := newDIIS(defaultDIISVectors)
	ad := newADIIS(defaultDIISVectors)
	var focks [][]float64
	prevE := 0.0
	bestErr := math.Inf(1)
	bestAt := 0
	rung := rungDIIS
	restarted := false // the restart from the other guess has been made
	rungStart := 1     // first iteration of the run (or since the restart)
	for it := 1; it <= opt.MaxIterations; it++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		var e float64
		focks, e, err = fockAndEnergy(ctx, p.jk, p.h, dens, p.ax, xcNow, p.unrestricted, res)
		if err != nil {
			return nil, err
		}
		e += res.NuclearRepulsion
		errv, maxErr := orbitalGradient(p, focks, dens)
		change := e - prevE
		if it == rungStart {
			change = e
		}
		res.EnergyHartree = e
		res.Iterations = it
		res.FinalGradient = maxErr
		shift := rung == rungLevelShift
		if opt.Progress != nil {
			opt.Progress(Iteration{Number: it, EnergyHartree: e, Change: change, Gradient: maxErr, LevelShift: shift, CoarseGrid: coarse})
		}
		if !coarse && it > rungStart && math.Abs(change) < opt.EnergyTolerance && maxErr < opt.GradientTolerance {
			res.Converged = true
			break
		}
		prevE = e
		if coarse && (maxErr < CoarseSwitchGradient || it >= coarseMaxIterations || (it-bestAt >= stallDIIS && maxErr >= bestErr/10)) {
			// Close enough on the coarse grid (or no longer improving
			// there): continue on the full grid with a fresh DIIS from
			// the density this Fock matrix gives.
			coarse, xcNow = false, opt.XC
			acc.reset()
			ad.reset()
			bestErr, bestAt = math.Inf(1), it
			rungStart = it + 1
			if err := p.occupy(dens, focks, false); err != nil {
				return nil, err
			}
			continue
		}
		// Stall detection: no tenfold improvement of the orbital gradient
		// within the rung's window moves one rung down the ladder.
		window := stallDIIS
		if rung != rungDIIS {
			window = stallLater
		}
		if maxErr < bestErr/10 || it == rungStart {
			bestErr, bestAt = maxErr, it
		} else if it-bestAt >= window && !(restarted && rung == rungADIIS) {
			acc.reset()
			ad.reset()
			bestErr, bestAt = maxErr, it
			if rung == rungADIIS {
				// Last rung: a fresh start from the other guess, which
				// climbs down the ladder again from plain DIIS (once).
				alt := alternativeGuess(guess)
				note("SCF iteration %d: ADIIS+DIIS stalled (orbital gradient %.1e, energy %.8f Eh); restarting from the %s guess with DIIS", it, maxErr, e, alt)
				dens, err = startingDensity(ctx, p, alt, opt)
				if err != nil {
					return nil, fmt.Errorf("restart guess: %w", err)
				}
				rung, restarted = rungDIIS, true
				res.restarted = true
				rungStart = it + 1
				continue
			}
			rung++
			switch rung {
			case rungLevelShift:
				note("SCF iteration %d: DIIS stalled (orbital gradient %.1e); level shift %.2f Eh on, DIIS restarted", it, maxErr, levelShiftHartree)
			case rungADIIS:
				note("SCF iteration %d: level-shifted DIIS stalled (orbital gradient %.1e); switching to ADIIS+DIIS", it, maxErr)
			}
		}
		shift = rung == rungLevelShift
		acc.push(focks, errv)
		use := focks
		if rung >= rungADIIS {
			ad.push(dens, focks)
			use = blendADIIS(acc, ad, focks, maxErr)
		} else if it > rungStart {
			if ex := acc.extrapolate(); ex != nil {
				use = ex
			}
		}
		if err := p.occupy(dens, use, shift && it > rungStart); err != nil {
			return nil, err
		}
	}
	// Final orbitals from the last (unshifted, unextrapolated) Fock matrices.
	if err := p.finish(res, focks, dens); err != nil {
		return nil, err
	}
	res.Wall = time.Since(start)
	if !res.Converged {
		return res, fmt.Errorf("%w in %d iterations (last energy %.10f Eh, orbital gradient %.2e, energy change above %.0e Eh or gradient above %.0e)",
			ErrNotConverged, res.Iterations, res.EnergyHartree, res.FinalGradient, opt.EnergyTolerance, opt.GradientTolerance)
	}
	return res, nil
}

// occupy replaces dens by the densities of the lowest orbitals of the
// Fock matrices focks (per spin), with the virtual orbitals level-shifted
// (against the current densities) when shift is set.
func (p *problem) occupy(dens, focks [][]float64, shift bool) error {
	n, m := p.n, p.m
	for sp := range dens {
		fo := transform(p.x, n, m, focks[sp])
		if shift {
			applyLevelShift(fo, m, p.x, p.s, dens[sp], n, levelShiftHartree, len(p.occ[sp]))
		}
		_, vecs, err := eigenSym(fo, m)
		if err != nil {
			return err
		}
		dens[sp] = densityFromOrbitals(mul(p.x, n, m, vecs, m), n, m, p.occ[sp])
	}
	return nil
}

// orbitalGradient returns FDS − SDF in the orthonormal basis for every spin
// (concatenated) and its largest element.
func orbitalGradient(p *problem, focks, dens [][]float64) ([]float64, float64) {
	n, m := p.n, p.m
	errv := make([]float64, 0, p.nspin*m*m)
	maxErr := 0.0
	for sp := 0; sp < p.nspin; sp++ {
		fds := mul(mul(focks[sp], n, n, dens[sp], n), n, n, p.s, n)
		comm := make([]float64, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				comm[i*n+j] = fds[i*n+j] - fds[j*n+i]
			}
		}
		ce := transform(p.x, n, m, comm)
		for _, v := range ce {
			if a := math.Abs(v); a > maxErr {
				maxErr = a
			}
		}
		errv = append(errv, ce...)
	}
	return errv, maxErr
}

// finish diagonalizes the final Fock matrices and fills the orbitals,
// density and properties of res.
func (p *problem) finish(res *Result, focks, dens [][]float64) error {
	n, m := p.n, p.m
	coefs := make([][]float64, p.nspin)
	energies := make([][]float64, p.nspin)
	for sp := 0; sp < p.nspin; sp++ {
		vals, vecs, err := eigenSym(transform(p.x, n, m, focks[sp]), m)
		if err != nil {
			return err
		}
		coefs[sp] = mul(p.x, n, m, vecs, m)
		energies[sp] = vals
	}
	res.OrbitalEnergies = energies
	res.Coefficients = coefs
	res.Density = dens
	analyze(res, p.mol, p.b, p.s)
	return nil
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

// purifyDensity returns the density d (n×n, occupation numbers occ, all
// equal) made idempotent in the metric s by McWeeny's purification
// (R. McWeeny, Rev. Mod. Phys. 32, 335 (1960)), X ← 3XSX − 2XSXSX with
// X = d/occ, which converges quadratically for a density near an
// idempotent one (the density of a nearby geometry). It returns d itself
// when the purification does not converge or changes the electron count.
func purifyDensity(d, s []float64, n int, occ []float64) []float64 {
	if len(occ) == 0 {
		return d
	}
	w := occ[0]
	for _, o := range occ {
		if o != w {
			return d
		}
	}
	x := make([]float64, len(d))
	for i, v := range d {
		x[i] = v / w
	}
	prev := math.Inf(1)
	for k := 0; k < 8; k++ {
		xs := mul(x, n, n, s, n)
		xsx := mul(xs, n, n, x, n)
		dev := 0.0
		for i := range x {
			dev = math.Max(dev, math.Abs(xsx[i]-x[i]))
		}
		if dev < 1e-13 {
			break
		}
		if dev > 0.5*prev || dev > 0.25 {
			return d // not converging: too far from idempotent
		}
		prev = dev
		xsxsx := mul(xs, n, n, xsx, n)
		for i := range x {
			x[i] = 3*xsx[i] - 2*xsxsx[i]
		}
	}
	tr := 0.0
	xs := mul(x, n, n, s, n)
	for i := 0; i < n; i++ {
		tr += xs[i*n+i]
	}
	if math.Abs(tr-float64(len(occ))) > 1e-8 {
		return d
	}
	// Symmetrize against rounding and scale back.
	out := make([]float64, len(d))
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			out[i*n+j] = 0.5 * w * (x[i*n+j] + x[j*n+i])
		}
	}
	return out
}

// fockAndEnergy builds the Fock matrices for the densities and returns them
// with the electronic energy (without nuclear repulsion). It records the
// energy parts in res.
func fockAndEnergy(ctx context.Context, jk fockBuilder, h []float64, dens [][]float64, ax float64, xc XC, unrestricted bool, res *Result) ([][]float64, float64, error) {
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
