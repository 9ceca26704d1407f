package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
	"github.com/spf13/cobra"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	_ "gonum.org/v1/plot/vg/vgimg" // registers png
	_ "gonum.org/v1/plot/vg/vgsvg" // registers svg

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/freq"
	"poise/gradient"
	"poise/internal/atomicfile"
	"poise/settle"
)

// modesFlags are the options of poise modes besides the level of theory.
type modesFlags struct {
	from       string
	out        string
	asJSON     bool
	detail     bool
	scale      string
	isotopes   string
	masses     string
	step       float64
	fourPoint  bool
	noSymmetry bool
	concurrent int
	fwhm       float64
	plan       string
	assemble   string
	batch      batchFlags
}

// Animation and spectrum settings.
const (
	animationFrames   = 20   // frames per period of a mode animation
	animationShiftAng = 0.25 // Å, largest atomic displacement at the turning points
	defaultFWHMCm1    = 10.0 // cm⁻¹, Lorentzian width of the IR picture
)

func newModesCmd() *cobra.Command {
	var lf levelFlags
	var f modesFlags
	cmd := &cobra.Command{
		Use:   "modes FILE.xyz | modes --from MODES.json",
		Short: "normal modes, harmonic frequencies and IR intensities",
		Long: `Computes the Hessian of the molecule in FILE.xyz by central differences of analytic
gradients (each coordinate displaced by ±--step bohr, default 0.0025; --four-point for the
fourth-order formula), the dipole derivatives from the same points, and the harmonic
analysis: wavenumbers (imaginary ones marked "i"; negative in JSON), IR intensities,
reduced masses, force constants, zero-point energy, and for each mode the internal
coordinates it moves most. Translations and rotations are projected out (3N−6 modes,
3N−5 for linear molecules). Masses are the most abundant isotopes unless changed.

Symmetry: when the structure has a point group (within 0.001 bohr; it is then made exactly
symmetric), only one atom of each set of equivalent atoms is displaced and the Hessian
columns of the others are its rotated images (benzene: 8 displaced points instead of 72);
one atom that no operation moves is not displaced at all, its columns following from the
invariance of the energy under translations (water: 5 points instead of 18). Without
symmetry, three more coordinates follow from the invariance under rotations (with the
reference gradient): 6N − 12 displaced points instead of 6N. --no-symmetry displaces every
atom.

The structure should be a minimum relaxed tightly (poise relax --converge strict); a
warning says so when the gradient norm, translations and rotations removed, exceeds
1e-3 Eh/bohr.

Output goes to --out DIR (default FILE-modes beside the input): NAME.modes.json (the
Hessian, dipole derivatives, masses, geometry, level of theory and every result; the
input of 'poise thermo' and of --from), one animation per mode (NAME-mode-NN.xyz, one
period in 20 frames), and the IR spectrum (NAME-ir.svg and NAME-ir.png: band sticks
and a Lorentzian sum). The finished displaced points are kept in DIR/displacements:
an interrupted run, started again with the same command, resumes where it stopped.

Isotopologues need no new gradients:
  poise modes --from water-modes/water.modes.json --isotope 2=2,3=2 --out d2o
  --isotope ATOM=A sets mass number A (atoms numbered from 1, as in the tables);
  --mass ATOM=U sets a mass in u.

--scale auto (default) applies the built-in factors of the level of theory: one for
the wavenumbers, a separate one for the zero-point energy (published per level; the
output names the source of each); --scale 0.96 sets one factor for both; --scale none.
Scaled and unscaled values are both shown; the JSON keeps frequencies_cm1 and
zero_point_energy_hartree unscaled.

On a cluster: --plan DIR computes the reference point and writes every displaced point as an
independent task with a Slurm job-array script (DIR/submit.sbatch); after the array has run,
--assemble DIR gives the usual output (in DIR unless --out), or lists the unfinished tasks
with DIR/resubmit.sbatch for just those (exit status 5). 'poise task --help' tells more.`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runModes(cmd, args, &lf, &f)
		},
	}
	lf.register(cmd)
	fl := cmd.Flags()
	fl.StringVar(&f.from, "from", "", "redo the analysis from a modes JSON file (other masses or scaling), no new gradients")
	fl.StringVar(&f.out, "out", "", "output directory (default: FILE-modes beside the input; with --from, none)")
	fl.BoolVar(&f.asJSON, "json", false, "print the modes JSON instead of tables")
	fl.BoolVar(&f.detail, "detail", false, "add reduced masses, force constants and the moving internal coordinates to the table")
	fl.StringVar(&f.scale, "scale", "auto", "scale factors: auto (built-in per level of theory), none, or a factor such as 0.96")
	fl.StringVar(&f.isotopes, "isotope", "", "isotopes ATOM=MASSNUMBER, comma-separated, atoms from 1 (e.g. 2=2,3=2)")
	fl.StringVar(&f.masses, "mass", "", "masses ATOM=U in u, comma-separated, atoms from 1 (e.g. 2=2.0141)")
	fl.Float64Var(&f.step, "step", freq.DefaultStepBohr, "finite-difference displacement in bohr")
	fl.BoolVar(&f.fourPoint, "four-point", false, "fourth-order differences (±step, ±2·step; twice the gradients)")
	fl.BoolVar(&f.noSymmetry, "no-symmetry", false, "evaluate every displaced point (by default images of others under the point group, one atom by translational invariance and, without symmetry, three coordinates by rotational invariance, are skipped)")
	fl.IntVar(&f.concurrent, "concurrent", 0, "displaced points computed at once, sharing --threads (default: one per thread)")
	fl.Float64Var(&f.fwhm, "fwhm", defaultFWHMCm1, "Lorentzian full width at half maximum of the IR picture, cm⁻¹")
	fl.StringVar(&f.plan, "plan", "", "compute the reference point, write every displaced point as a task into DIR for a batch system, with a Slurm job-array script; nothing else is computed")
	fl.StringVar(&f.assemble, "assemble", "", "the modes of the plan in DIR once every task has finished (list the missing ones otherwise); output in DIR unless --out")
	f.batch.register(cmd)
	return cmd
}

