package settle

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"

	"poise/energy/basis"
	"poise/energy/dispersion"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
	"poise/freq"
	"poise/gradient"
	"poise/optimize"
	"poise/thermo"
	"poise/thermo/pointgroup"
)

// Verdicts of a Summary.
const (
	VerdictMinimum    = "minimum"
	VerdictNotMinimum = "not a minimum"
)

// DefaultMaxCycles is the default number of displace-and-relax cycles
// after the first relaxation.
const DefaultMaxCycles = 3

// Noise thresholds for imaginary wavenumbers (cm⁻¹): an imaginary mode
// smaller than this is taken for numerical noise of the finite-difference
// Hessian (and, for DFT, of the integration grid), not for a saddle point
// (common practice).
const (
	NoiseThresholdDFTCm1 = 50.0
	NoiseThresholdHFCm1  = 20.0
)

// displaceMaxAtomBohr is the largest atomic displacement along an
// imaginary mode before relaxing again (0.3 bohr ≈ 0.16 Å, common practice:
// well past the region where the harmonic model is flat, well short of a
// new structure).
const displaceMaxAtomBohr = 0.3

// Level is a level of theory with its SCF settings.
type Level struct {
	Basis      *basis.Set
	Convention basis.Convention
	// Method is the functional; nil means Hartree–Fock.
	Method *xc.Functional
	// GridLevel is the DFT grid level (0: grid.DefaultLevel).
	GridLevel int
	// Dispersion, when set, adds D3(BJ).
	Dispersion *dispersion.Params
	// Fit, when set, is the auxiliary basis set of density fitting
	// (gradient.Config.Fit); nil means exact four-centre integrals.
	Fit *basis.Set
	// SCF carries thresholds, iteration limit, unrestricted flag and
	// resources (Threads, MemoryBytes). XC, Guess, Progress and AuxShells
	// are ignored (the surface builds the auxiliary shells from Fit).
	SCF scf.Options
}

func (l Level) methodName() string {
	if l.Method == nil {
		return "hf"
	}
	return l.Method.Name()
}

func (l Level) needsGrid() bool { return l.Method != nil && l.Method.NeedsGrid() }

// Label is the level of theory as printed, e.g. "B3LYP-D3(BJ)/6-31G*",
// or "B3LYP/6-31G* (RI-JK: def2-universal-JKFIT)" with density fitting.
func (l Level) Label() string {
	name := "?"
	if l.Basis != nil {
		name = l.Basis.Name
	}
	return LevelLabel(l.methodName(), name, l.Dispersion != nil) + FitLabel(l.Fit)
}

// FitLabel is what a level's label gains with density fitting: "" without
// it, else " (RI-JK: NAME)" for a Coulomb-and-exchange fitting set and
// " (RI-J: NAME)" for a Coulomb-only one.
func FitLabel(fit *basis.Set) string {
	if fit == nil {
		return ""
	}
	kind := "RI-JK"
	if fit.Role == basis.RoleJFit {
		kind = "RI-J"
	}
	return " (" + kind + ": " + fit.Name + ")"
}

// LevelLabel is the printed and stored form of a level of theory, e.g.
// "B3LYP-D3(BJ)/6-31G*": the method in capitals, "-D3(BJ)" when the
// dispersion correction is on, and the basis set's name.
func LevelLabel(method, basisName string, d3bj bool) string {
	m := strings.ToUpper(method)
	if d3bj {
		m += "-D3(BJ)"
	}
	return m + "/" + basisName
}

// tag is everything about the level that changes the numbers.
func (l Level) tag() string {
	disp := "none"
	if l.Dispersion != nil {
		disp = fmt.Sprintf("d3bj(%+v)", *l.Dispersion)
	}
	grid := 0
	if l.needsGrid() {
		grid = l.GridLevel
	}
	name := ""
	if l.Basis != nil {
		name = l.Basis.Name
	}
	o := l.SCF
	t := fmt.Sprintf("method=%s basis=%s convention=%v grid=%d dispersion=%s unrestricted=%v etol=%g gtol=%g lindep=%g",
		l.methodName(), name, l.Convention, grid, disp, o.Unrestricted, o.EnergyTolerance, o.GradientTolerance, o.LinearDependence)
	if l.Fit != nil {
		// Only with fitting on: the tags (and store keys) of levels
		// without it stay those of the stores written before fitting
		// existed.
		t += " fit=" + l.Fit.Name
	}
	return t
}

