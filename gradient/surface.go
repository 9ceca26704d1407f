package gradient

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"poise/energy/basis"
	"poise/energy/buffer"
	"poise/energy/dft"
	"poise/energy/dispersion"
	"poise/energy/fit"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/xc"
)

// Request says what an evaluation of a Surface must produce besides the
// energy, and with which resources.
type Request struct {
	Gradient bool // fill Point.Gradient
	Dipole   bool // fill Point.DipoleAU
	// Threads is the thread budget of this evaluation; 0 means the
	// surface's own default. A caller that evaluates several points at
	// once (a finite-difference Hessian) splits its budget: k concurrent
	// evaluations with Threads = budget/k each.
	Threads int
	// KeepWarmStart evaluates from the surface's current warm-start state
	// without replacing it by this point's. Concurrent evaluations of
	// displaced points use it so that every point starts from the same
	// state and the results do not depend on their order.
	KeepWarmStart bool
	// State asks for the point's converged electronic state in
	// Point.State, for the Start of a later evaluation.
	State bool
	// Start, if set, starts this evaluation from a state extrapolated
	// along the line from the warm start to the state of an earlier
	// evaluation (see Extrapolation). Surfaces without an electronic
	// state ignore it, and so does an SCF surface when the state does not
	// fit its basis and spins.
	Start *Extrapolation
}

// Extrapolation is a starting state for an evaluation near two earlier
// ones: the warm start S₀ (at x₀) and the state From (at x₀ + d) give
// S₀ + Weight·(From − S₀), the first-order estimate of the state at
// x₀ + Weight·d. The −h point of a central difference, started from the
// +h point's state with Weight −1, begins with an error of order h²
// instead of h (about 40 % fewer SCF iterations at those points of a
// finite-difference Hessian).
type Extrapolation struct {
	From   []byte // the Point.State of an earlier evaluation of the same surface
	Weight float64
}

// Point is the result of one evaluation, in memory the caller owns.
type Point struct {
	EnergyHartree float64
	// Gradient is dE/dx for the 3N coordinates (Eh/bohr). When a gradient
	// is requested it is written into this slice if it has length 3N and
	// allocated if it is nil; any other length is an error.
	Gradient []float64
	// DipoleAU is the dipole moment (e·bohr) about the centre of mass.
	DipoleAU [3]float64
	// SCFIterations is the number of SCF iterations the energy took (0
	// for surfaces without an SCF).
	SCFIterations int
	// GapHartree is the HOMO–LUMO gap of the SCF (the smaller of the α
	// and β gaps); 0 for surfaces without orbitals or without a virtual
	// orbital.
	GapHartree float64
	// State is the converged electronic state when Request.State asks for
	// it (an SCF surface's density, encoded), opaque to the caller: it
	// can be saved and handed back in Request.Start. Nil for surfaces
	// without one.
	State []byte
}

// Surface is a potential-energy surface: coordinates in, energy and the
// requested properties out. Geometry relaxation and Hessians depend on
// this interface only.
type Surface interface {
	// NumAtoms is the number of atoms; coordinates have 3·NumAtoms
	// elements (x, y, z per atom, bohr).
	NumAtoms() int
	// Evaluate computes the energy (and what req asks for) at coordsBohr
	// and writes it into out. It stops early with ctx's error when ctx is
	// cancelled.
	Evaluate(ctx context.Context, coordsBohr []float64, req Request, out *Point) error
	// Evaluations is the number of energy (and gradient) evaluations made
	// so far.
	Evaluations() int
}

