package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"poise/energy/basis"
	"poise/energy/dispersion"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
	"poise/freq"
	"poise/gradient"
	"poise/internal/atomicfile"
	"poise/optimize"
	"poise/settle"
	"poise/thermo"
)

// exitNotMinimum is the exit status of poise settle when the structure is
// not a confirmed minimum.
const exitNotMinimum = 4

// settleFlags are the options of poise settle besides the level of theory.
type settleFlags struct {
	out          string
	asJSON       bool
	temperature  float64
	pressureBar  float64
	maxCycles    int
	thresholdCm1 float64
	step         float64
	maxSteps     int
	prerelax     string
	energyAt     string
	storeDir     string
	noStore      bool
	noSymmetry   bool
}

func newSettleCmd() *cobra.Command {
	var lf levelFlags
	var f settleFlags
	cmd := &cobra.Command{
		Use:   "settle FILE.xyz",
		Short: "relax to a confirmed minimum and compute its thermochemistry",
		Long: `Takes the structure in FILE.xyz to a confirmed energy minimum and its ideal-gas
thermochemistry: a strict relaxation, the normal modes (central-difference Hessian), and
while imaginary modes larger than the noise threshold remain (default 50i cm⁻¹ for DFT,
whose integration grid adds noise, 20i cm⁻¹ for HF), a displacement along each of them
(both ways, the lower energy kept) and a new relaxation, --max-cycles times at most
(default 3). Then the rigid-rotor/harmonic-oscillator thermochemistry at --temperature
and --pressure, and the verdict: "minimum confirmed: 0 imaginary modes" (exit status 0)
or "not a minimum: n imaginary modes (...)" (exit status 4).

--prerelax METHOD/BASIS relaxes at a cheap level first (draft criteria) and carries the
geometry and the relaxation's updated Hessian over to the requested level. --energy-at
METHOD/BASIS computes the final electronic energy at that level on the settled geometry;
enthalpy and Gibbs energy combine it with the thermal corrections of the settle level.

Output goes to --out DIR (default FILE-settle beside the input): the final geometry
(NAME.xyz), every relaxation step (NAME.trajectory.xyz), the modes file (NAME.modes.json,
as written by 'poise modes' and read by 'poise thermo'), the IR spectrum (NAME-ir.svg,
NAME-ir.png), the thermochemistry table (NAME.thermo.txt), summary.json and summary.txt.

Finished results are kept in a results store (--store, default $XDG_CACHE_HOME/poise or
~/.cache/poise) under a hash of everything that changes the numbers: the same run again
reuses them without any SCF.`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runSettle(cmd, args[0], &lf, &f)
		},
	}
	lf.register(cmd)
	fl := cmd.Flags()
	fl.StringVar(&f.out, "out", "", "output directory (default: FILE-settle beside the input)")
	fl.BoolVar(&f.asJSON, "json", false, "print the summary JSON instead of text")
	fl.Float64Var(&f.temperature, "temperature", thermo.DefaultTemperatureK, "temperature in K")
	fl.Float64Var(&f.pressureBar, "pressure", units.StandardPressurePa/1e5, "pressure in bar")
	fl.IntVar(&f.maxCycles, "max-cycles", settle.DefaultMaxCycles, "largest number of displace-and-relax cycles (0: only check)")
	fl.Float64Var(&f.thresholdCm1, "imaginary-threshold", 0, "imaginary wavenumbers below this (cm⁻¹) count as noise (default 50 for DFT, 20 for HF)")
	fl.Float64Var(&f.step, "step", freq.DefaultStepBohr, "finite-difference displacement of the Hessian in bohr")
	fl.IntVar(&f.maxSteps, "max-steps", optimize.DefaultMaxSteps, "largest number of steps of each relaxation")
	fl.StringVar(&f.prerelax, "prerelax", "", "relax at this cheaper level first, METHOD/BASIS (e.g. hf/sto-3g)")
	fl.StringVar(&f.energyAt, "energy-at", "", "final electronic energy at METHOD/BASIS on the settled geometry")
	fl.StringVar(&f.storeDir, "store", "", "results store directory (default: $XDG_CACHE_HOME/poise or ~/.cache/poise)")
	fl.BoolVar(&f.noStore, "no-store", false, "neither read nor write the results store")
	fl.BoolVar(&f.noSymmetry, "no-symmetry", false, "evaluate every displaced point of the Hessians (by default images under the point group, one atom by translational invariance and, without symmetry, three coordinates by rotational invariance, are skipped)")
	return cmd
}

