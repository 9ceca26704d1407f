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
	"time"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/gradient"
	"poise/internal/atomicfile"
	"poise/optimize"
)

// relaxReport is the JSON form of a relaxation.
type relaxReport struct {
	File             string       `json:"file"`
	Formula          string       `json:"formula"`
	Method           string       `json:"method"`
	LevelOfTheory    string       `json:"level_of_theory"`
	Basis            string       `json:"basis"`
	Fit              string       `json:"fit"`
	Charge           int          `json:"charge"`
	Multiplicity     int          `json:"multiplicity"`
	Convergence      string       `json:"convergence"`
	EnergyHartree    float64      `json:"energy_hartree"`
	Converged        bool         `json:"converged"`
	Steps            int          `json:"steps"`
	Evaluations      int          `json:"gradient_evaluations"`
	MaxGradient      float64      `json:"max_gradient_hartree_per_bohr"`
	RMSGradient      float64      `json:"rms_gradient_hartree_per_bohr"`
	Coordinates      string       `json:"coordinates"`
	Frozen           []int        `json:"frozen_atoms,omitempty"`
	Held             []string     `json:"held,omitempty"`
	GeometryFile     string       `json:"geometry_file"`
	TrajectoryFile   string       `json:"trajectory_file"`
	History          []relaxStep  `json:"history"`
	Threads          int          `json:"threads"`
	WallSeconds      float64      `json:"wall_seconds"`
	Version          string       `json:"program_version"`
	Symbols          []string     `json:"symbols"`
	GeometryAngstrom [][3]float64 `json:"geometry_angstrom"`
}

// relaxStep is one evaluated geometry in the JSON history.
type relaxStep struct {
	Step          int     `json:"step"`
	EnergyHartree float64 `json:"energy_hartree"`
	ChangeHartree float64 `json:"change_hartree"`
	MaxGradient   float64 `json:"max_gradient_hartree_per_bohr"`
	StepAngstrom  float64 `json:"step_angstrom"`
	Rejected      bool    `json:"rejected,omitempty"`
}

// relaxFlags are the options of poise relax besides the level of theory.
type relaxFlags struct {
	out      string
	maxSteps int
	converge string
	freeze   []string
	hold     []string
	asJSON   bool
}

func newRelaxCmd() *cobra.Command {
	var lf levelFlags
	var f relaxFlags
	cmd := &cobra.Command{
		Use:   "relax FILE.xyz",
		Short: "relax a structure to the nearest energy minimum",
		Long: "Relaxes the molecule in FILE.xyz to the nearest minimum of the SCF energy (quasi-Newton\n" +
			"steps in redundant internal coordinates, one energy and gradient per step). Level-of-theory\n" +
			"flags as for 'poise energy'.\n\n" +
			"Convergence (--converge): draft for a quick pre-relaxation, report (default) for a structure\n" +
			"to publish, strict before a frequency calculation.\n\n" +
			"Constraints count atoms from 1: --freeze 1,2 keeps atoms in place; --hold 1-2 keeps a\n" +
			"distance, --hold 1-2-3 an angle, --hold 1-2-3-4 a dihedral at its starting value.\n\n" +
			"Writes the final geometry (FILE.xyz) and every evaluated geometry (FILE.trajectory.xyz) into\n" +
			"--out, by default the directory FILE-relax beside the input; both files are rewritten after\n" +
			"every step, so an interrupted relaxation leaves its last geometry.",
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runRelax(cmd, args[0], &lf, &f)
		},
	}
	lf.register(cmd)
	fl := cmd.Flags()
	fl.StringVar(&f.out, "out", "", "output directory (default: FILE-relax beside the input)")
	fl.IntVar(&f.maxSteps, "max-steps", optimize.DefaultMaxSteps, "largest number of steps (one gradient each)")
	fl.StringVar(&f.converge, "converge", optimize.DefaultConvergence, "convergence level: "+strings.Join(optimize.ConvergenceNames(), ", "))
	fl.StringArrayVar(&f.freeze, "freeze", nil, "atoms that stay in place, numbered from 1 (1,2); repeatable")
	fl.StringArrayVar(&f.hold, "hold", nil, "hold a distance (1-2), angle (1-2-3) or dihedral (1-2-3-4) at its starting value; repeatable")
	fl.BoolVar(&f.asJSON, "json", false, "print one JSON object instead of tables")
	return cmd
}