// Options control Run. Start from DefaultOptions: zero values of
// TemperatureK, PressurePa, ThresholdCm1 and StepBohr mean their defaults,
// but MaxCycles 0 means no displacement cycle at all.
type Options struct {
	TemperatureK float64 // default 298.15 K
	PressurePa   float64 // default 1 bar
	// MaxCycles is the number of displace-and-relax cycles allowed after
	// the first relaxation.
	MaxCycles int
	// ThresholdCm1 is the noise threshold for imaginary wavenumbers
	// (magnitude, cm⁻¹); 0 means NoiseThresholdDFTCm1 for DFT and
	// NoiseThresholdHFCm1 for Hartree–Fock.
	ThresholdCm1 float64
	// StepBohr is the finite-difference step of the Hessian (0:
	// freq.DefaultStepBohr).
	StepBohr float64
	// MaxSteps bounds each relaxation (0: optimize.DefaultMaxSteps).
	MaxSteps int
	// Prerelax, if set, relaxes at this (cheaper) level first, to the
	// "draft" criteria; only the geometry is carried over.
	Prerelax *Level
	// EnergyAt, if set, computes the final electronic energy at this level
	// on the settled geometry; the thermal corrections stay those of the
	// settle level.
	EnergyAt *Level
	// ProgramVersion is recorded in the Summary and in the Key.
	ProgramVersion string
	// Store, if set, is looked up before and filled after the
	// calculation.
	Store *Store
	// NewSurface builds the surface of a level (nil: an SCF surface).
	// Tests use it to count evaluations.
	NewSurface func(mol *molecule.Molecule, lvl Level) (gradient.Surface, error)
	// Log, if set, receives one line per stage.
	Log func(string)
	// NoSymmetry evaluates every displaced point of the Hessians; by
	// default only those that are not images of others under the
	// molecule's point group are (freq.HessianOptions.SymmetryKinds), and
	// one atom follows from translational invariance.
	NoSymmetry bool
	// WorkDir, if set, keeps every finished relaxation step and displaced
	// point, so that a run stopped at any moment continues there when
	// started again with the same inputs (see work.go). The caller removes
	// it (RemoveWork) once the result is safe.
	WorkDir string
}

// DefaultOptions are 298.15 K, 1 bar and DefaultMaxCycles.
func DefaultOptions() Options {
	return Options{TemperatureK: thermo.DefaultTemperatureK, PressurePa: units.StandardPressurePa, MaxCycles: DefaultMaxCycles}
}

func (o Options) withDefaults(lvl Level) Options {
	if o.TemperatureK == 0 {
		o.TemperatureK = thermo.DefaultTemperatureK
	}
	if o.PressurePa == 0 {
		o.PressurePa = units.StandardPressurePa
	}
	if o.ThresholdCm1 == 0 {
		o.ThresholdCm1 = NoiseThresholdHFCm1
		if lvl.needsGrid() {
			o.ThresholdCm1 = NoiseThresholdDFTCm1
		}
	}
	if o.StepBohr == 0 {
		o.StepBohr = freq.DefaultStepBohr
	}
	if o.MaxSteps == 0 {
		o.MaxSteps = optimize.DefaultMaxSteps
	}
	return o
}

// Summary is the outcome of a settle run. Its JSON keys are a contract of
// the summary file.
type Summary struct {
	Verdict        string `json:"verdict"`
	ImaginaryCount int    `json:"imaginary_count"`
	// ImaginaryCm1 are the imaginary wavenumbers above the threshold, as
	// negative numbers (most negative first).
	ImaginaryCm1 []float64 `json:"imaginary_wavenumbers_cm1"`
	ThresholdCm1 float64   `json:"imaginary_threshold_cm1"`
	// EnergyHartree is the electronic energy: at EnergyLevel when given,
	// else at the settle level (SettleEnergyHartree).
	EnergyHartree       float64 `json:"energy_hartree"`
	SettleEnergyHartree float64 `json:"settle_level_energy_hartree"`
	ZPEHartree          float64 `json:"zero_point_energy_hartree"`
	// EnthalpyHartree and GibbsHartree are absolute: EnergyHartree plus
	// the thermal corrections of the settle level at TemperatureK and
	// PressurePa.
	EnthalpyHartree           float64  `json:"enthalpy_hartree"`
	GibbsHartree              float64  `json:"gibbs_hartree"`
	EnthalpyCorrectionHartree float64  `json:"enthalpy_correction_hartree"`
	GibbsCorrectionHartree    float64  `json:"gibbs_correction_hartree"`
	EntropyJPerMolK           float64  `json:"entropy_j_per_mol_k"`
	CpJPerMolK                float64  `json:"heat_capacity_cp_j_per_mol_k"`
	TemperatureK              float64  `json:"temperature_k"`
	PressurePa                float64  `json:"pressure_pa"`
	Formula                   string   `json:"formula"`
	Charge                    int      `json:"charge"`
	Multiplicity              int      `json:"multiplicity"`
	Symbols                   []string `json:"symbols"`
	// GeometryAngstrom is the settled geometry.
	GeometryAngstrom [][3]float64 `json:"geometry_angstrom"`
	MassesU          []float64    `json:"masses_u"`
	// FrequenciesCm1 are all harmonic wavenumbers (imaginary negative),
	// ascending, unscaled.
	FrequenciesCm1 []float64 `json:"frequencies_cm1"`
	PointGroup     string    `json:"point_group"`
	SymmetryNumber int       `json:"symmetry_number"`
	LevelOfTheory  string    `json:"level_of_theory"`
	// EnergyLevel is the level of the final single point (empty: none).
	EnergyLevel    string   `json:"energy_level_of_theory,omitempty"`
	PrerelaxLevel  string   `json:"prerelax_level_of_theory,omitempty"`
	Cycles         int      `json:"displacement_cycles"`
	RelaxSteps     int      `json:"relaxation_steps"`
	Evaluations    int      `json:"surface_evaluations"`
	Warnings       []string `json:"warnings"`
	ProgramVersion string   `json:"program_version"`
	Key            string   `json:"store_key"`
}

