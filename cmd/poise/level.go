package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"

	"github.com/spf13/cobra"

	"poise/energy/basis"
	"poise/energy/dft"
	"poise/energy/dispersion"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/xc"
	"poise/gradient"
	"poise/settle"
)

// levelFlags are the level-of-theory and resource flags shared by every
// command that computes energies.
type levelFlags struct {
	method       string
	basisName    string
	charge       int
	multiplicity int
	cartesian    bool
	spherical    bool
	unrestricted bool
	threads      int
	memory       string
	maxIter      int
	gridLevel    int
	dispersion   string
	stability    string
	fit          string
}

func (f *levelFlags) register(cmd *cobra.Command) {
	fl := cmd.Flags()
	fl.StringVar(&f.method, "method", "b3lyp", "electronic-structure method: "+strings.Join(xc.Names(), ", "))
	fl.StringVar(&f.basisName, "basis", "6-31g*", "basis set name (see 'poise basis list')")
	fl.IntVar(&f.charge, "charge", 0, "total charge of the molecule")
	fl.IntVar(&f.multiplicity, "multiplicity", 0, "spin multiplicity 2S+1 (default: 1 for an even electron count, 2 for odd)")
	fl.BoolVar(&f.cartesian, "cartesian", false, "use Cartesian d, f, ... functions whatever the basis set's convention")
	fl.BoolVar(&f.spherical, "spherical", false, "use spherical (pure) d, f, ... functions whatever the basis set's convention")
	fl.BoolVar(&f.unrestricted, "unrestricted", false, "unrestricted (different orbitals for different spins) even for a closed-shell singlet")
	fl.IntVar(&f.threads, "threads", runtime.NumCPU(), "number of threads")
	fl.StringVar(&f.memory, "memory", "2GiB", "memory budget (e.g. 800MiB, 4GiB); integrals are kept in memory when they fit in half of it (else the costliest that fit), and Go's memory limit is set to it")
	fl.IntVar(&f.maxIter, "max-iterations", scf.DefaultMaxIterations, "largest number of SCF iterations")
	fl.StringVar(&f.dispersion, "dispersion", "none", "empirical dispersion correction: none or d3bj (Grimme's D3 with Becke–Johnson damping)")
	fl.IntVar(&f.gridLevel, "grid", grid.DefaultLevel, "DFT integration grid level, 1 (coarse) to 5 (finest)")
	fl.StringVar(&f.fit, "fit", "none", "density fitting (RI-JK) of the Coulomb and exchange terms: none (exact integrals), jk (def2-universal-JKFIT) or a fitting set's name (see 'poise basis list')")
	fl.StringVar(&f.stability, "stability", "off", "wavefunction stability check: off; check (report a restricted → unrestricted or internal instability); follow (also follow it to the lower, unrestricted solution)")
}

// onceLogger returns a notice printer for the SCF that prints each
// distinct notice once: a Hessian or a relaxation runs many SCFs that would
// otherwise repeat the same notice (integral-direct, a fallback) for every
// point. It is safe for concurrent use.
func onceLogger(w io.Writer) func(string) {
	var mu sync.Mutex
	seen := map[string]bool{}
	return func(msg string) {
		mu.Lock()
		defer mu.Unlock()
		if seen[msg] {
			return
		}
		seen[msg] = true
		fmt.Fprintf(w, "poise: note: %s\n", msg)
	}
}