// modesStem is the name stem of the output files: the input's name without
// its extension (and without ".modes" for a modes file).
func modesStem(path string) string {
	base := filepath.Base(path)
	base = strings.TrimSuffix(base, filepath.Ext(base))
	return strings.TrimSuffix(base, ".modes")
}

func runModes(cmd *cobra.Command, args []string, lf *levelFlags, f *modesFlags) error {
	changed := cmd.Flags().Changed
	if !(f.fwhm > 0) || math.IsInf(f.fwhm, 0) {
		return usageErr(fmt.Errorf("--fwhm %g: give a positive width in cm⁻¹", f.fwhm))
	}
	if f.concurrent < 0 {
		return usageErr(fmt.Errorf("--concurrent %d: give 0 (automatic) or more", f.concurrent))
	}
	var (
		file   *freq.File
		source string
		outDir = f.out
		stem   string
	)
	var plan *planFile
	switch {
	case f.plan != "" && (f.from != "" || f.assemble != ""):
		return usageErr(errors.New("--plan takes a structure FILE.xyz; --from and --assemble do not apply"))
	case f.plan != "" && len(args) == 1:
		if !(f.step > 0) || f.step > 0.05 {
			return usageErr(fmt.Errorf("--step %g: give a displacement in bohr between 0 and 0.05 (default %g)", f.step, freq.DefaultStepBohr))
		}
		return planModes(cmd, args[0], lf, f)
	case f.plan != "":
		return usageErr(errors.New("give the structure to plan: poise modes FILE.xyz --plan DIR"))
	case f.assemble != "" && (f.from != "" || len(args) == 1):
		return usageErr(errors.New("give either --assemble DIR, FILE.xyz or --from MODES.json"))
	case f.assemble != "":
		for _, name := range []string{"method", "basis", "charge", "multiplicity", "cartesian", "spherical", "unrestricted", "grid", "dispersion", "fit", "max-iterations", "step", "four-point"} {
			if changed(name) {
				return usageErr(fmt.Errorf("--%s does not apply with --assemble: the plan in %s fixes it", name, f.assemble))
			}
		}
		var err error
		if file, plan, err = assembleModes(cmd, f); err != nil {
			return err
		}
		source, stem = plan.Source, modesStem(plan.Source)
		if outDir == "" {
			outDir = plan.dir
		}
	case f.from != "" && len(args) == 1:
		return usageErr(errors.New("give either FILE.xyz or --from MODES.json, not both"))
	case f.from != "":
		for _, name := range []string{"method", "basis", "charge", "multiplicity", "cartesian", "spherical", "unrestricted", "grid", "fit", "step", "four-point"} {
			if changed(name) {
				return usageErr(fmt.Errorf("--%s does not apply with --from: the level of theory and the Hessian come from %s", name, f.from))
			}
		}
		m, err := freq.ReadFile(f.from)
		if err != nil {
			return usageErr(err)
		}
		file, source, stem = m, f.from, modesStem(f.from)
		if outDir != "" {
			same, _ := filepath.Abs(filepath.Join(outDir, stem+".modes.json"))
			src, _ := filepath.Abs(f.from)
			if same == src {
				return usageErr(fmt.Errorf("--out %s would overwrite %s: choose another directory", outDir, f.from))
			}
		}
	case len(args) == 1:
		if !(f.step > 0) || f.step > 0.05 {
			return usageErr(fmt.Errorf("--step %g: give a displacement in bohr between 0 and 0.05 (default %g)", f.step, freq.DefaultStepBohr))
		}
		source, stem = args[0], modesStem(args[0])
		if outDir == "" {
			outDir = filepath.Join(filepath.Dir(args[0]), stem+"-modes")
		}
		var err error
		file, _, err = computeModes(cmd, args[0], lf, f, outDir)
		if err != nil {
			return err
		}
	default:
		return usageErr(errors.New("give a structure (poise modes FILE.xyz) or a modes file (poise modes --from MODES.json)"))
	}

	// Masses: the file's (or most abundant) changed by --isotope and --mass.
	z := file.AtomicNumbers()
	base := file.MassesU
	if f.from == "" {
		base = nil
	}
	masses, note, err := freq.ApplyMasses(base, z, f.isotopes, f.masses)
	if err != nil {
		return usageErr(err)
	}
	if note != "" {
		if file.MassNote != "" && f.from != "" {
			note = file.MassNote + "; " + note
		}
		file.MassNote = note
	}
	file.MassesU = masses

	method, basisName := "", ""
	if file.Level != nil {
		method, basisName = file.Level.Method, file.Level.Basis
	}
	sc, err := freq.ChooseScaling(f.scale, method, basisName)
	if err != nil {
		return usageErr(err)
	}
	if sc.Found && file.Level != nil && file.Level.Dispersion != "" {
		sc.FrequencySource += "; published without dispersion correction"
		sc.ZPESource += "; published without dispersion correction"
	}
	an, err := freq.Analyze(file.System(masses))
	if err != nil {
		return fmt.Errorf("%s: %w", source, err)
	}
	file.SetAnalysis(an, sc)
	file.Source = source
	file.ProgramVersion = version
	if file.Warnings == nil {
		file.Warnings = []string{}
	}

	var written []string
	if outDir != "" {
		if err := os.MkdirAll(outDir, 0o755); err != nil {
			return fmt.Errorf("--out: %w", err)
		}
		atomicfile.RemoveLeftovers(outDir, stem) // of an earlier run killed while writing
		jsonPath := filepath.Join(outDir, stem+".modes.json")
		if err := file.Write(jsonPath); err != nil {
			return fmt.Errorf("writing %s: %w", jsonPath, err)
		}
		written = append(written, jsonPath)
		anim, err := writeAnimations(outDir, stem, file, an)
		if err != nil {
			return err
		}
		written = append(written, anim...)
		if an.HasIntensities && len(an.Modes) > 0 {
			for _, ext := range []string{".svg", ".png"} {
				p := filepath.Join(outDir, stem+"-ir"+ext)
				if err := plotIRSpectrum(p, file, f.fwhm); err != nil {
					return fmt.Errorf("IR spectrum %s: %w", p, err)
				}
				written = append(written, p)
			}
		}
	}

	for _, w := range file.Warnings {
		fmt.Fprintf(cmd.ErrOrStderr(), "poise: warning: %s\n", w)
	}
	out := cmd.OutOrStdout()
	if f.asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", " ")
		return enc.Encode(file)
	}
	return printModes(out, file, an, sc, f.detail, written, f.from != "" && outDir == "")
}