// Minimum reports whether the structure is a confirmed minimum.
func (s *Summary) Minimum() bool { return s.Verdict == VerdictMinimum }

// ThermoInput is the input of package thermo for the settled structure
// (electronic energy EnergyHartree), to recompute the thermochemistry at
// other conditions.
func (s *Summary) ThermoInput() thermo.Input {
	in := thermo.Input{Multiplicity: s.Multiplicity, EnergyHartree: s.EnergyHartree, HasEnergy: true}
	for i, sym := range s.Symbols {
		g := s.GeometryAngstrom[i]
		in.Atoms = append(in.Atoms, pointgroup.Atom{Label: sym, Mass: s.MassesU[i],
			Position: [3]float64{g[0] * units.AngstromBohr, g[1] * units.AngstromBohr, g[2] * units.AngstromBohr}})
	}
	in.FrequenciesCm1 = append([]float64(nil), s.FrequenciesCm1...)
	return in
}

// At evaluates the thermochemistry (plain rigid rotor and harmonic
// oscillator, as in the Summary) at other conditions.
func (s *Summary) At(c thermo.Conditions) (thermo.Properties, error) {
	m, err := thermo.NewModel(s.ThermoInput(), thermo.Options{})
	if err != nil {
		return thermo.Properties{}, err
	}
	return m.Properties(c)
}

// Result is a Summary with the files behind it.
type Result struct {
	Summary *Summary `json:"summary"`
	// Modes is the modes file of the settled geometry (the format of
	// poise modes, readable by poise thermo).
	Modes *freq.File `json:"modes"`
	// TrajectoryXYZ holds every accepted geometry of every relaxation.
	TrajectoryXYZ string `json:"trajectory_xyz"`
	// Reused is true when the Result came from the store (no SCF at all).
	Reused bool `json:"-"`
}

// Run settles mol at lvl. A structure that stays a saddle point is not an
// error: its Summary says "not a minimum". Errors are failures (SCF or
// relaxation not converging, cancelled context, bad input).
func Run(ctx context.Context, mol *molecule.Molecule, lvl Level, opts Options) (*Result, error) {
	if mol == nil || len(mol.Atoms) == 0 {
		return nil, errors.New("settle: no atoms")
	}
	if lvl.Basis == nil {
		return nil, errors.New("settle: no basis set")
	}
	if opts.MaxCycles < 0 {
		return nil, fmt.Errorf("settle: %d displacement cycles: give 0 or more", opts.MaxCycles)
	}
	opts = opts.withDefaults(lvl)
	mol = mol.Clone()
	if err := mol.SetSpin(mol.Charge, mol.Multiplicity); err != nil {
		return nil, fmt.Errorf("settle: %w", err)
	}
	key := Key(mol, lvl, opts)
	if opts.Store != nil {
		if r, ok := opts.Store.Get(key); ok {
			r.Reused = true
			return r, nil
		}
	}
	w, resumed, err := openWork(opts.WorkDir, key)
	if err != nil {
		return nil, err
	}
	r := &runner{mol: mol, lvl: lvl, opts: opts, work: w}
	if resumed {
		r.log("continuing from the finished work in %s", opts.WorkDir)
	}
	res, err := r.run(ctx)
	if err != nil {
		return nil, err
	}
	res.Summary.Key = key
	if opts.Store != nil {
		if err := opts.Store.Put(key, res); err != nil {
			return res, fmt.Errorf("settle: storing the result: %w", err)
		}
	}
	return res, nil
}