// Config is the level of theory of an SCF surface.
type Config struct {
	Basis      *basis.Set
	Convention basis.Convention
	// Method is the exchange–correlation functional; nil or "hf" means
	// Hartree–Fock.
	Method *xc.Functional
	// GridLevel is the DFT grid level; 0 means grid.DefaultLevel.
	GridLevel int
	// Frame orients the DFT grids of every geometry; nil means the
	// standard frame of the molecule's starting geometry. It stays fixed
	// for the life of the surface, so that the energy is a smooth function
	// of the coordinates (the grid points move with their atoms).
	Frame *grid.Frame
	// SCF are the SCF options; XC, Guess and AuxShells are set by the surface
	// (SCF.Guess, if given, becomes the first warm start). SCF.Threads is
	// the default and largest thread budget of an evaluation, and
	// SCF.MemoryBytes its memory budget, scaled down with the threads of a
	// request that asks for fewer. SCF.Progress, if set, may be called
	// from several evaluations at once.
	SCF scf.Options
	// Numeric asks for central-difference gradients (Numeric, with Step)
	// instead of analytic ones.
	Numeric bool
	// Step is the central-difference step in bohr; 0 means DefaultStep.
	Step float64
	// Dispersion, when set, adds the D3(BJ) correction (energy and
	// analytic gradient) to every point.
	Dispersion *dispersion.Params
	// Fit, when set, is the auxiliary basis set in which the SCF density
	// fits the Coulomb and exchange terms (RI-JK, scf.Options.AuxShells);
	// nil computes them from exact four-centre integrals. Its shells are
	// built for every geometry like the orbital shells, in the set's own
	// (spherical) functions whatever Convention says. It must be a
	// Coulomb-and-exchange fitting set (basis.RoleJKFit), or a
	// Coulomb-only one (basis.RoleJFit) for methods without exact
	// exchange, and cover every element of the molecule.
	Fit *basis.Set
}

// CheckFit reports whether fit can serve as the auxiliary basis of method
// (nil: Hartree–Fock) for the elements of mol: a nil fit always can; else
// it must be a fitting set (basis.RoleJKFit, or basis.RoleJFit when the
// method has no exact exchange) that covers every element. A missing
// element gives an error wrapping *basis.MissingElementError.
func CheckFit(fit *basis.Set, method *xc.Functional, mol *molecule.Molecule) error {
	if fit == nil {
		return nil
	}
	switch fit.Role {
	case basis.RoleJKFit:
	case basis.RoleJFit:
		if method == nil || method.ExactExchange() != 0 {
			name := "hf"
			if method != nil {
				name = method.Name()
			}
			return fmt.Errorf("the fitting set %s fits only the Coulomb term, and %s has exact exchange: give a Coulomb-and-exchange set such as def2-universal-JKFIT", fit.Name, name)
		}
	default:
		return fmt.Errorf("%s is an orbital basis set, not a density-fitting set (role %q): give a JKFIT or JFIT set such as def2-universal-JKFIT", fit.Name, fit.Role)
	}
	if mol != nil {
		if _, err := FitShells(fit, mol); err != nil {
			return err
		}
	}
	return nil
}

// FitShells returns the shells of the fitting set fit on mol's atoms (nil
// for a nil fit), in the set's own (spherical) functions whatever the
// orbital basis's convention. An element the set lacks (an error wrapping
// *basis.MissingElementError), or shells of higher angular momentum than
// the integrals support (the def2-universal-JKFIT sets of Sc–Zn have
// l = 6), is an error naming the set and the element.
func FitShells(fit *basis.Set, mol *molecule.Molecule) ([]basis.Shell, error) {
	if fit == nil {
		return nil, nil
	}
	sh, err := fit.Shells(mol, basis.Default)
	if err != nil {
		return nil, fmt.Errorf("fitting set: %w", err)
	}
	for _, s := range sh {
		if s.L > integral.MaxShellL {
			return nil, fmt.Errorf("the fitting set %s has functions of angular momentum %d for %s, above the %d poise's integrals support: give another fitting set, or none",
				fit.Name, s.L, molecule.Symbol(mol.Atoms[s.Atom].Z), integral.MaxShellL)
		}
	}
	return sh, nil
}

// SCFSurface is the Surface of a molecule at a level of theory, computed
// by SCF energies and analytic (or central-difference) gradients. Its
// basis shells are rebuilt for every geometry (shell centres move with the
// atoms); the DFT grid is rebuilt in a fixed frame. It is safe for
// concurrent use.
type SCFSurface struct {
	mol     *molecule.Molecule // template: elements, masses, charge, spin
	cfg     Config
	frame   grid.Frame
	nbf     int
	threads int

	mu   sync.Mutex
	warm *scf.State

	// Memory lent from one evaluation to the next (package buffer): the
	// stored basis-function values of the DFT grid and the density fit's
	// three-centre array, at most one per thread each, as many as the
	// evaluations that may run at once.
	values, fits *buffer.Pool

	evals atomic.Int64
}