// settleLevel is the settle.Level of a prepared setup.
func settleLevel(s *setup) settle.Level {
	o := s.opts
	o.XC, o.XCStart, o.Progress, o.AuxShells = nil, nil, nil, nil
	return settle.Level{Basis: s.set, Convention: s.conv, Method: s.fn, GridLevel: s.gridLevel, Dispersion: s.dispersion, Fit: s.fit, SCF: o}
}

// otherLevel reads METHOD/BASIS for --prerelax or --energy-at: the rest of
// the level (functions, SCF settings, grid, density fitting) as for the
// main level; the dispersion correction too when withDispersion.
func otherLevel(flag, spec string, s *setup, withDispersion bool) (*settle.Level, error) {
	m, b, ok := strings.Cut(strings.TrimSpace(spec), "/")
	if !ok || m == "" || b == "" {
		return nil, usageErr(fmt.Errorf("--%s %q: give METHOD/BASIS, e.g. hf/sto-3g", flag, spec))
	}
	fn, err := xc.Lookup(m)
	if err != nil {
		return nil, usageErr(fmt.Errorf("--%s %q: available methods are %s", flag, spec, strings.Join(xc.Names(), ", ")))
	}
	set, err := basis.Load(b)
	if err != nil {
		return nil, usageErr(fmt.Errorf("--%s: %w", flag, err))
	}
	if _, err := set.Shells(s.mol, s.conv); err != nil {
		return nil, usageErr(fmt.Errorf("--%s: %w", flag, err))
	}
	if err := gradient.CheckFit(s.fit, fn, nil); err != nil {
		return nil, usageErr(fmt.Errorf("--%s %q with --fit %s: %w", flag, spec, s.fit.Name, err))
	}
	l := settleLevel(s)
	l.Basis, l.Method, l.Dispersion = set, fn, nil
	if withDispersion && s.dispersion != nil {
		p, err := dispersion.ParamsFor(fn.Name())
		if err != nil {
			return nil, usageErr(fmt.Errorf("--%s with --dispersion d3bj: %w", flag, err))
		}
		l.Dispersion = &p
	}
	return &l, nil
}