type runner struct {
	mol   *molecule.Molecule
	lvl   Level
	opts  Options
	work  *work
	traj  bytes.Buffer
	evals int
	steps int
	// last is the latest evaluation of the current relaxation (with the
	// dipole), which the Hessian at the relaxed geometry takes as its
	// reference point instead of evaluating it again.
	last *recordedPoint
}

// recordedPoint is one evaluation: where, and what it gave.
type recordedPoint struct {
	x []float64
	p gradient.Point
}

// recorder is a surface that asks every evaluation that replaces the warm
// start for the dipole too (a cheap one-electron property) and keeps the
// latest one.
type recorder struct {
	gradient.Surface
	mu   sync.Mutex
	last *recordedPoint
}

func (c *recorder) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	if req.KeepWarmStart {
		return c.Surface.Evaluate(ctx, x, req, out)
	}
	req.Dipole = true
	err := c.Surface.Evaluate(ctx, x, req, out)
	c.mu.Lock()
	defer c.mu.Unlock()
	c.last = nil
	if err == nil && req.Gradient {
		p := *out
		p.Gradient = append([]float64(nil), out.Gradient...)
		c.last = &recordedPoint{x: append([]float64(nil), x...), p: p}
	}
	return err
}

func (r *runner) log(format string, a ...any) {
	if r.opts.Log != nil {
		r.opts.Log(fmt.Sprintf(format, a...))
	}
}

func (r *runner) surface(l Level, tight bool) (gradient.Surface, error) {
	if tight {
		// Displaced gradients converged tighter than single energies: the
		// differences amplify their noise by 1/2h.
		l.SCF.GradientTolerance = freq.SCFGradientTolerance
	}
	if r.opts.NewSurface != nil {
		return r.opts.NewSurface(r.mol, l)
	}
	o := l.SCF
	o.XC, o.XCStart, o.Guess, o.Progress, o.AuxShells = nil, nil, nil, nil, nil
	return gradient.NewSCFSurface(r.mol, gradient.Config{Basis: l.Basis, Convention: l.Convention, Method: l.Method,
		GridLevel: l.GridLevel, SCF: o, Dispersion: l.Dispersion, Fit: l.Fit})
}

// relax relaxes from x to the named criteria, starting from init's
// Hessian when it fits (nil: the model Hessian), and returns the geometry,
// the energy and the final internal-coordinate Hessian (nil if none).
// With a work directory, every accepted step is saved under stage, and a
// relaxation finished or begun by an earlier run is taken up from there.
func (r *runner) relax(ctx context.Context, s gradient.Surface, x []float64, crit string, what, stage string, init *optimize.InternalHessian) ([]float64, float64, *optimize.InternalHessian, error) {
	r.last = nil
	c, err := optimize.Convergence(crit)
	if err != nil {
		return nil, 0, nil, err
	}
	var (
		stageTraj  bytes.Buffer
		prevSteps  int
		prevEvals  int
		resumeStep bool
	)
	if ck, ok := r.work.load(stage, len(x)); ok {
		if ck.Done {
			r.traj.WriteString(ck.Trajectory)
			r.steps += ck.Steps
			r.evals += ck.Evaluations
			r.log("%s: finished by an earlier run (%d steps), energy %.10f Eh", what, ck.Steps, ck.EnergyHartree)
			return ck.CoordsBohr, ck.EnergyHartree, ck.Hessian, nil
		}
		x, prevSteps, prevEvals, resumeStep = ck.CoordsBohr, ck.Steps, ck.Evaluations, true
		stageTraj.WriteString(ck.Trajectory)
		r.log("%s: continuing from step %d of an earlier run", what, ck.Steps)
	}
	z := atomicNumbers(r.mol)
	frame := r.mol.Clone()
	before := s.Evaluations()
	var saveErr error
	rec := &recorder{Surface: s}
	res, err := optimize.Relax(ctx, rec, z, x, optimize.Options{Criteria: c, MaxSteps: r.opts.MaxSteps, Threads: r.lvl.SCF.Threads,
		InitialHessian: init,
		Progress: func(st optimize.Step) {
			if st.Rejected || (resumeStep && st.Number == 0) {
				return // the starting point of a resumed relaxation is already recorded
			}
			setPositions(frame, st.XBohr)
			_ = molecule.WriteXYZ(&stageTraj, frame, fmt.Sprintf("%s step %d  energy %.10f Eh  largest gradient %.2e Eh/bohr",
				what, prevSteps+st.Number, st.EnergyHartree, st.MaxGradient))
			if err := r.work.save(&workStage{Stage: stage, CoordsBohr: append([]float64(nil), st.XBohr...), EnergyHartree: st.EnergyHartree,
				Steps: prevSteps + st.Number, Evaluations: prevEvals + s.Evaluations() - before, Trajectory: stageTraj.String()}); err != nil && saveErr == nil {
				saveErr = err
			}
		}})
	r.evals += s.Evaluations() - before + prevEvals
	r.traj.Write(stageTraj.Bytes())
	if err != nil {
		return nil, 0, nil, fmt.Errorf("settle: %s: %w", what, err)
	}
	if saveErr != nil {
		return nil, 0, nil, saveErr
	}
	r.last = nil
	if l := rec.last; l != nil && slices.Equal(l.x, res.XBohr) {
		r.last = l
	}
	steps := prevSteps + res.Steps
	r.steps += steps
	r.log("%s: %d steps, energy %.10f Eh", what, steps, res.EnergyHartree)
	if err := r.work.save(&workStage{Stage: stage, Done: true, CoordsBohr: res.XBohr, EnergyHartree: res.EnergyHartree, Steps: steps,
		Evaluations: prevEvals + s.Evaluations() - before, Trajectory: stageTraj.String(), Hessian: res.Hessian}); err != nil {
		return nil, 0, nil, err
	}
	return res.XBohr, res.EnergyHartree, res.Hessian, nil
}