// levelTag names everything besides the geometry and step that the
// gradients depend on, for the work directory.
func levelTag(s *setup, conv string) string {
	disp := "none"
	if s.dispersion != nil {
		disp = fmt.Sprintf("d3bj(%+v)", *s.dispersion)
	}
	t := fmt.Sprintf("method=%s basis=%s functions=%s charge=%d multiplicity=%d unrestricted=%v grid=%d scf-gradient=%g dispersion=%s",
		s.method, s.set.Name, conv, s.mol.Charge, s.mol.Multiplicity, s.opts.Unrestricted, s.gridLevel, s.opts.GradientTolerance, disp)
	if s.fit != nil {
		// Only with fitting on, so that points saved without it stay valid.
		t += " fit=" + s.fit.Name
	}
	return t
}

// angularFunctions says whether d and higher shells are Cartesian or
// spherical.
func angularFunctions(s *setup) string {
	for _, sh := range s.shells {
		if sh.L >= 2 {
			if sh.Pure {
				return "spherical"
			}
			return "cartesian"
		}
	}
	return "cartesian"
}

// modesCalc is a prepared Hessian calculation: the level of theory, the
// SCF surface and the options of freq.ComputeHessian.
type modesCalc struct {
	s      *setup
	conv   string // "cartesian" or "spherical" d, f, ... functions
	surf   *gradient.SCFSurface
	x0     []float64
	masses []float64
	hopts  freq.HessianOptions
}