// parseMemory reads sizes such as "2GiB", "512MiB", "4GB" or a plain number
// of MiB.
func parseMemory(s string) (int64, error) {
	t := strings.TrimSpace(strings.ToLower(s))
	mult := int64(1 << 20)
	for _, u := range []struct {
		suffix string
		mult   int64
	}{{"gib", 1 << 30}, {"gb", 1e9}, {"g", 1 << 30}, {"mib", 1 << 20}, {"mb", 1e6}, {"m", 1 << 20}, {"kib", 1 << 10}, {"kb", 1e3}} {
		if strings.HasSuffix(t, u.suffix) {
			t = strings.TrimSpace(strings.TrimSuffix(t, u.suffix))
			mult = u.mult
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || v <= 0 {
		return 0, fmt.Errorf("--memory %q: give a size such as 800MiB or 4GiB", s)
	}
	return int64(v * float64(mult)), nil
}

// setup is everything a calculation needs once the flags are read.
type setup struct {
	mol      *molecule.Molecule
	set      *basis.Set
	shells   []basis.Shell
	conv     basis.Convention
	opts     scf.Options
	method   string
	memBytes int64
	fn       *xc.Functional
	// stability is the --stability mode; runSCF applies it (single
	// energies only: relaxations and Hessians do not check every point).
	stability scf.StabilityMode
	gridLevel int
	grid      *grid.Grid
	// dispersion holds the D3(BJ) parameters when the correction is on.
	dispersion *dispersion.Params
	// fit is the auxiliary basis set of density fitting (--fit); nil for
	// exact four-centre integrals. opts.AuxShells holds its shells for
	// mol's geometry.
	fit *basis.Set
}

// label is the level of theory as printed and stored, e.g.
// "B3LYP-D3(BJ)/6-31G*" or "B3LYP/6-31G* (RI-JK: def2-universal-JKFIT)".
func (s *setup) label() string {
	return settle.LevelLabel(s.method, s.set.Name, s.dispersion != nil) + settle.FitLabel(s.fit)
}

// fitName is the auxiliary set's name for JSON output, "none" without
// density fitting.
func (s *setup) fitName() string {
	if s.fit == nil {
		return "none"
	}
	return s.fit.Name
}

// fitOff reports whether a --fit value asks for exact integrals.
func fitOff(name string) bool {
	n := strings.ToLower(strings.TrimSpace(name))
	return n == "" || n == "none"
}

// loadFit reads the --fit set for method fn (nil when fitting is off):
// "jk" is def2-universal-JKFIT, other names as 'poise basis list' shows
// them. An orbital set, or a Coulomb-only set with a method that has exact
// exchange, is a usage error.
func loadFit(name string, fn *xc.Functional) (*basis.Set, error) {
	if fitOff(name) {
		return nil, nil
	}
	n := strings.TrimSpace(name)
	if strings.EqualFold(n, "jk") {
		n = "def2-universal-JKFIT"
	}
	set, err := basis.Load(n)
	if err != nil {
		return nil, usageErr(fmt.Errorf("--fit: %w; give none, jk, or a fitting set (JKFIT or JFIT)", err))
	}
	if err := gradient.CheckFit(set, fn, nil); err != nil {
		return nil, usageErr(fmt.Errorf("--fit %s with --method %s: %w (jk is short for def2-universal-JKFIT; none turns fitting off)", name, fn.Name(), err))
	}
	return set, nil
}

// dispersionEnergy returns the D3(BJ) correction for the molecule (zero
// when it is off).
func (s *setup) dispersionEnergy() (float64, error) {
	if s.dispersion == nil {
		return 0, nil
	}
	r, err := dispersion.ForMolecule(s.mol, *s.dispersion, false)
	if err != nil {
		return 0, usageErr(err)
	}
	return r.EnergyHartree, nil
}

// prepare reads the molecule and checks the level of theory. Every problem
// here is a user mistake (exit status 2).
func (f *levelFlags) prepare(path string) (*setup, error) {
	if f.threads < 1 {
		return nil, usageErr(fmt.Errorf("--threads %d: give at least 1", f.threads))
	}
	if f.cartesian && f.spherical {
		return nil, usageErr(errors.New("--cartesian and --spherical exclude each other: give one"))
	}
	mem, err := parseMemory(f.memory)
	if err != nil {
		return nil, usageErr(err)
	}
	stab, err := scf.ParseStabilityMode(f.stability)
	if err != nil {
		return nil, usageErr(fmt.Errorf("--stability: %w", err))
	}
	fn, err := xc.Lookup(f.method)
	if err != nil {
		return nil, usageErr(fmt.Errorf("--method %q: available methods are %s", f.method, strings.Join(xc.Names(), ", ")))
	}
	method := fn.Name()
	if _, err := grid.LevelInfo(f.gridLevel); err != nil {
		return nil, usageErr(fmt.Errorf("--grid %d: give a level from 1 (coarse) to 5 (finest)", f.gridLevel))
	}
	var disp *dispersion.Params
	switch strings.ToLower(f.dispersion) {
	case "", "none":
	case "d3bj", "d3(bj)":
		p, err := dispersion.ParamsFor(method)
		if err != nil {
			return nil, usageErr(fmt.Errorf("--dispersion d3bj: %w", err))
		}
		disp = &p
	default:
		return nil, usageErr(fmt.Errorf("--dispersion %q: give none or d3bj", f.dispersion))
	}
	fit, err := loadFit(f.fit, fn)
	if err != nil {
		return nil, err
	}
	mol, err := molecule.ReadXYZFile(path)
	if err != nil {
		return nil, usageErr(err)
	}
	if err := mol.SetSpin(f.charge, f.multiplicity); err != nil {
		return nil, usageErr(fmt.Errorf("%s: %w", path, err))
	}
	if mol.NumElectrons() == 0 {
		return nil, usageErr(fmt.Errorf("%s: with --charge %+d the molecule has no electrons: there is nothing to compute; give a smaller charge", path, f.charge))
	}
	set, err := basis.Load(f.basisName)
	if err != nil {
		return nil, usageErr(err)
	}
	conv := basis.Default
	if f.cartesian {
		conv = basis.Cartesian
	} else if f.spherical {
		conv = basis.Spherical
	}
	shells, err := set.Shells(mol, conv)
	if err != nil {
		return nil, usageErr(fmt.Errorf("%s: %w", path, err))
	}
	aux, err := fitShells(path, fit, mol)
	if err != nil {
		return nil, err
	}
	debug.SetMemoryLimit(mem)
	st := &setup{
		mol:      mol,
		set:      set,
		shells:   shells,
		conv:     conv,
		method:   method,
		memBytes: mem,
		opts: scf.Options{
			Unrestricted:  f.unrestricted,
			MaxIterations: f.maxIter,
			Threads:       f.threads,
			MemoryBytes:   mem,
			Log:           onceLogger(os.Stderr),
			AuxShells:     aux,
		},
		fn:         fn,
		stability:  stab,
		gridLevel:  f.gridLevel,
		dispersion: disp,
		fit:        fit,
	}
	return st, nil
}

// fitShells places the --fit set's shells on mol's atoms (nil without
// fitting). Fitting sets are spherical by definition: they keep their own
// convention whatever --cartesian or --spherical say. An element the set
// lacks is a usage error naming it and the set.
func fitShells(path string, fit *basis.Set, mol *molecule.Molecule) ([]basis.Shell, error) {
	aux, err := gradient.FitShells(fit, mol)
	if err != nil {
		return nil, usageErr(fmt.Errorf("%s: --fit: %w", path, err))
	}
	return aux, nil
}

// attachXC builds the DFT grid (oriented by the molecule's standard frame
// unless frame is given) and sets the exchange–correlation potential of the
// SCF options. Hartree–Fock needs nothing.
func (s *setup) attachXC(frame *grid.Frame) error {
	if !s.fn.NeedsGrid() {
		s.opts.XC, s.opts.XCStart = nil, nil
		return nil
	}
	z := make([]int, len(s.mol.Atoms))
	pos := make([][3]float64, len(s.mol.Atoms))
	for i, a := range s.mol.Atoms {
		z[i], pos[i] = a.Z, a.Position
	}
	var fr grid.Frame
	if frame != nil {
		fr = *frame
	} else {
		var err error
		if fr, err = grid.StandardFrame(z, pos); err != nil {
			return err
		}
	}
	g, err := grid.New(z, pos, s.gridLevel, fr, s.opts.Threads)
	if err != nil {
		return err
	}
	s.grid = g
	ib := integral.NewBasis(s.shells)
	pot := dft.New(s.fn, g, ib, s.opts.Threads)
	pot.CacheBytes = gradient.XCCacheBytes(s.memBytes, ib.NBF, s.opts.AuxShells)
	s.opts.XC = pot
	if s.opts.XCStart, err = gradient.StartXC(s.fn, z, pos, s.gridLevel, fr, ib, s.opts.Threads, pot.CacheBytes); err != nil {
		return err
	}
	return nil
}

// runSCF runs the SCF and turns a convergence failure into exit status 3
// with advice.
func runSCF(ctx context.Context, s *setup) (*scf.Result, error) {
	if s.opts.XC == nil && s.fn.NeedsGrid() {
		if err := s.attachXC(nil); err != nil {
			return nil, err
		}
	}
	opts := s.opts
	opts.Stability = s.stability
	res, err := scf.Run(ctx, s.mol, s.shells, opts)
	if errors.Is(err, scf.ErrNotConverged) {
		return res, convergeErr(fmt.Errorf("%w\n  try: --max-iterations %d; a smaller basis first; check the geometry, charge and multiplicity; for open shells --unrestricted",
			err, 2*s.opts.MaxIterations))
	}
	return res, err
}