func runSettle(cmd *cobra.Command, path string, lf *levelFlags, f *settleFlags) error {
	switch {
	case !(f.temperature > 0) || math.IsInf(f.temperature, 0):
		return usageErr(fmt.Errorf("--temperature %g: give a positive temperature in K", f.temperature))
	case !(f.pressureBar > 0) || math.IsInf(f.pressureBar, 0):
		return usageErr(fmt.Errorf("--pressure %g: give a positive pressure in bar", f.pressureBar))
	case f.maxCycles < 0:
		return usageErr(fmt.Errorf("--max-cycles %d: give 0 or more", f.maxCycles))
	case f.thresholdCm1 < 0 || math.IsNaN(f.thresholdCm1) || math.IsInf(f.thresholdCm1, 0):
		return usageErr(fmt.Errorf("--imaginary-threshold %g: give a positive wavenumber in cm⁻¹", f.thresholdCm1))
	case !(f.step > 0) || f.step > 0.05:
		return usageErr(fmt.Errorf("--step %g: give a displacement in bohr between 0 and 0.05 (default %g)", f.step, freq.DefaultStepBohr))
	case f.maxSteps < 1:
		return usageErr(fmt.Errorf("--max-steps %d: give at least 1", f.maxSteps))
	case f.noStore && f.storeDir != "":
		return usageErr(errors.New("--store and --no-store exclude each other: give one"))
	}
	s, err := lf.prepare(path)
	if err != nil {
		return err
	}
	opts := settle.DefaultOptions()
	opts.TemperatureK = f.temperature
	opts.PressurePa = f.pressureBar * 1e5
	opts.MaxCycles = f.maxCycles
	opts.ThresholdCm1 = f.thresholdCm1
	opts.StepBohr = f.step
	opts.MaxSteps = f.maxSteps
	opts.NoSymmetry = f.noSymmetry
	opts.ProgramVersion = version
	if f.prerelax != "" {
		if opts.Prerelax, err = otherLevel("prerelax", f.prerelax, s, false); err != nil {
			return err
		}
	}
	if f.energyAt != "" {
		if opts.EnergyAt, err = otherLevel("energy-at", f.energyAt, s, true); err != nil {
			return err
		}
	}

	stem := filepath.Base(path)
	stem = strings.TrimSuffix(stem, filepath.Ext(stem))
	outDir := f.out
	if outDir == "" {
		outDir = filepath.Join(filepath.Dir(path), stem+"-settle")
	}
	files := settleFiles(outDir, stem)
	for _, p := range files.all() {
		if sameFile(p, path) {
			return usageErr(fmt.Errorf("--out %s would overwrite the input %s: choose another directory", outDir, path))
		}
	}
	if err := os.MkdirAll(outDir, 0o755); err != nil {
		return usageErr(fmt.Errorf("--out: %w", err))
	}
	if !f.noStore {
		dir := f.storeDir
		if dir == "" {
			if dir, err = settle.DefaultStoreDir(); err != nil {
				return usageErr(fmt.Errorf("%w; give --store DIR or --no-store", err))
			}
		}
		if opts.Store, err = settle.OpenStore(dir); err != nil {
			return usageErr(fmt.Errorf("--store: %w", err))
		}
	}
	stderr := cmd.ErrOrStderr()
	if !f.asJSON && isTerminal(os.Stderr) {
		opts.Log = func(line string) { fmt.Fprintf(os.Stderr, "  %s\n", line) }
	}

	// Finished relaxation steps and displaced points are kept here until
	// the output is written, so that an interrupted run continues.
	opts.WorkDir = filepath.Join(outDir, "work")
	res, err := settle.Run(cmd.Context(), s.mol, settleLevel(s), opts)
	if err != nil {
		var optErr *optimize.OptionsError
		switch {
		case errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded):
			return fmt.Errorf("interrupted (%w); finished work is kept in %s: run the same command again to continue", err, opts.WorkDir)
		case errors.As(err, &optErr):
			return usageErr(err)
		case errors.Is(err, scf.ErrNotConverged):
			return convergeErr(fmt.Errorf("%w\n  try: --max-iterations %d; check the geometry, charge and multiplicity; for open shells --unrestricted", err, 2*lf.maxIter))
		case errors.Is(err, optimize.ErrNotConverged):
			return convergeErr(fmt.Errorf("%w\n  try: --max-steps %d", err, 2*f.maxSteps))
		}
		if res == nil {
			return err
		}
		// Computed but not stored: report and carry on.
		fmt.Fprintf(stderr, "poise: warning: %v\n", err)
	}
	sum := res.Summary
	// Temporary files of an earlier run killed while writing its output.
	atomicfile.RemoveLeftovers(outDir, stem)
	atomicfile.RemoveLeftovers(outDir, "summary.")
	if err := writeSettleFiles(files, s.mol, res); err != nil {
		return err
	}
	if err := settle.RemoveWork(opts.WorkDir); err != nil {
		fmt.Fprintf(stderr, "poise: warning: %v\n", err)
	}
	for _, w := range sum.Warnings {
		fmt.Fprintf(stderr, "poise: warning: %s\n", w)
	}
	if note := atomNote(s.mol); note != "" {
		fmt.Fprintf(stderr, "poise: note: %s\n", note)
	}
	out := cmd.OutOrStdout()
	if f.asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		if err := enc.Encode(sum); err != nil {
			return err
		}
	} else {
		text, err := os.ReadFile(files.summaryText)
		if err != nil {
			return err
		}
		if _, err := out.Write(text); err != nil {
			return err
		}
	}
	if !sum.Minimum() {
		return &exitError{code: exitNotMinimum, err: errors.New(verdictLine(sum))}
	}
	return nil
}

// settleOutput names the files of poise settle.
type settleOutput struct {
	dir, geometry, trajectory, modes, irSVG, irPNG, thermo, summaryJSON, summaryText string
}