// prepareModes reads the structure in path at the level of lf and prepares
// the Hessian calculation whose points are kept in work.
func prepareModes(path string, lf *levelFlags, step float64, fourPoint, noSymmetry, rotations bool, work string) (*modesCalc, error) {
	s, err := lf.prepare(path)
	if err != nil {
		return nil, err
	}
	conv := angularFunctions(s)
	// Displaced gradients converged tighter than single energies: the
	// differences amplify their noise by 1/2h.
	s.opts.GradientTolerance = freq.SCFGradientTolerance
	surf, err := gradient.NewSCFSurface(s.mol, gradient.Config{Basis: s.set, Convention: s.conv, Method: s.fn,
		GridLevel: s.gridLevel, SCF: s.opts, Dispersion: s.dispersion, Fit: s.fit})
	if err != nil {
		return nil, usageErr(fmt.Errorf("%s: %w", path, err))
	}
	masses := make([]float64, len(s.mol.Atoms))
	for i, a := range s.mol.Atoms {
		masses[i] = a.Mass
	}
	hopts := freq.HessianOptions{
		StepBohr: step, FourPoint: fourPoint, Dipole: true, Threads: lf.threads, Extrapolate: true,
		WorkDir: work, Tag: levelTag(s, conv),
		Charge: float64(s.mol.Charge), MassesU: masses,
	}
	if !noSymmetry {
		hopts.SymmetryKinds = make([]int, len(s.mol.Atoms))
		for i, a := range s.mol.Atoms {
			hopts.SymmetryKinds[i] = a.Z
		}
		hopts.AxisOperationsExact = surf.AxisOperationsExact()
		hopts.TranslationalInvariance = true
		hopts.RotationalInvariance = rotations
	}
	return &modesCalc{s: s, conv: conv, surf: surf, x0: gradient.Coordinates(s.mol), masses: masses, hopts: hopts}, nil
}

// computeModes computes the Hessian of the structure in path and returns the
// modes file before the analysis.
func computeModes(cmd *cobra.Command, path string, lf *levelFlags, f *modesFlags, outDir string) (*freq.File, *freq.Hessian, error) {
	work := filepath.Join(outDir, "displacements")
	mc, err := prepareModes(path, lf, f.step, f.fourPoint, f.noSymmetry, true, work)
	if err != nil {
		return nil, nil, err
	}
	stderr := cmd.ErrOrStderr()
	progress := !f.asJSON && isTerminal(os.Stderr)
	hopts := mc.hopts
	hopts.Concurrent = f.concurrent
	hopts.DiscardStale = true
	if progress {
		hopts.Progress = func(p freq.Progress) {
			fmt.Fprintf(os.Stderr, "\r  displaced points %d/%d", p.Done, p.Total)
			if p.Reused > 0 {
				fmt.Fprintf(os.Stderr, " (%d from %s)", p.Reused, work)
			}
			fmt.Fprint(os.Stderr, " ")
		}
	}
	// A work directory of another calculation is emptied; say so.
	if old := countDisplacements(work); old > 0 && !sameWork(work, hopts.Tag) {
		fmt.Fprintf(stderr, "poise: note: %s held %d points of another geometry or level of theory; they are replaced\n", work, old)
	}
	t0 := time.Now()
	h, err := freq.ComputeHessian(cmd.Context(), mc.surf, mc.x0, hopts)
	if progress {
		fmt.Fprint(os.Stderr, "\r\033[K")
	}
	if err != nil {
		switch {
		case errors.Is(err, scf.ErrNotConverged):
			return nil, nil, convergeErr(fmt.Errorf("%s: %w\n  finished points are kept in %s; the same command resumes from them\n  try: --max-iterations %d; check the geometry, charge and multiplicity; for open shells --unrestricted",
				path, err, work, 2*lf.maxIter))
		case errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded):
			return nil, nil, fmt.Errorf("%s: %w\n  finished points are kept in %s; run the same command again to resume", path, err, work)
		}
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	concurrent := f.concurrent
	if concurrent == 0 {
		concurrent = min(lf.threads, h.Displacements)
	}
	file, err := mc.modesFile(path, h, lf.threads, concurrent, time.Since(t0))
	return file, h, err
}