func runRelax(cmd *cobra.Command, path string, lf *levelFlags, f *relaxFlags) error {
	crit, err := optimize.Convergence(f.converge)
	if err != nil {
		return usageErr(fmt.Errorf("--converge: %w", err))
	}
	if f.maxSteps < 1 {
		return usageErr(fmt.Errorf("--max-steps %d: give at least 1", f.maxSteps))
	}
	s, err := lf.prepare(path)
	if err != nil {
		return err
	}
	nat := len(s.mol.Atoms)
	var freeze []int
	frozen := map[int]bool{}
	for _, v := range f.freeze {
		atoms, err := optimize.ParseAtoms(v, nat)
		if err != nil {
			return usageErr(fmt.Errorf("--freeze %w", err))
		}
		for _, a := range atoms {
			if !frozen[a] {
				frozen[a] = true
				freeze = append(freeze, a)
			}
		}
	}
	var hold []optimize.Coordinate
	for _, v := range f.hold {
		c, err := optimize.ParseHold(v, nat)
		if err != nil {
			return usageErr(fmt.Errorf("--hold %w", err))
		}
		hold = append(hold, c)
	}

	stem := filepath.Base(path)
	stem = strings.TrimSuffix(stem, filepath.Ext(stem))
	outDir := f.out
	if outDir == "" {
		outDir = filepath.Join(filepath.Dir(path), stem+"-relax")
	}
	geomPath := filepath.Join(outDir, stem+".xyz")
	trajPath := filepath.Join(outDir, stem+".trajectory.xyz")
	if sameFile(geomPath, path) || sameFile(trajPath, path) {
		return usageErr(fmt.Errorf("--out %s would overwrite the input %s: choose another directory", outDir, path))
	}
	if err := os.MkdirAll(outDir, 0o755); err != nil {
		return usageErr(fmt.Errorf("--out: %w", err))
	}

	opts := s.opts
	opts.XC, opts.XCStart = nil, nil
	progress := !f.asJSON && isTerminal(os.Stderr)
	if progress {
		opts.Progress = func(it scf.Iteration) {
			fmt.Fprintf(os.Stderr, "\r  SCF iteration %3d  energy %.10f  change %9.2e ", it.Number, it.EnergyHartree, it.Change)
		}
	}
	surf, err := gradient.NewSCFSurface(s.mol, gradient.Config{
		Basis:      s.set,
		Convention: s.conv,
		Method:     s.fn,
		GridLevel:  s.gridLevel,
		SCF:        opts,
		Dispersion: s.dispersion,
		Fit:        s.fit,
	})
	if err != nil {
		return err
	}
	z := make([]int, nat)
	symbols := make([]string, nat)
	for i, a := range s.mol.Atoms {
		z[i], symbols[i] = a.Z, a.Symbol
	}
	x0 := gradient.Coordinates(s.mol)

	var history []relaxStep
	var traj bytes.Buffer
	var writeErr error
	frame := s.mol.Clone()
	if progress {
		fmt.Fprintf(os.Stderr, "%s  %s  relaxing to the %s level\n", s.mol.Formula(), s.label(), strings.ToLower(f.converge))
		fmt.Fprintf(os.Stderr, "%5s  %18s  %10s  %12s  %10s\n", "step", "energy (Eh)", "change", "gradient", "step (Å)")
	}
	t0 := time.Now()
	res, relaxErr := optimize.Relax(cmd.Context(), surf, z, x0, optimize.Options{
		Criteria: crit,
		MaxSteps: f.maxSteps,
		Freeze:   freeze,
		Hold:     hold,
		Threads:  lf.threads,
		Progress: func(st optimize.Step) {
			h := relaxStep{Step: st.Number, EnergyHartree: st.EnergyHartree, ChangeHartree: st.ChangeHartree,
				MaxGradient: st.MaxGradient, StepAngstrom: st.StepLength * units.BohrAngstrom, Rejected: st.Rejected}
			if st.Number == 0 {
				h.StepAngstrom = 0
			}
			history = append(history, h)
			if progress {
				mark := ""
				switch {
				case st.Rejected:
					mark = "  rejected: energy rose"
				case st.Converged:
					mark = "  converged"
				}
				change, step := fmt.Sprintf("%+10.2e", h.ChangeHartree), fmt.Sprintf("%10.4f", h.StepAngstrom)
				if st.Number == 0 {
					change, step = fmt.Sprintf("%10s", "—"), fmt.Sprintf("%10s", "—")
				}
				fmt.Fprintf(os.Stderr, "\r\033[K%5d  %18.10f  %s  %12.2e  %s%s\n", st.Number, st.EnergyHartree, change, st.MaxGradient, step, mark)
			}
			setPositions(frame, st.XBohr)
			comment := fmt.Sprintf("step %d  energy %.10f Eh  largest gradient %.2e Eh/bohr", st.Number, st.EnergyHartree, st.MaxGradient)
			if st.Rejected {
				comment += "  (rejected: energy rose)"
			}
			if err := molecule.WriteXYZ(&traj, frame, comment); err != nil && writeErr == nil {
				writeErr = err
			}
			if err := atomicfile.Write(trajPath, traj.Bytes()); err != nil && writeErr == nil {
				writeErr = err
			}
			if !st.Rejected {
				if err := writeGeometry(geomPath, frame, fmt.Sprintf("%s  %s  energy %.10f Eh  step %d  not yet converged",
					s.mol.Formula(), s.label(), st.EnergyHartree, st.Number)); err != nil && writeErr == nil {
					writeErr = err
				}
			}
		},
	})
	if progress {
		fmt.Fprint(os.Stderr, "\r\033[K")
	}
	var optErr *optimize.OptionsError
	if errors.As(relaxErr, &optErr) {
		return usageErr(relaxErr)
	}
	if res == nil {
		// The starting geometry could not be evaluated.
		if errors.Is(relaxErr, scf.ErrNotConverged) {
			return convergeErr(fmt.Errorf("%w\n  try: --max-iterations %d; check the geometry, charge and multiplicity", relaxErr, 2*s.opts.MaxIterations))
		}
		return relaxErr
	}
	final := s.mol.Clone()
	setPositions(final, res.XBohr)
	status := "converged"
	if !res.Converged {
		status = "not converged"
	}
	if err := writeGeometry(geomPath, final, fmt.Sprintf("%s  %s  energy %.10f Eh  %s (%s) after %d steps",
		s.mol.Formula(), s.label(), res.EnergyHartree, status, strings.ToLower(f.converge), res.Steps)); err != nil {
		return err
	}
	if writeErr != nil {
		return writeErr
	}
	rep := &relaxReport{
		File:             path,
		Formula:          s.mol.Formula(),
		Method:           s.method,
		Basis:            s.set.Name,
		Fit:              s.fitName(),
		LevelOfTheory:    s.label(),
		Charge:           s.mol.Charge,
		Multiplicity:     s.mol.Multiplicity,
		Convergence:      strings.ToLower(f.converge),
		EnergyHartree:    res.EnergyHartree,
		Converged:        res.Converged,
		Steps:            res.Steps,
		Evaluations:      res.Evaluations,
		MaxGradient:      res.MaxGradient,
		RMSGradient:      res.RMSGradient,
		Coordinates:      res.Coordinates,
		GeometryFile:     geomPath,
		TrajectoryFile:   trajPath,
		History:          history,
		Threads:          lf.threads,
		WallSeconds:      time.Since(t0).Seconds(),
		Version:          version,
		Symbols:          symbols,
		GeometryAngstrom: final.PositionsAngstrom(),
	}
	for _, a := range freeze {
		rep.Frozen = append(rep.Frozen, a+1)
	}
	for _, c := range hold {
		rep.Held = append(rep.Held, holdText(c))
	}
	out := cmd.OutOrStdout()
	if f.asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		if err := enc.Encode(rep); err != nil {
			return err
		}
	} else if err := printRelaxReport(out, rep, z, x0, res.XBohr, hold); err != nil {
		return err
	}
	if relaxErr == nil {
		return nil
	}
	again := continueCommand(cmd, geomPath, f, freeze, hold)
	switch {
	case errors.Is(relaxErr, optimize.ErrNotConverged):
		return convergeErr(fmt.Errorf("%w; the last geometry is in %s\n  continue from it with:\n    %s", relaxErr, geomPath, again))
	case errors.Is(relaxErr, scf.ErrNotConverged):
		return convergeErr(fmt.Errorf("%w; the last accepted geometry is in %s\n  continue from it with:\n    %s --max-iterations %d",
			relaxErr, geomPath, again, 2*s.opts.MaxIterations))
	case errors.Is(relaxErr, context.Canceled):
		return fmt.Errorf("interrupted (%w); the last accepted geometry is in %s\n  continue from it with:\n    %s", relaxErr, geomPath, again)
	}
	return fmt.Errorf("%w; the last accepted geometry is in %s", relaxErr, geomPath)
}