func settleFiles(dir, stem string) settleOutput {
	j := func(name string) string { return filepath.Join(dir, name) }
	return settleOutput{dir: dir, geometry: j(stem + ".xyz"), trajectory: j(stem + ".trajectory.xyz"), modes: j(stem + ".modes.json"),
		irSVG: j(stem + "-ir.svg"), irPNG: j(stem + "-ir.png"), thermo: j(stem + ".thermo.txt"),
		summaryJSON: j("summary.json"), summaryText: j("summary.txt")}
}

func (o settleOutput) all() []string {
	return []string{o.geometry, o.trajectory, o.modes, o.irSVG, o.irPNG, o.thermo, o.summaryJSON, o.summaryText}
}

// verdictLine is the one-line verdict.
func verdictLine(s *settle.Summary) string {
	if s.Minimum() {
		return "minimum confirmed: 0 imaginary modes"
	}
	list := make([]string, len(s.ImaginaryCm1))
	for i, w := range s.ImaginaryCm1 {
		list[i] = wavenumberText(w) + " cm⁻¹"
	}
	return fmt.Sprintf("not a minimum: %d imaginary modes (%s)", s.ImaginaryCount, strings.Join(list, ", "))
}

// writeSettleFiles writes every output file, atomically.
func writeSettleFiles(o settleOutput, mol *molecule.Molecule, res *settle.Result) error {
	sum := res.Summary
	final := mol.Clone()
	for i := range final.Atoms {
		g := sum.GeometryAngstrom[i]
		final.Atoms[i].Position = [3]float64{g[0] * units.AngstromBohr, g[1] * units.AngstromBohr, g[2] * units.AngstromBohr}
	}
	if err := writeGeometry(o.geometry, final, fmt.Sprintf("%s  %s  energy %.10f Eh  %s",
		sum.Formula, sum.LevelOfTheory, sum.SettleEnergyHartree, verdictLine(sum))); err != nil {
		return err
	}
	if err := atomicfile.Write(o.trajectory, []byte(res.TrajectoryXYZ)); err != nil {
		return err
	}
	if err := res.Modes.Write(o.modes); err != nil {
		return fmt.Errorf("writing %s: %w", o.modes, err)
	}
	if len(res.Modes.IRIntensities) > 0 {
		for _, p := range []string{o.irSVG, o.irPNG} {
			if err := plotIRSpectrum(p, res.Modes, defaultFWHMCm1); err != nil {
				return fmt.Errorf("IR spectrum %s: %w", p, err)
			}
		}
	}
	var tb bytes.Buffer
	model, err := thermo.NewModel(sum.ThermoInput(), thermo.Options{})
	if err != nil {
		return err
	}
	props, err := model.Properties(thermo.Conditions{TemperatureK: sum.TemperatureK, PressurePa: sum.PressurePa})
	if err != nil {
		return err
	}
	rep := makeThermoReport(o.modes, sum.Formula, "", model, props)
	rep.StandardStateText = stateText("", sum.PressurePa)
	if err := printThermoReport(&tb, rep, model); err != nil {
		return err
	}
	if err := atomicfile.Write(o.thermo, tb.Bytes()); err != nil {
		return err
	}
	js, err := json.MarshalIndent(sum, "", "  ")
	if err != nil {
		return err
	}
	if err := atomicfile.Write(o.summaryJSON, append(js, '\n')); err != nil {
		return err
	}
	var hb bytes.Buffer
	printSettleSummary(&hb, res, o)
	return atomicfile.Write(o.summaryText, hb.Bytes())
}