// modesFile is the modes file (before the analysis) of a computed Hessian.
func (mc *modesCalc) modesFile(path string, h *freq.Hessian, threads, concurrent int, wall time.Duration) (*freq.File, error) {
	s := mc.s
	nat := len(s.mol.Atoms)
	n := 3 * nat
	file := &freq.File{
		Format: freq.FileFormat, FormatVersion: freq.FileFormatVersion,
		Formula: s.mol.Formula(), Charge: s.mol.Charge, Multiplicity: s.mol.Multiplicity,
		GeometryAngstrom: geometryAngstrom(h.CoordsBohr), MassesU: mc.masses,
		Level:    &freq.Level{Method: s.method, Basis: s.set.Name, AngularFunctions: mc.conv, Unrestricted: s.opts.Unrestricted || s.mol.Multiplicity > 1},
		StepBohr: h.StepBohr, FourPoint: h.FourPoint, GradientAU: h.GradientAU,
		DipoleAU: &h.DipoleAU, Warnings: []string{},
	}
	if s.fn.NeedsGrid() {
		file.Level.GridLevel = s.gridLevel
	}
	if s.fit != nil {
		file.Level.Fit = s.fit.Name
	}
	if s.dispersion != nil {
		file.Level.Dispersion = "d3bj"
	}
	e := h.EnergyHartree
	file.EnergyHartree = &e
	for _, a := range s.mol.Atoms {
		file.Symbols = append(file.Symbols, a.Symbol)
	}
	file.HessianAU = make([][]float64, n)
	file.DipoleDerivAU = make([][]float64, n)
	for i := 0; i < n; i++ {
		file.HessianAU[i] = h.HessianAU[i*n : (i+1)*n]
		file.DipoleDerivAU[i] = h.DipoleDerivAU[3*i : 3*i+3]
	}
	gnorm, err := freq.InternalGradientNorm(h.CoordsBohr, h.GradientAU)
	if err != nil {
		return nil, err
	}
	file.GradientNormAU = gnorm
	file.Stationary = gnorm <= freq.StationaryGradientAU
	if !file.Stationary {
		file.Warnings = append(file.Warnings, fmt.Sprintf(
			"%s is not at a stationary point: the gradient norm (translations and rotations removed) is %.2e Eh/bohr, above %.0e; "+
				"frequencies of soft modes are unreliable and the zero-point energy belongs to no minimum; relax first (poise relax %s --converge strict)",
			path, gnorm, freq.StationaryGradientAU, path))
	}
	sum := 0
	for _, it := range h.SCFIterations {
		sum += it
	}
	file.Computation = &freq.FileComputation{
		Displacements: h.Displacements, Computed: h.Computed, Reused: h.Reused, Gradients: h.Evaluations,
		ReferenceSCFIterations: h.ReferenceSCFIterations, AsymmetryAU: h.AsymmetryAU,
		Threads: threads, Concurrent: concurrent, WallSeconds: wall.Seconds(),
	}
	if h.SymmetryOperations > 1 {
		file.Computation.SymmetryOperations = h.SymmetryOperations
		file.Computation.SymmetryShiftBohr = h.SymmetryShiftBohr
	}
	if len(h.SCFIterations) > 0 {
		file.Computation.MeanSCFIterations = float64(sum) / float64(len(h.SCFIterations))
	}
	return file, nil
}

// geometryAngstrom converts 3N coordinates in bohr to rows in Å.
func geometryAngstrom(xBohr []float64) [][3]float64 {
	out := make([][3]float64, len(xBohr)/3)
	for i := range out {
		for k := 0; k < 3; k++ {
			out[i][k] = xBohr[3*i+k] / units.AngstromBohr
		}
	}
	return out
}