// continueCommand is the command that continues a relaxation from the
// geometry file: the same flags except --out (the new run writes beside
// that file).
func continueCommand(cmd *cobra.Command, geomPath string, f *relaxFlags, freeze []int, hold []optimize.Coordinate) string {
	parts := []string{"poise", "relax", shellWord(geomPath)}
	cmd.Flags().Visit(func(fl *pflag.Flag) {
		switch fl.Name {
		case "out", "freeze", "hold":
			return
		}
		if fl.Value.Type() == "bool" {
			parts = append(parts, "--"+fl.Name)
			return
		}
		parts = append(parts, "--"+fl.Name, shellWord(fl.Value.String()))
	})
	if len(freeze) > 0 {
		nums := make([]string, len(freeze))
		for i, a := range freeze {
			nums[i] = fmt.Sprint(a + 1)
		}
		parts = append(parts, "--freeze", strings.Join(nums, ","))
	}
	for _, c := range hold {
		parts = append(parts, "--hold", holdText(c))
	}
	return strings.Join(parts, " ")
}

// shellWord quotes s for a POSIX shell when it holds anything but plain
// characters.
func shellWord(s string) string {
	if s == "" {
		return "''"
	}
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("-_./,:=+", r)) {
			return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
		}
	}
	return s
}

// coordKey identifies a coordinate whichever way round its atoms are
// listed.
func coordKey(c optimize.Coordinate) string {
	n := c.NumAtoms()
	fwd, rev := holdText(c), ""
	r := c
	for i := 0; i < n/2; i++ {
		r.Atoms[i], r.Atoms[n-1-i] = r.Atoms[n-1-i], r.Atoms[i]
	}
	rev = holdText(r)
	if rev < fwd {
		fwd = rev
	}
	return c.Kind.String() + " " + fwd
}