// NewSCFSurface returns the surface of mol (its elements, masses, charge
// and multiplicity; the positions only choose the grid frame when
// cfg.Frame is nil) at the level of theory of cfg.
func NewSCFSurface(mol *molecule.Molecule, cfg Config) (*SCFSurface, error) {
	if mol == nil || len(mol.Atoms) == 0 {
		return nil, errors.New("gradient: no atoms")
	}
	if cfg.Basis == nil {
		return nil, errors.New("gradient: no basis set")
	}
	if cfg.GridLevel == 0 {
		cfg.GridLevel = grid.DefaultLevel
	}
	if _, err := grid.LevelInfo(cfg.GridLevel); err != nil {
		return nil, err
	}
	if cfg.Step < 0 || cfg.Step > 1e-2 || math.IsNaN(cfg.Step) {
		return nil, fmt.Errorf("gradient: central-difference step %g bohr outside (0, 0.01]", cfg.Step)
	}
	m := mol.Clone()
	if err := m.SetSpin(mol.Charge, mol.Multiplicity); err != nil {
		return nil, err
	}
	shells, err := cfg.Basis.Shells(m, cfg.Convention)
	if err != nil {
		return nil, err
	}
	if err := CheckFit(cfg.Fit, cfg.Method, m); err != nil {
		return nil, fmt.Errorf("gradient: %w", err)
	}
	_, nbf := basis.Offsets(shells)
	s := &SCFSurface{mol: m, cfg: cfg, nbf: nbf}
	s.threads = cfg.SCF.Threads
	if s.threads <= 0 {
		s.threads = runtime.GOMAXPROCS(0)
	}
	s.values, s.fits = buffer.NewPool(s.threads), buffer.NewPool(s.threads)
	if cfg.Frame != nil {
		s.frame = *cfg.Frame
	} else {
		z, pos := atomsOf(m)
		if s.frame, err = grid.StandardFrame(z, pos); err != nil {
			return nil, err
		}
	}
	if cfg.SCF.Guess != nil {
		if err := s.SetWarmStart(cfg.SCF.Guess); err != nil {
			return nil, err
		}
	}
	return s, nil
}

// NumAtoms is the number of atoms.
func (s *SCFSurface) NumAtoms() int { return len(s.mol.Atoms) }

// Evaluations is the number of SCF energies computed so far, those of the
// displaced points of central-difference gradients included.
func (s *SCFSurface) Evaluations() int { return int(s.evals.Load()) }

// Frame is the orientation of the DFT grids, fixed for the surface's life.
func (s *SCFSurface) Frame() grid.Frame { return s.frame }

// StartXC returns the exchange–correlation evaluator of the first
// iterations of a cold-start SCF (scf.Options.XCStart): the functional on
// grid level 1 in the same frame, a fifth of the points of the default
// level. It returns nil (no coarse start) when the level asked for is 2 or
// coarser. Its stored basis-function values get a quarter of cacheBytes.
func StartXC(fn *xc.Functional, z []int, pos [][3]float64, level int, frame grid.Frame, b *integral.Basis, threads int, cacheBytes int64) (scf.XC, error) {
	if level < 3 || fn == nil || !fn.NeedsGrid() {
		return nil, nil
	}
	g, err := grid.New(z, pos, 1, frame, threads)
	if err != nil {
		return nil, err
	}
	pot := dft.New(fn, g, b, threads)
	pot.CacheBytes = cacheBytes / 4
	return pot, nil
}

// AxisSymmetric is implemented by surfaces that can tell whether they are
// exactly invariant (not only to within their numerical noise) under the
// symmetry operations of a molecule that permute the coordinate axes with
// signs; freq.HessianOptions.AxisOperationsExact takes the answer.
type AxisSymmetric interface {
	AxisOperationsExact() bool
}