// countDisplacements counts the saved displaced points in a work directory.
func countDisplacements(dir string) int {
	m, _ := filepath.Glob(filepath.Join(dir, "disp-*.json"))
	return len(m)
}

// sameWork reports whether the work directory's manifest carries tag (a
// quick look for the note only; package freq makes the real check).
func sameWork(dir, tag string) bool {
	data, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	if err != nil {
		return false
	}
	var m struct {
		Tag string `json:"tag"`
	}
	return json.Unmarshal(data, &m) == nil && m.Tag == tag
}

// wavenumberText formats a wavenumber, imaginary ones as "123.4i".
func wavenumberText(w float64) string {
	if math.Round(10*math.Abs(w)) == 0 {
		return "0.0"
	}
	if w < 0 {
		return fmt.Sprintf("%.1fi", -w)
	}
	return fmt.Sprintf("%.1f", w)
}

func printModes(w io.Writer, file *freq.File, an *freq.Analysis, sc freq.Scaling, detail bool, written []string, noFiles bool) error {
	kind := "nonlinear"
	if an.Linear {
		kind = "linear"
	}
	level := ""
	if file.Level != nil {
		level = "  " + levelLabel(file.Level)
	}
	formula := file.Formula
	if formula == "" {
		formula = strings.Join(file.Symbols, "")
	}
	switch nat := len(file.Symbols); {
	case nat == 1:
		fmt.Fprintf(w, "%s%s  a single atom: no vibrations\n", formula, level)
	default:
		fmt.Fprintf(w, "%s%s  %d atoms, %s: %s\n", formula, level, nat, kind, plural(len(an.Modes), "vibration"))
	}
	if file.MassNote != "" {
		fmt.Fprintf(w, "masses: most abundant isotopes except %s\n", file.MassNote)
	}
	if file.StepBohr > 0 {
		formulaName := "central differences"
		if file.FourPoint {
			formulaName = "four-point differences"
		}
		fmt.Fprintf(w, "Hessian: %s of analytic gradients, step %g bohr", formulaName, file.StepBohr)
		if c := file.Computation; c != nil {
			fmt.Fprintf(w, "; %d displaced points (%d computed, %d reused), %.1f s", c.Displacements, c.Computed, c.Reused, c.WallSeconds)
			if c.SymmetryOperations > 1 {
				fmt.Fprintf(w, "; the others are images under the %d operations of the point group", c.SymmetryOperations)
			}
		}
		fmt.Fprintln(w)
	}
	if len(file.GradientAU) > 0 {
		state := "stationary"
		if !file.Stationary {
			state = "NOT stationary"
		}
		fmt.Fprintf(w, "gradient norm %.2e Eh/bohr (translations and rotations removed): %s\n", file.GradientNormAU, state)
	}
	fmt.Fprintln(w)

	if len(an.Modes) == 0 {
		if len(written) > 0 {
			fmt.Fprintf(w, "written: %s\n", written[0])
		}
		return nil
	}
	header := []string{"mode", "cm⁻¹", fmt.Sprintf("scaled ×%.4g", sc.Frequency), "IR km/mol", "motion"}
	if detail {
		header = []string{"mode", "cm⁻¹", fmt.Sprintf("scaled ×%.4g", sc.Frequency), "IR km/mol", "μ (u)", "k (mdyn/Å)", "motion", "coordinates (share)"}
	}
	var rows [][]string
	for p, m := range an.Modes {
		ir := "—"
		if an.HasIntensities {
			ir = fmt.Sprintf("%.2f", m.IRIntensityKmMol)
		}
		row := []string{fmt.Sprint(p + 1), wavenumberText(m.WavenumberCm1), wavenumberText(sc.Frequency * m.WavenumberCm1), ir}
		if detail {
			var parts []string
			for i, mo := range m.Motions {
				if i == 4 {
					break
				}
				at := make([]string, len(mo.Atoms))
				for k, a := range mo.Atoms {
					at[k] = fmt.Sprint(a + 1)
				}
				parts = append(parts, fmt.Sprintf("%s %s %.0f%%", strings.TrimSuffix(strings.TrimSuffix(strings.TrimSuffix(mo.Label, " stretch"), " bend"), " torsion")+" "+shortKind(mo.Kind), strings.Join(at, "-"), 100*mo.Share))
			}
			row = append(row, fmt.Sprintf("%.4f", m.ReducedMassU), fmt.Sprintf("%.4f", m.ForceConstantMdynA), m.Description, strings.Join(parts, ", "))
		} else {
			row = append(row, m.Description)
		}
		rows = append(rows, row)
	}
	if err := writeModesTable(w, header, rows); err != nil {
		return err
	}
	kj := units.HartreeKJPerMol
	fmt.Fprintf(w, "zero-point energy  %.6f Eh = %.3f kJ/mol (harmonic)\n", file.ZPEHartree, file.ZPEHartree*kj)
	fmt.Fprintf(w, "                   %.6f Eh = %.3f kJ/mol (scaled ×%.4g)\n", file.ScaledZPEHartree, file.ScaledZPEHartree*kj, sc.ZPE)
	fmt.Fprintf(w, "scaled wavenumbers: ×%.4g, %s\n", sc.Frequency, sc.FrequencySource)
	fmt.Fprintf(w, "scaled zero-point energy: ×%.4g, %s\n", sc.ZPE, sc.ZPESource)
	if sc.Enthalpy != 0 || sc.Entropy != 0 {
		fmt.Fprintf(w, "published for this level too (not applied here): thermal enthalpy ×%.4g, entropy ×%.4g\n", sc.Enthalpy, sc.Entropy)
	}
	if n := file.ImaginaryCount; n > 0 {
		fmt.Fprintf(w, "%d imaginary mode(s): not a minimum\n", n)
	}
	var rb []string
	for _, r := range an.RigidBodyCm1 {
		rb = append(rb, wavenumberText(r))
	}
	fmt.Fprintf(w, "translations and rotations before projection: %s cm⁻¹\n", strings.Join(rb, " "))
	if len(written) > 0 {
		fmt.Fprintf(w, "\nwritten: %s", written[0])
		if len(written) > 1 {
			fmt.Fprintf(w, " and %d more files in %s", len(written)-1, filepath.Dir(written[0]))
		}
		fmt.Fprintln(w)
	} else if noFiles {
		fmt.Fprintln(w, "\n(no files written: add --out DIR for the modes file, animations and IR spectrum)")
	}
	return nil
}