// holdText writes a held coordinate as on the command line ("1-2-3").
func holdText(c optimize.Coordinate) string {
	nums := make([]string, c.NumAtoms())
	for i := range nums {
		nums[i] = fmt.Sprint(c.Atoms[i] + 1)
	}
	return strings.Join(nums, "-")
}

func setPositions(m *molecule.Molecule, xBohr []float64) {
	for i := range m.Atoms {
		copy(m.Atoms[i].Position[:], xBohr[3*i:3*i+3])
	}
}

func writeGeometry(path string, m *molecule.Molecule, comment string) error {
	var b bytes.Buffer
	if err := molecule.WriteXYZ(&b, m, comment); err != nil {
		return err
	}
	return atomicfile.Write(path, b.Bytes())
}

// sameFile reports whether a and b name the same existing file.
func sameFile(a, b string) bool {
	sa, err := os.Stat(a)
	if err != nil {
		return false
	}
	sb, err := os.Stat(b)
	if err != nil {
		return false
	}
	return os.SameFile(sa, sb)
}

// printRelaxReport prints the outcome, the files and the closing table of
// bond lengths and angles (start and final).
func printRelaxReport(w io.Writer, rep *relaxReport, z []int, x0, x []float64, hold []optimize.Coordinate) error {
	fmt.Fprintf(w, "%s  %s  charge %d  multiplicity %d\n", rep.Formula, rep.LevelOfTheory, rep.Charge, rep.Multiplicity)
	status := fmt.Sprintf("converged (%s) in %d steps", rep.Convergence, rep.Steps)
	if !rep.Converged {
		status = fmt.Sprintf("NOT converged (%s) after %d steps", rep.Convergence, rep.Steps)
	}
	if len(z) == 1 {
		fmt.Fprintf(w, "a single atom: nothing to relax (one energy and gradient, %d steps); wall time %.1f s\n", rep.Steps, rep.WallSeconds)
	} else {
		fmt.Fprintf(w, "%s, %d gradient evaluations, %s coordinates; wall time %.1f s\n", status, rep.Evaluations, rep.Coordinates, rep.WallSeconds)
	}
	fmt.Fprintf(w, "final energy %.10f Eh; largest gradient %.2e Eh/bohr, RMS %.2e\n", rep.EnergyHartree, rep.MaxGradient, rep.RMSGradient)
	if len(rep.Frozen) > 0 {
		fmt.Fprintf(w, "frozen atoms: %s\n", strings.Trim(strings.Join(strings.Fields(fmt.Sprint(rep.Frozen)), ", "), "[]"))
	}
	if len(rep.Held) > 0 {
		fmt.Fprintf(w, "held at their starting values: %s\n", strings.Join(rep.Held, ", "))
	}
	fmt.Fprintf(w, "geometry:   %s\ntrajectory: %s\n\n", rep.GeometryFile, rep.TrajectoryFile)

	heldKeys := map[string]bool{}
	for _, c := range hold {
		heldKeys[coordKey(c)] = true
	}
	mark := func(c optimize.Coordinate, contact bool) string {
		switch {
		case heldKeys[coordKey(c)]:
			return "held"
		case contact:
			return "contact"
		}
		return ""
	}
	listed := map[string]bool{}
	row := func(c optimize.Coordinate, contact bool) []string {
		listed[coordKey(c)] = true
		v0, v1, f, unit := c.Value(x0), c.Value(x), "%.4f", units.BohrAngstrom
		if c.Kind != optimize.Bond {
			f, unit = "%.2f", 180/math.Pi
		}
		v0, v1 = v0*unit, v1*unit
		change := fmt.Sprintf("%+"+f[1:], v1-v0)
		if strings.Trim(change, "+-0.") == "" {
			change = "+" + change[1:] // no "−0.0000"
		}
		return []string{c.Label(rep.Symbols), fmt.Sprintf(f, v0), fmt.Sprintf(f, v1), change, mark(c, contact)}
	}
	// Bonds at the final geometry; pairs beyond the covalent criterion
	// (joining separate fragments) are marked as contacts.
	nb := make([][]int, len(z))
	var brows, arows, drows [][]string
	for _, b := range optimize.Bonds(z, x) {
		c := optimize.Coordinate{Kind: optimize.Bond, Atoms: [4]int{b[0], b[1]}}
		contact := c.Value(x) >= optimize.BondFactor*(optimize.CovalentRadiusBohr(z[b[0]])+optimize.CovalentRadiusBohr(z[b[1]]))
		brows = append(brows, row(c, contact))
		nb[b[0]] = append(nb[b[0]], b[1])
		nb[b[1]] = append(nb[b[1]], b[0])
	}
	for j := range nb {
		for p := 0; p < len(nb[j]); p++ {
			for q := p + 1; q < len(nb[j]); q++ {
				arows = append(arows, row(optimize.Coordinate{Kind: optimize.Angle, Atoms: [4]int{nb[j][p], j, nb[j][q]}}, false))
			}
		}
	}
	for _, c := range hold {
		if listed[coordKey(c)] {
			continue
		}
		switch c.Kind {
		case optimize.Bond:
			brows = append(brows, row(c, false))
		case optimize.Angle:
			arows = append(arows, row(c, false))
		default:
			drows = append(drows, row(c, false))
		}
	}
	for _, t := range []struct {
		title, head string
		rows        [][]string
	}{{"bond lengths (Å)", "bond", brows}, {"angles (degrees)", "angle", arows}, {"held dihedrals (degrees)", "dihedral", drows}} {
		if len(t.rows) == 0 {
			continue
		}
		fmt.Fprintln(w, t.title)
		head, rows := []string{t.head, "start", "final", "change", ""}, t.rows
		marked := false
		for _, r := range rows {
			marked = marked || r[4] != ""
		}
		if !marked { // no held or contact marks: no empty column
			head = head[:4]
			rows = make([][]string, len(t.rows))
			for i, r := range t.rows {
				rows[i] = r[:4]
			}
		}
		if err := writeTable(w, head, rows); err != nil {
			return err
		}
	}
	return nil
}