// modes computes the Hessian at x and its harmonic analysis.
func (r *runner) modes(ctx context.Context, s gradient.Surface, x []float64, cycle int) (*freq.Hessian, *freq.Analysis, error) {
	masses := massesOf(r.mol)
	before := s.Evaluations()
	hopts := freq.HessianOptions{StepBohr: r.opts.StepBohr, Dipole: true, Extrapolate: true,
		Threads: r.lvl.SCF.Threads, Charge: float64(r.mol.Charge), MassesU: masses,
		WorkDir: r.work.hessianDir(cycle), Tag: "settle " + r.lvl.tag(), DiscardStale: true}
	if l := r.last; l != nil && slices.Equal(l.x, x) {
		hopts.Reference = &l.p
	}
	r.last = nil
	if !r.opts.NoSymmetry {
		hopts.SymmetryKinds = atomicNumbers(r.mol)
		hopts.TranslationalInvariance = true
		hopts.RotationalInvariance = true
		if as, ok := s.(gradient.AxisSymmetric); ok {
			hopts.AxisOperationsExact = as.AxisOperationsExact()
		}
	}
	h, err := freq.ComputeHessian(ctx, s, x, hopts)
	r.evals += s.Evaluations() - before
	if err != nil {
		return nil, nil, fmt.Errorf("settle: Hessian: %w", err)
	}
	if h.SymmetryOperations > 1 {
		r.log("Hessian: %d displaced points (point group of order %d; geometry symmetrized by %.1e bohr)",
			h.Displacements, h.SymmetryOperations, h.SymmetryShiftBohr)
	}
	x = h.CoordsBohr
	an, err := freq.Analyze(freq.System{Z: atomicNumbers(r.mol), MassesU: masses, CoordsBohr: x,
		HessianAU: h.HessianAU, DipoleDerivAU: h.DipoleDerivAU})
	if err != nil {
		return nil, nil, fmt.Errorf("settle: harmonic analysis: %w", err)
	}
	return h, an, nil
}

func (r *runner) imaginary(an *freq.Analysis) []freq.Mode {
	var out []freq.Mode
	for _, m := range an.Modes {
		if m.WavenumberCm1 < -r.opts.ThresholdCm1 {
			out = append(out, m)
		}
	}
	return out
}

// displace moves x along each imaginary mode, both ways, keeping the
// lower energy.
func (r *runner) displace(ctx context.Context, s gradient.Surface, x []float64, modes []freq.Mode) ([]float64, error) {
	x = append([]float64(nil), x...)
	for _, m := range modes {
		largest := 0.0
		for a := 0; a < len(m.Displacement)/3; a++ {
			d := m.Displacement[3*a : 3*a+3]
			largest = math.Max(largest, math.Sqrt(d[0]*d[0]+d[1]*d[1]+d[2]*d[2]))
		}
		if largest == 0 {
			continue
		}
		scale := displaceMaxAtomBohr / largest
		best, bestE := []float64(nil), math.Inf(1)
		for _, sign := range []float64{1, -1} {
			y := make([]float64, len(x))
			for i := range y {
				y[i] = x[i] + sign*scale*m.Displacement[i]
			}
			var p gradient.Point
			err := s.Evaluate(ctx, y, gradient.Request{}, &p)
			r.evals++
			if err != nil {
				return nil, fmt.Errorf("settle: displaced point: %w", err)
			}
			if p.EnergyHartree < bestE {
				best, bestE = y, p.EnergyHartree
			}
		}
		r.log("displaced along %.1fi cm⁻¹: energy %.10f Eh", -m.WavenumberCm1, bestE)
		x = best
	}
	return x, nil
}