// AxisOperationsExact reports whether the surface is exactly invariant under
// symmetry operations that permute the coordinate axes with signs. Without
// a DFT grid it is (to SCF convergence). With one it is when the grid frame
// lies along the coordinate axes: the Lebedev–Laikov rules are invariant
// under the 48 operations of the octahedral group about their own axes,
// and the radial grids, pruning and Becke partitioning depend only on
// elements and distances.
func (s *SCFSurface) AxisOperationsExact() bool {
	if fn := s.cfg.Method; fn == nil || !fn.NeedsGrid() {
		return true
	}
	for _, row := range s.frame {
		for _, v := range row {
			if a := math.Abs(v); a > 1e-10 && math.Abs(a-1) > 1e-10 {
				return false
			}
		}
	}
	return true
}

// WarmStart returns a copy of the warm-start state (the density the next
// evaluation starts from), or nil before the first evaluation. It is plain
// data (JSON-serializable) for saving and restoring a long calculation.
func (s *SCFSurface) WarmStart() *scf.State {
	s.mu.Lock()
	defer s.mu.Unlock()
	return copyState(s.warm)
}

// SetWarmStart replaces the warm-start state (nil: start the next
// evaluation from the default guess). The state must be for this basis.
func (s *SCFSurface) SetWarmStart(st *scf.State) error {
	if st != nil {
		if st.NBF != s.nbf {
			return fmt.Errorf("gradient: warm-start state has %d basis functions, the surface %d", st.NBF, s.nbf)
		}
		if len(st.Density) != 1 && len(st.Density) != 2 {
			return fmt.Errorf("gradient: warm-start state has %d densities, want 1 or 2", len(st.Density))
		}
		for _, d := range st.Density {
			if len(d) != st.NBF*st.NBF {
				return fmt.Errorf("gradient: warm-start density has %d elements, want %d", len(d), st.NBF*st.NBF)
			}
		}
	}
	s.mu.Lock()
	s.warm = copyState(st)
	s.mu.Unlock()
	return nil
}

func copyState(st *scf.State) *scf.State {
	if st == nil {
		return nil
	}
	c := &scf.State{NBF: st.NBF, Density: make([][]float64, len(st.Density))}
	for i, d := range st.Density {
		c.Density[i] = append([]float64(nil), d...)
	}
	return c
}

// Evaluate computes the SCF energy at coordsBohr and, as requested, the
// gradient and the dipole moment. A calculation that does not converge
// returns an error wrapping scf.ErrNotConverged (out.EnergyHartree then
// holds the last energy) and leaves the warm-start state unchanged.
func (s *SCFSurface) Evaluate(ctx context.Context, coordsBohr []float64, req Request, out *Point) error {
	nat := len(s.mol.Atoms)
	if out == nil {
		return errors.New("gradient: nil output point")
	}
	if req.Gradient && out.Gradient != nil && len(out.Gradient) != 3*nat {
		return fmt.Errorf("gradient: gradient buffer has %d elements, want %d", len(out.Gradient), 3*nat)
	}
	threads := req.Threads
	if threads <= 0 || threads > s.threads {
		threads = s.threads
	}
	s.mu.Lock()
	guess := s.warm
	s.mu.Unlock()
	if req.Start != nil && guess != nil {
		// A state that does not fit (damaged, or of another basis or
		// number of spins: a point whose stability analysis went
		// unrestricted) leaves the warm start: it only costs iterations.
		if from, err := decodeState(req.Start.From); err == nil {
			if x, err := extrapolate(guess, from, req.Start.Weight); err == nil {
				guess = x
			}
		}
	}
	st, err := s.compute(ctx, coordsBohr, threads, guess, req.Gradient && !s.cfg.Numeric)
	if st != nil && st.res != nil {
		out.EnergyHartree = st.energy
		out.SCFIterations = st.res.Iterations
		out.GapHartree = orbitalGap(st.res)
	}
	if err != nil {
		return err
	}
	res := st.res
	if req.Dipole {
		out.DipoleAU = res.DipoleAU
	}
	if req.Gradient {
		if out.Gradient == nil {
			out.Gradient = make([]float64, 3*nat)
		}
		if s.cfg.Numeric {
			fixed := &fixedStart{s: s, guess: res.State()}
			if err := Numeric(ctx, fixed, coordsBohr, s.cfg.Step, threads, out.Gradient); err != nil {
				return err
			}
		} else {
			for a := 0; a < nat; a++ {
				copy(out.Gradient[3*a:3*a+3], st.grad[a][:])
			}
		}
	}
	if req.State {
		out.State = encodeState(res.State())
	}
	if !req.KeepWarmStart {
		s.mu.Lock()
		s.warm = res.State()
		s.mu.Unlock()
	}
	return nil
}