// printSettleSummary writes the short human summary.
func printSettleSummary(w io.Writer, res *settle.Result, o settleOutput) {
	s := res.Summary
	kj := units.HartreeKJPerMol
	fmt.Fprintf(w, "%s  %s  charge %d  multiplicity %d\n", s.Formula, s.LevelOfTheory, s.Charge, s.Multiplicity)
	fmt.Fprintln(w, verdictLine(s))
	if res.Reused {
		fmt.Fprintln(w, "taken from the results store: no new calculation")
	} else {
		pre := ""
		if s.PrerelaxLevel != "" {
			pre = fmt.Sprintf(" after a first relaxation at %s", s.PrerelaxLevel)
		}
		fmt.Fprintf(w, "%d relaxation steps, %d displacement cycle(s), %d energy evaluations%s\n", s.RelaxSteps, s.Cycles, s.Evaluations, pre)
	}
	if len(s.GeometryAngstrom) == 1 {
		fmt.Fprintf(w, "point group %s (σ = %d); a single atom: no vibrations, translational and electronic terms only\n",
			s.PointGroup, s.SymmetryNumber)
	} else {
		fmt.Fprintf(w, "point group %s (σ = %d); lowest wavenumber %s cm⁻¹; imaginary threshold %gi cm⁻¹\n",
			s.PointGroup, s.SymmetryNumber, lowest(s.FrequenciesCm1), s.ThresholdCm1)
	}
	if s.EnergyLevel != "" {
		fmt.Fprintf(w, "electronic energy   %16.8f Eh at %s on the %s geometry\n", s.EnergyHartree, s.EnergyLevel, s.LevelOfTheory)
		fmt.Fprintf(w, "                    %16.8f Eh at %s\n", s.SettleEnergyHartree, s.LevelOfTheory)
		fmt.Fprintf(w, "thermal corrections at %s\n", s.LevelOfTheory)
	} else {
		fmt.Fprintf(w, "electronic energy   %16.8f Eh\n", s.EnergyHartree)
	}
	fmt.Fprintf(w, "zero-point energy   %16.8f Eh = %.3f kJ/mol (harmonic, unscaled)\n", s.ZPEHartree, s.ZPEHartree*kj)
	fmt.Fprintf(w, "enthalpy H          %16.8f Eh at %g K\n", s.EnthalpyHartree, s.TemperatureK)
	fmt.Fprintf(w, "Gibbs energy G      %16.8f Eh at %g K and %g bar\n", s.GibbsHartree, s.TemperatureK, s.PressurePa/1e5)
	fmt.Fprintf(w, "entropy S           %16.3f J/(mol K);  Cp %.3f J/(mol K)\n", s.EntropyJPerMolK, s.CpJPerMolK)
	fmt.Fprintf(w, "files in %s\n", o.dir)
}

func lowest(v []float64) string {
	if len(v) == 0 {
		return "—"
	}
	return wavenumberText(v[0])
}

// atomGroundTerms are the ground terms ^(2S+1)L of the neutral atoms H–Kr
// (NIST Atomic Spectra Database, ground levels; from memory), indexed by Z.
var atomGroundTerms = [...]string{"",
	"²S", "¹S",
	"²S", "¹S", "²P", "³P", "⁴S", "³P", "²P", "¹S",
	"²S", "¹S", "²P", "³P", "⁴S", "³P", "²P", "¹S",
	"²S", "¹S", "²D", "³F", "⁴F", "⁷S", "⁶S", "⁵D", "⁴F", "³F", "²S", "¹S",
	"²P", "³P", "⁴S", "³P", "²P", "¹S",
}

// atomNote says what settle leaves out for a free neutral atom: a spin
// multiplicity other than that of the ground term (the default is the
// lowest one for the electron count, 1 or 2, which Hund's rule often
// contradicts), and the spin–orbit levels of a ground term with L > 0,
// whose degeneracy the electronic entropy needs beyond 2S+1. "" for
// molecules, ions and ground terms that settle describes fully.
func atomNote(mol *molecule.Molecule) string {
	if len(mol.Atoms) != 1 || mol.Charge != 0 {
		return ""
	}
	z := mol.Atoms[0].Z
	if z <= 0 || z >= len(atomGroundTerms) {
		return ""
	}
	term := atomGroundTerms[z]
	r := []rune(term)
	mult := 0
	for d, sup := range []rune("⁰¹²³⁴⁵⁶⁷⁸⁹") {
		if sup == r[0] {
			mult = d
		}
	}
	el := mol.Atoms[0].Symbol
	if mult != mol.Multiplicity {
		return fmt.Sprintf("the ground state of a free %s atom is %s (multiplicity %d), not multiplicity %d: give --multiplicity %d for it",
			el, term, mult, mol.Multiplicity, mult)
	}
	if r[1] != 'S' {
		return fmt.Sprintf("the %s ground term of %s is split by spin–orbit coupling, which the electronic entropy here (R ln %d) leaves out; "+
			"'poise thermo --electronic-levels' takes the levels (wavenumber:degeneracy) for the standard entropy", term, el, mult)
	}
	return ""
}