func (r *runner) run(ctx context.Context) (*Result, error) {
	x := gradient.Coordinates(r.mol)
	sum := &Summary{Warnings: []string{}, ThresholdCm1: r.opts.ThresholdCm1, ProgramVersion: r.opts.ProgramVersion,
		LevelOfTheory: r.lvl.Label(), TemperatureK: r.opts.TemperatureK, PressurePa: r.opts.PressurePa}
	// The prerelaxation's updated Hessian starts the first relaxation at
	// the requested level (same internal coordinates); later relaxations,
	// after a displacement, start from the model Hessian.
	var carried *optimize.InternalHessian
	if p := r.opts.Prerelax; p != nil {
		s, err := r.surface(*p, false)
		if err != nil {
			return nil, fmt.Errorf("settle: prerelax level: %w", err)
		}
		if x, _, carried, err = r.relax(ctx, s, x, "draft", "prerelax "+p.Label(), "prerelax", nil); err != nil {
			return nil, err
		}
		sum.PrerelaxLevel = p.Label()
	}
	s, err := r.surface(r.lvl, true)
	if err != nil {
		return nil, fmt.Errorf("settle: %w", err)
	}
	var (
		h    *freq.Hessian
		an   *freq.Analysis
		imag []freq.Mode
	)
	for cycle := 0; ; cycle++ {
		what := "relaxation"
		if cycle > 0 {
			what = fmt.Sprintf("relaxation after displacement %d", cycle)
		}
		init := carried
		if cycle > 0 {
			init = nil
		}
		if x, _, _, err = r.relax(ctx, s, x, "strict", what, fmt.Sprint(cycle), init); err != nil {
			return nil, err
		}
		if h, an, err = r.modes(ctx, s, x, cycle); err != nil {
			return nil, err
		}
		x = h.CoordsBohr // made exactly symmetric when symmetry is used
		imag = r.imaginary(an)
		sum.Cycles = cycle
		if len(imag) == 0 || cycle >= r.opts.MaxCycles {
			break
		}
		if x, err = r.displace(ctx, s, x, imag); err != nil {
			return nil, err
		}
	}
	final := r.mol.Clone()
	setPositions(final, x)

	masses := massesOf(final)
	file := modesFile(final, r.lvl, h, an, r.opts.ProgramVersion)

	sum.SettleEnergyHartree = h.EnergyHartree
	sum.EnergyHartree = h.EnergyHartree
	if e := r.opts.EnergyAt; e != nil {
		es, err := r.surface(*e, false)
		if err != nil {
			return nil, fmt.Errorf("settle: energy level: %w", err)
		}
		var p gradient.Point
		if err := es.Evaluate(ctx, x, gradient.Request{}, &p); err != nil {
			return nil, fmt.Errorf("settle: single point at %s: %w", e.Label(), err)
		}
		r.evals++
		sum.EnergyHartree = p.EnergyHartree
		sum.EnergyLevel = e.Label()
	}
	sum.ImaginaryCount = len(imag)
	sum.ImaginaryCm1 = []float64{}
	for _, m := range imag {
		sum.ImaginaryCm1 = append(sum.ImaginaryCm1, m.WavenumberCm1)
	}
	sum.Verdict = VerdictMinimum
	if len(imag) > 0 {
		sum.Verdict = VerdictNotMinimum
	}
	for _, m := range an.Modes {
		sum.FrequenciesCm1 = append(sum.FrequenciesCm1, m.WavenumberCm1)
		if m.WavenumberCm1 < 0 && m.WavenumberCm1 >= -r.opts.ThresholdCm1 {
			sum.Warnings = append(sum.Warnings, fmt.Sprintf("imaginary mode of %.1fi cm⁻¹ taken for numerical noise (threshold %gi cm⁻¹); left out of the thermochemistry", -m.WavenumberCm1, r.opts.ThresholdCm1))
		}
	}
	if sum.FrequenciesCm1 == nil {
		sum.FrequenciesCm1 = []float64{}
	}
	sum.Formula = final.Formula()
	sum.Charge, sum.Multiplicity = final.Charge, final.Multiplicity
	for _, a := range final.Atoms {
		sum.Symbols = append(sum.Symbols, a.Symbol)
	}
	sum.GeometryAngstrom = final.PositionsAngstrom()
	sum.MassesU = masses
	sum.RelaxSteps = r.steps
	sum.Evaluations = r.evals

	model, err := thermo.NewModel(sum.ThermoInput(), thermo.Options{})
	if err != nil {
		return nil, fmt.Errorf("settle: thermochemistry: %w", err)
	}
	props, err := model.Properties(thermo.Conditions{TemperatureK: r.opts.TemperatureK, PressurePa: r.opts.PressurePa})
	if err != nil {
		return nil, fmt.Errorf("settle: thermochemistry: %w", err)
	}
	sum.PointGroup, sum.SymmetryNumber = model.PointGroup.Symbol, model.SymmetryNumber
	sum.ZPEHartree = props.ZeroPointEnergyHartree
	sum.EnthalpyCorrectionHartree = props.EnthalpyHartree
	sum.GibbsCorrectionHartree = props.GibbsHartree
	sum.EnthalpyHartree = props.AbsoluteEnthalpyHartree
	sum.GibbsHartree = props.AbsoluteGibbsHartree
	sum.EntropyJPerMolK = props.EntropyJPerMolK
	sum.CpJPerMolK = props.CpJPerMolK
	if RotatableBonds(atomicNumbers(final), x) > 0 {
		sum.Warnings = append(sum.Warnings, RotatableWarning)
	}
	if w := StabilityWarning(atomicNumbers(final), x, final.Multiplicity, r.lvl.SCF.Unrestricted, h.ReferenceGapHartree); w != "" {
		sum.Warnings = append(sum.Warnings, w)
	}
	return &Result{Summary: sum, Modes: file, TrajectoryXYZ: r.traj.String()}, nil
}