// fixedStart is the surface seen by the central differences of one point:
// every displaced energy starts from the density of that point.
type fixedStart struct {
	s     *SCFSurface
	guess *scf.State
}

func (f *fixedStart) NumAtoms() int    { return f.s.NumAtoms() }
func (f *fixedStart) Evaluations() int { return f.s.Evaluations() }
func (f *fixedStart) Evaluate(ctx context.Context, x []float64, req Request, out *Point) error {
	threads := req.Threads
	if threads <= 0 || threads > f.s.threads {
		threads = f.s.threads
	}
	st, err := f.s.compute(ctx, x, threads, f.guess, false)
	if st != nil && st.res != nil {
		out.EnergyHartree = st.energy
		out.SCFIterations = st.res.Iterations
	}
	return err
}

// computed is one SCF point.
type computed struct {
	res    *scf.Result
	energy float64      // total energy: SCF plus dispersion correction
	grad   [][3]float64 // analytic gradient when asked for
}

// compute runs the SCF at coords with threads threads from guess and, with
// analytic set, the analytic gradient.
func (s *SCFSurface) compute(ctx context.Context, coords []float64, threads int, guess *scf.State, analytic bool) (*computed, error) {
	nat := len(s.mol.Atoms)
	if len(coords) != 3*nat {
		return nil, fmt.Errorf("gradient: %d coordinates for %d atoms", len(coords), nat)
	}
	m := s.mol.Clone()
	for a := range m.Atoms {
		for k := 0; k < 3; k++ {
			v := coords[3*a+k]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("gradient: coordinate %c of atom %d is %v", "xyz"[k], a+1, v)
			}
			m.Atoms[a].Position[k] = v
		}
	}
	for a := 1; a < nat; a++ {
		for b := 0; b < a; b++ {
			pa, pb := m.Atoms[a].Position, m.Atoms[b].Position
			d := math.Sqrt((pa[0]-pb[0])*(pa[0]-pb[0]) + (pa[1]-pb[1])*(pa[1]-pb[1]) + (pa[2]-pb[2])*(pa[2]-pb[2]))
			if d < minDistanceBohr {
				return nil, fmt.Errorf("gradient: atoms %d and %d are %.3g bohr apart (at least %g needed)", b+1, a+1, d, minDistanceBohr)
			}
		}
	}
	shells, err := s.cfg.Basis.Shells(m, s.cfg.Convention)
	if err != nil {
		return nil, err
	}
	opts := s.cfg.SCF
	opts.Threads = threads
	if threads < s.threads && opts.MemoryBytes > 0 {
		opts.MemoryBytes = opts.MemoryBytes * int64(threads) / int64(s.threads)
	}
	opts.Guess = guess
	opts.XC, opts.XCStart = nil, nil
	if opts.AuxShells, err = FitShells(s.cfg.Fit, m); err != nil {
		return nil, err
	}
	opts.Buffers = s.fits
	var pot *dft.Potential
	if fn := s.cfg.Method; fn != nil && fn.NeedsGrid() {
		z, pos := atomsOf(m)
		g, err := grid.New(z, pos, s.cfg.GridLevel, s.frame, threads)
		if err != nil {
			return nil, err
		}
		ib := integral.NewBasis(shells)
		pot = dft.New(fn, g, ib, threads)
		pot.CacheBytes = XCCacheBytes(opts.MemoryBytes, ib.NBF, opts.AuxShells)
		pot.Buffers = s.values
		opts.XC = pot
		if guess == nil {
			if opts.XCStart, err = StartXC(fn, z, pos, s.cfg.GridLevel, s.frame, ib, threads, pot.CacheBytes); err != nil {
				return nil, err
			}
		}
	}
	res, err := scf.Run(ctx, m, shells, opts)
	if res != nil && ctx.Err() == nil {
		s.evals.Add(1)
	}
	// What the point no longer needs goes back to the pools (the
	// gradient, if any, has released it already; both calls are then
	// no-ops).
	defer func() {
		if pot != nil {
			pot.ReleaseCache()
		}
		if res != nil && res.Fit != nil {
			res.Fit.Release()
			res.Fit = nil
		}
	}()
	if err != nil {
		e := 0.0
		if res != nil {
			e = res.EnergyHartree
		}
		return &computed{res: res, energy: e}, err
	}
	c := &computed{res: res, energy: res.EnergyHartree}
	if analytic {
		g, err := Analytic(ctx, m, shells, res, pot, threads)
		if err != nil {
			return c, err
		}
		c.grad = g.Total
	}
	if p := s.cfg.Dispersion; p != nil {
		z, pos := atomsOf(m)
		d, err := dispersion.Compute(z, pos, *p, analytic)
		if err != nil {
			return c, err
		}
		c.energy += d.EnergyHartree
		if analytic {
			for a := range c.grad {
				for k := 0; k < 3; k++ {
					c.grad[a][k] += d.Gradient[a][k]
				}
			}
		}
	}
	return c, nil
}