func shortKind(k string) string {
	switch k {
	case "stretch":
		return "str"
	case "bend":
		return "bend"
	case "linear bend":
		return "lin. bend"
	case "torsion":
		return "tors"
	}
	return k
}

// writeModesTable renders the modes table: numbers right-aligned, the
// descriptions left-aligned.
func writeModesTable(w io.Writer, header []string, rows [][]string) error {
	align := tw.CellAlignment{Global: tw.AlignRight, PerColumn: make([]tw.Align, len(header))}
	for i := range align.PerColumn {
		align.PerColumn[i] = tw.AlignRight
		if strings.HasPrefix(header[i], "motion") || strings.HasPrefix(header[i], "coordinates") {
			align.PerColumn[i] = tw.AlignLeft
		}
	}
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
		tablewriter.WithRowAlignmentConfig(align),
	)
	t.Header(header)
	if err := t.Bulk(rows); err != nil {
		return err
	}
	return t.Render()
}

// writeAnimations writes one multi-frame XYZ file per mode.
func writeAnimations(dir, stem string, file *freq.File, an *freq.Analysis) ([]string, error) {
	z := file.AtomicNumbers()
	x0 := file.System(file.MassesU).CoordsBohr
	var paths []string
	width := len(fmt.Sprint(len(an.Modes)))
	width = max(width, 2)
	for p, m := range an.Modes {
		frames := freq.AnimationFrames(x0, m.Displacement, animationShiftAng*units.AngstromBohr, animationFrames)
		var buf bytes.Buffer
		mol := &molecule.Molecule{Atoms: make([]molecule.Atom, len(z))}
		for k, fr := range frames {
			for a := range mol.Atoms {
				mol.Atoms[a] = molecule.Atom{Z: z[a], Symbol: molecule.Symbol(z[a]), Position: [3]float64{fr[3*a], fr[3*a+1], fr[3*a+2]}}
			}
			comment := fmt.Sprintf("mode %d of %d, %s cm-1, %s; frame %d/%d", p+1, len(an.Modes), wavenumberText(m.WavenumberCm1), m.Description, k+1, len(frames))
			if err := molecule.WriteXYZ(&buf, mol, comment); err != nil {
				return nil, err
			}
		}
		path := filepath.Join(dir, fmt.Sprintf("%s-mode-%0*d.xyz", stem, width, p+1))
		if err := freq.WriteFileAtomic(path, buf.Bytes()); err != nil {
			return nil, fmt.Errorf("writing %s: %w", path, err)
		}
		paths = append(paths, path)
	}
	return paths, nil
}