// StabilityWarning returns a warning for a restricted closed-shell singlet
// whose wavefunction is of a kind that is often unstable towards an
// unrestricted solution and was not checked (settle does not run the
// stability check): one with a stretched bond, a bonded pair (optimize.Bonds)
// between 1.3 and 1.8 times the sum of the covalent radii (common practice;
// longer links are taken for van der Waals contacts between fragments),
// or one whose HOMO–LUMO gap gapHartree (0: unknown) is below
// SmallGapHartree. It returns "" when there is nothing to warn about.
func StabilityWarning(z []int, xBohr []float64, multiplicity int, unrestricted bool, gapHartree float64) string {
	if multiplicity != 1 || unrestricted {
		return ""
	}
	if gapHartree > 0 && gapHartree < SmallGapHartree {
		return fmt.Sprintf("the closed-shell singlet has a small HOMO–LUMO gap (%.3f Eh = %.2f eV) and its wavefunction was not checked for a restricted → unrestricted instability: check it with 'poise energy --stability check' at the final geometry", gapHartree, gapHartree*units.HartreeEV)
	}
	for _, b := range optimize.Bonds(z, xBohr) {
		i, j := b[0], b[1]
		var d2 float64
		for k := 0; k < 3; k++ {
			d := xBohr[3*i+k] - xBohr[3*j+k]
			d2 += d * d
		}
		ratio := math.Sqrt(d2) / (optimize.CovalentRadiusBohr(z[i]) + optimize.CovalentRadiusBohr(z[j]))
		if ratio > optimize.BondFactor && ratio <= 1.8 {
			return fmt.Sprintf("the closed-shell singlet has a stretched bond (atoms %d–%d at %.2f× the sum of covalent radii) and its wavefunction was not checked for a restricted → unrestricted instability: check it with 'poise energy --stability check' at the final geometry", i+1, j+1, ratio)
		}
	}
	return ""
}

// SmallGapHartree is the HOMO–LUMO gap below which a restricted singlet is
// suspected of a restricted → unrestricted instability (0.1 Eh ≈ 2.7 eV;
// common practice: stretched bonds, diradicaloids and large acenes have gaps
// of this order).
const SmallGapHartree = 0.1

// RotatableWarning is the warning for molecules with rotatable bonds.
const RotatableWarning = "the molecule has rotatable bonds: the minimum found is the one nearest the input, not necessarily the lowest conformer"

// singleBondFactor: a bond longer than this fraction of the sum of the
// covalent (single-bond) radii is taken for a single bond; double bonds
// are some 10 % shorter than single ones (common practice).
const singleBondFactor = 0.93