// XCCacheBytes is the share of a memory budget that the stored
// basis-function values of a DFT grid may take in an SCF of nbf functions:
// dft.CacheBytesFor with four-centre integrals, dft.CacheBytesFitted with
// the density fit of aux (non-nil), which keeps none of them; for a fit,
// what it holds during the SCF (fit.HeldBytes), since Analytic frees the
// values before the fit's gradient needs more.
func XCCacheBytes(memoryBytes int64, nbf int, aux []basis.Shell) int64 {
	if aux == nil {
		return dft.CacheBytesFor(memoryBytes, nbf)
	}
	_, naux := basis.Offsets(aux)
	return dft.CacheBytesFitted(memoryBytes, fit.HeldBytes(nbf, naux))
}

// orbitalGap is the smallest HOMO–LUMO gap over the spins of res (0 when
// there is no occupied–virtual pair).
func orbitalGap(res *scf.Result) float64 {
	gap := 0.0
	for s, e := range res.OrbitalEnergies {
		nocc := res.NumAlpha
		if len(res.OrbitalEnergies) == 1 {
			nocc = (res.NumAlpha + res.NumBeta) / 2
			if res.NumAlpha != res.NumBeta {
				return 0
			}
		} else if s == 1 {
			nocc = res.NumBeta
		}
		if nocc < 1 || nocc >= len(e) {
			continue
		}
		if g := e[nocc] - e[nocc-1]; gap == 0 || g < gap {
			gap = g
		}
	}
	return gap
}

// minDistanceBohr is the smallest interatomic distance a surface accepts
// (about 0.05 Å: far inside any physical geometry, so only a broken
// optimizer step or input reaches it).
const minDistanceBohr = 0.1

func atomsOf(m *molecule.Molecule) ([]int, [][3]float64) {
	z := make([]int, len(m.Atoms))
	pos := make([][3]float64, len(m.Atoms))
	for i, a := range m.Atoms {
		z[i], pos[i] = a.Z, a.Position
	}
	return z, pos
}

// Coordinates returns the positions of mol's atoms as 3N coordinates in
// bohr, the layout of Surface.
func Coordinates(mol *molecule.Molecule) []float64 {
	x := make([]float64, 3*len(mol.Atoms))
	for i, a := range mol.Atoms {
		copy(x[3*i:3*i+3], a.Position[:])
	}
	return x
}