// plotIRSpectrum draws the IR spectrum: band intensities as sticks (km/mol)
// above, their sum broadened by Lorentzians below; the format follows the
// extension (.svg or .png). The picture is written atomically.
func plotIRSpectrum(path string, file *freq.File, fwhm float64) error {
	top := 0.0
	for _, v := range file.FrequenciesCm1 {
		top = math.Max(top, v)
	}
	xmax := math.Max(500, math.Ceil((top*1.08+100)/500)*500)
	blue := color.RGBA{R: 31, G: 88, B: 160, A: 255}
	red := color.RGBA{R: 190, G: 50, B: 40, A: 255}

	sticks := plot.New()
	title := file.Formula
	if file.Level != nil {
		title += ", " + levelLabel(file.Level)
	}
	if file.MassNote != "" {
		title += " (" + file.MassNote + ")"
	}
	sticks.Title.Text = title + ": harmonic IR bands"
	sticks.X.Label.Text = "wavenumber (1/cm)"
	sticks.Y.Label.Text = "intensity (km/mol)"
	sticks.X.Min, sticks.X.Max = 0, xmax
	sticks.Y.Min = 0
	sticks.X.Tick.Marker = plainTicks{}
	sticks.Y.Tick.Marker = plainTicks{}
	sticks.Add(plotter.NewGrid())
	for p, nu := range file.FrequenciesCm1 {
		if nu <= 0 || p >= len(file.IRIntensities) {
			continue
		}
		l, err := plotter.NewLine(plotter.XYs{{X: nu, Y: 0}, {X: nu, Y: file.IRIntensities[p]}})
		if err != nil {
			return err
		}
		l.Color = red
		l.Width = vg.Points(1.5)
		sticks.Add(l)
	}

	const npts = 2000
	grid := make([]float64, npts)
	for i := range grid {
		grid[i] = xmax * float64(i) / float64(npts-1)
	}
	spec := freq.Spectrum(file.FrequenciesCm1, file.IRIntensities, fwhm, grid)
	xy := make(plotter.XYs, npts)
	for i := range xy {
		xy[i].X, xy[i].Y = grid[i], spec[i]
	}
	broad := plot.New()
	broad.Title.Text = fmt.Sprintf("sum of Lorentzian bands, full width at half maximum %g 1/cm", fwhm)
	broad.X.Label.Text = "wavenumber (1/cm)"
	broad.Y.Label.Text = "absorption (km/mol per 1/cm)"
	broad.X.Min, broad.X.Max = 0, xmax
	broad.Y.Min = 0
	broad.X.Tick.Marker = plainTicks{}
	broad.Y.Tick.Marker = plainTicks{}
	broad.Add(plotter.NewGrid())
	line, err := plotter.NewLine(xy)
	if err != nil {
		return err
	}
	line.Color = blue
	line.Width = vg.Points(1.2)
	broad.Add(line)

	// Head room above the tallest stick and peak.
	sticks.Y.Max = 1.1 * math.Max(maxOf(file.IRIntensities), 1e-3)
	broad.Y.Max = 1.1 * math.Max(maxOf(spec), 1e-6)

	return writeStackedPlots(path, []*plot.Plot{sticks, broad}, 16*vg.Centimeter, 16*vg.Centimeter)
}

func maxOf(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, x)
	}
	return m
}

// plainTicks are gonum's default tick positions labelled without
// trailing zeros.
type plainTicks struct{}

func (plainTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'g', 6, 64)
		}
	}
	return ts
}

// levelLabel is the level of theory as printed, e.g. "B3LYP-D3(BJ)/6-31G*".
func levelLabel(l *freq.Level) string {
	label := settle.LevelLabel(l.Method, l.Basis, l.Dispersion != "")
	if l.Fit != "" {
		if set, err := basis.Load(l.Fit); err == nil {
			label += settle.FitLabel(set)
		} else {
			label += " (fit: " + l.Fit + ")"
		}
	}
	return label
}