// RotatableBonds counts single bonds between two non-terminal heavy atoms
// (each with at least two heavy-atom neighbours) outside rings.
func RotatableBonds(z []int, xBohr []float64) int {
	bonds := optimize.Bonds(z, xBohr)
	nat := len(z)
	adj := make([][]int, nat)
	for _, b := range bonds {
		adj[b[0]] = append(adj[b[0]], b[1])
		adj[b[1]] = append(adj[b[1]], b[0])
	}
	heavyDegree := func(a int) int {
		n := 0
		for _, b := range adj[a] {
			if z[b] > 1 {
				n++
			}
		}
		return n
	}
	// connected reports whether a and b are joined without the bond a–b.
	connected := func(a, b int) bool {
		seen := make([]bool, nat)
		stack := []int{a}
		seen[a] = true
		for len(stack) > 0 {
			u := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for _, v := range adj[u] {
				if u == a && v == b {
					continue
				}
				if v == b {
					return true
				}
				if !seen[v] {
					seen[v] = true
					stack = append(stack, v)
				}
			}
		}
		return false
	}
	n := 0
	for _, bd := range bonds {
		i, j := bd[0], bd[1]
		if z[i] <= 1 || z[j] <= 1 || heavyDegree(i) < 2 || heavyDegree(j) < 2 {
			continue
		}
		d := 0.0
		for k := 0; k < 3; k++ {
			t := xBohr[3*i+k] - xBohr[3*j+k]
			d += t * t
		}
		if math.Sqrt(d) < singleBondFactor*(optimize.CovalentRadiusBohr(z[i])+optimize.CovalentRadiusBohr(z[j])) {
			continue
		}
		if connected(i, j) {
			continue
		}
		n++
	}
	return n
}

// modesFile is the modes file (the format of poise modes) of the analysis.
func modesFile(mol *molecule.Molecule, lvl Level, h *freq.Hessian, an *freq.Analysis, version string) *freq.File {
	nat := len(mol.Atoms)
	n := 3 * nat
	conv := "cartesian"
	if sh, err := lvl.Basis.Shells(mol, lvl.Convention); err == nil {
		for _, s := range sh {
			if s.L >= 2 {
				if s.Pure {
					conv = "spherical"
				}
				break
			}
		}
	}
	f := &freq.File{
		Format: freq.FileFormat, FormatVersion: freq.FileFormatVersion, ProgramVersion: version,
		Formula: mol.Formula(), Charge: mol.Charge, Multiplicity: mol.Multiplicity,
		GeometryAngstrom: mol.PositionsAngstrom(), MassesU: massesOf(mol),
		Level: &freq.Level{Method: lvl.methodName(), Basis: lvl.Basis.Name, AngularFunctions: conv,
			Unrestricted: lvl.SCF.Unrestricted || mol.Multiplicity > 1},
		StepBohr: h.StepBohr, FourPoint: h.FourPoint, GradientAU: h.GradientAU,
		DipoleAU: &h.DipoleAU, Warnings: []string{},
	}
	if lvl.needsGrid() {
		f.Level.GridLevel = lvl.GridLevel
	}
	if lvl.Fit != nil {
		f.Level.Fit = lvl.Fit.Name
	}
	if lvl.Dispersion != nil {
		f.Level.Dispersion = "d3bj"
	}
	e := h.EnergyHartree
	f.EnergyHartree = &e
	for _, a := range mol.Atoms {
		f.Symbols = append(f.Symbols, a.Symbol)
	}
	f.HessianAU = make([][]float64, n)
	f.DipoleDerivAU = make([][]float64, n)
	for i := 0; i < n; i++ {
		f.HessianAU[i] = h.HessianAU[i*n : (i+1)*n]
		if h.DipoleDerivAU != nil {
			f.DipoleDerivAU[i] = h.DipoleDerivAU[3*i : 3*i+3]
		}
	}
	if h.DipoleDerivAU == nil {
		f.DipoleDerivAU = nil
	}
	if g, err := freq.InternalGradientNorm(h.CoordsBohr, h.GradientAU); err == nil {
		f.GradientNormAU = g
		f.Stationary = g <= freq.StationaryGradientAU
	}
	sc, err := freq.ChooseScaling("auto", f.Level.Method, f.Level.Basis)
	if err != nil {
		sc, _ = freq.ChooseScaling("none", "", "")
	}
	f.SetAnalysis(an, sc)
	f.Computation = &freq.FileComputation{Displacements: h.Displacements, Computed: h.Computed, Reused: h.Reused,
		Gradients: h.Evaluations, AsymmetryAU: h.AsymmetryAU, Threads: lvl.SCF.Threads}
	return f
}

func atomicNumbers(m *molecule.Molecule) []int {
	z := make([]int, len(m.Atoms))
	for i, a := range m.Atoms {
		z[i] = a.Z
	}
	return z
}

func massesOf(m *molecule.Molecule) []float64 {
	v := make([]float64, len(m.Atoms))
	for i, a := range m.Atoms {
		v[i] = a.Mass
	}
	return v
}

func setPositions(m *molecule.Molecule, xBohr []float64) {
	for i := range m.Atoms {
		copy(m.Atoms[i].Position[:], xBohr[3*i:3*i+3])
	}
}
