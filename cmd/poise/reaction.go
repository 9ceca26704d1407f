package main

import (
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

	"poise/energy/scf"
	"poise/energy/units"
	"poise/internal/atomicfile"
	"poise/optimize"
	"poise/settle"
	"poise/thermo"
	"poise/thermo/reaction"
)

// reactionFlags are the options of poise reaction besides the level of
// theory.
type reactionFlags struct {
	out         string
	asJSON      bool
	temperature float64
	pressureBar float64
	storeDir    string
	noStore     bool
	plan        string
	assemble    string
	batch       batchFlags
}

func newReactionCmd() *cobra.Command {
	var lf levelFlags
	var f reactionFlags
	cmd := &cobra.Command{
		Use:   "reaction FILE",
		Short: "reaction energies, enthalpies, Gibbs energies and equilibrium constants",
		Long: `Reads a reaction file, settles every structure in it once (as 'poise settle' does,
results store reused) and prints, per reaction, ΔE(electronic), ΔZPE, ΔH(T), ΔG(T) and the
equilibrium constant K = exp(−ΔG°/RT) (standard state: ideal gas at 1 bar), in kJ/mol
and kcal/mol.

A reaction file has one statement per line; # starts a comment; XYZ paths are relative
to the reaction file:

  species ethylene  ethylene.xyz
  species hydrogen  hydrogen.xyz   charge 0  multiplicity 1
  species butane    anti.xyz gauche.xyz          # two conformers
  reaction hydrogenation: ethylene + hydrogen -> ethane
  reaction 2 water -> 2 hydrogen + oxygen        # coefficients before names

Every reaction must balance elements and charge; the file is checked in full (files,
spins, balance, basis coverage) before anything is computed. A species with several
conformers is represented by the one of lowest G; the conformer mixture free energy
−RT ln Σ exp(−G_i/RT) is reported too, with ΔG and K from it.

Structures are settled at 298.15 K and 1 bar (so they share the store with 'poise
settle'); the thermochemistry is then recomputed at --temperature and --pressure.
Charge and multiplicity come from the reaction file, not from flags. --out DIR writes
the settle files of every structure to DIR/SPECIES (DIR/SPECIES-2, ... for conformers)
and reaction.json. Exit status 4 when some structure is not a confirmed minimum (the
results are printed anyway).

On a cluster: --plan DIR writes one task per structure (its whole settle, results in
DIR/store unless --store) with a Slurm job-array script; --assemble DIR then reports the
reactions, or lists the unfinished tasks with a script for them (exit status 5).`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if f.assemble != "" {
				if len(args) > 0 {
					return usageErr(errors.New("give either FILE or --assemble DIR, not both"))
				}
				return assembleReaction(cmd, &lf, &f)
			}
			if len(args) != 1 {
				return usageErr(errors.New("give a reaction file (poise reaction FILE) or a plan (poise reaction --assemble DIR)"))
			}
			return runReaction(cmd, args[0], &lf, &f)
		},
	}
	lf.register(cmd)
	fl := cmd.Flags()
	// Charge and multiplicity are per species, in the reaction file.
	_ = fl.MarkHidden("charge")
	_ = fl.MarkHidden("multiplicity")
	fl.StringVar(&f.out, "out", "", "write every structure's settle files and reaction.json under DIR")
	fl.BoolVar(&f.asJSON, "json", false, "print one JSON object instead of text")
	fl.Float64Var(&f.temperature, "temperature", thermo.DefaultTemperatureK, "temperature in K")
	fl.Float64Var(&f.pressureBar, "pressure", 1, "pressure in bar (K always refers to 1 bar)")
	fl.StringVar(&f.storeDir, "store", "", "results store directory (default: $XDG_CACHE_HOME/poise or ~/.cache/poise)")
	fl.BoolVar(&f.noStore, "no-store", false, "neither read nor write the results store")
	fl.StringVar(&f.plan, "plan", "", "write one task per structure (its whole settle) into DIR for a batch system, with a Slurm job-array script; compute nothing else")
	fl.StringVar(&f.assemble, "assemble", "", "report the reactions of the plan in DIR once every task has finished (list the missing ones otherwise)")
	f.batch.register(cmd)
	return cmd
}

// reactionStructure is one structure of the file, prepared for settle.
type reactionStructure struct {
	species string
	file    string // as written in the reaction file
	dir     string // output subdirectory name
	setup   *setup
}

// reactionJob is a checked reaction file: its reactions, the structures
// to settle (in file order: species, then conformers) and the settle
// options with the results store.
type reactionJob struct {
	sys     *reaction.System
	structs []reactionStructure
	opts    settle.Options
}

// prepareReaction checks the flags and the whole reaction file (files,
// spins, balance, basis coverage) before anything is computed.
func prepareReaction(stderr io.Writer, path string, lf *levelFlags, f *reactionFlags) (*reactionJob, error) {
	switch {
	case !(f.temperature > 0) || math.IsInf(f.temperature, 0):
		return nil, usageErr(fmt.Errorf("--temperature %g: give a positive temperature in K", f.temperature))
	case !(f.pressureBar > 0) || math.IsInf(f.pressureBar, 0):
		return nil, usageErr(fmt.Errorf("--pressure %g: give a positive pressure in bar", f.pressureBar))
	case f.noStore && f.storeDir != "":
		return nil, usageErr(errors.New("--store and --no-store exclude each other: give one"))
	}
	sys, err := reaction.Load(path)
	if err != nil {
		return nil, usageErr(err)
	}
	job := &reactionJob{sys: sys}
	for _, sp := range sys.Species {
		if !usedSpecies(sys.Reactions, sp.Name) {
			fmt.Fprintf(stderr, "poise: warning: %s:%d: species %q is in no reaction; it is not computed\n", path, sp.Line, sp.Name)
			continue
		}
		for i, p := range sp.Paths {
			l := *lf
			l.charge, l.multiplicity = sp.Charge, sp.Multiplicity
			s, err := l.prepare(p)
			if err != nil {
				return nil, fmt.Errorf("%s:%d: species %q: %w", path, sp.Line, sp.Name, err)
			}
			dir := sp.Name
			if i > 0 {
				dir = fmt.Sprintf("%s-%d", sp.Name, i+1)
			}
			job.structs = append(job.structs, reactionStructure{species: sp.Name, file: sp.Files[i], dir: dir, setup: s})
		}
	}
	job.opts = settle.DefaultOptions()
	job.opts.ProgramVersion = version
	if !f.noStore {
		dir := f.storeDir
		if dir == "" {
			if dir, err = settle.DefaultStoreDir(); err != nil {
				return nil, usageErr(fmt.Errorf("%w; give --store DIR or --no-store", err))
			}
		}
		if job.opts.Store, err = settle.OpenStore(dir); err != nil {
			return nil, usageErr(fmt.Errorf("--store: %w", err))
		}
	}
	return job, nil
}

// checkReactionFlags refuses the flags that a reaction file sets per
// species.
func checkReactionFlags(cmd *cobra.Command) error {
	if cmd.Flags().Changed("charge") || cmd.Flags().Changed("multiplicity") {
		return usageErr(errors.New("--charge and --multiplicity do not apply: give them per species in the reaction file (species NAME FILE.xyz charge Q multiplicity M)"))
	}
	return nil
}

func runReaction(cmd *cobra.Command, path string, lf *levelFlags, f *reactionFlags) error {
	if err := checkReactionFlags(cmd); err != nil {
		return err
	}
	if f.plan != "" {
		return planReaction(cmd, path, lf, f)
	}
	job, err := prepareReaction(cmd.ErrOrStderr(), path, lf, f)
	if err != nil {
		return err
	}
	return evaluateReaction(cmd, path, lf, f, job)
}

// evaluateReaction settles every structure of job (or finds it in the
// store) and reports the reactions.
func evaluateReaction(cmd *cobra.Command, path string, lf *levelFlags, f *reactionFlags, job *reactionJob) error {
	sys, structs, opts := job.sys, job.structs, job.opts
	if f.out != "" {
		if err := os.MkdirAll(f.out, 0o755); err != nil {
			return usageErr(fmt.Errorf("--out: %w", err))
		}
	}
	stderr := cmd.ErrOrStderr()
	verbose := !f.asJSON && isTerminal(os.Stderr)

	species := map[string][]reaction.ConformerResult{}
	sums := map[string][]*settle.Result{}
	var notMinimum []string
	level := ""
	for _, st := range structs {
		lvl := settleLevel(st.setup)
		level = lvl.Label()
		if verbose {
			fmt.Fprintf(os.Stderr, "settling %s (%s)\n", st.species, st.file)
			opts.Log = func(line string) { fmt.Fprintf(os.Stderr, "  %s\n", line) }
		}
		if opts.Store != nil {
			opts.WorkDir = settleWorkDir(opts.Store, st.setup, opts)
		}
		res, err := settle.Run(cmd.Context(), st.setup.mol, lvl, opts)
		if err == nil {
			settle.RemoveWork(opts.WorkDir)
		}
		if err != nil {
			var optErr *optimize.OptionsError
			switch {
			case errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded):
				return fmt.Errorf("interrupted (%w); finished work is kept in %s: run the same command again to continue", err, opts.WorkDir)
			case errors.As(err, &optErr):
				return usageErr(err)
			case errors.Is(err, scf.ErrNotConverged):
				return convergeErr(fmt.Errorf("species %q (%s): %w\n  try: --max-iterations %d; check the geometry, charge and multiplicity; for open shells --unrestricted",
					st.species, st.file, err, 2*lf.maxIter))
			case errors.Is(err, optimize.ErrNotConverged):
				return convergeErr(fmt.Errorf("species %q (%s): %w\n  try 'poise settle' on it with --max-steps", st.species, st.file, err))
			}
			if res == nil {
				return fmt.Errorf("species %q (%s): %w", st.species, st.file, err)
			}
			fmt.Fprintf(stderr, "poise: warning: species %q (%s): %v\n", st.species, st.file, err)
		}
		sum := res.Summary
		for _, w := range sum.Warnings {
			fmt.Fprintf(stderr, "poise: warning: %s (%s): %s\n", st.species, st.file, w)
		}
		if !sum.Minimum() {
			notMinimum = append(notMinimum, fmt.Sprintf("%s (%s): %s", st.species, st.file, verdictLine(sum)))
		}
		if f.out != "" {
			stem := strings.TrimSuffix(filepath.Base(st.file), filepath.Ext(st.file))
			sub := filepath.Join(f.out, st.dir)
			if err := os.MkdirAll(sub, 0o755); err != nil {
				return err
			}
			if err := writeSettleFiles(settleFiles(sub, stem), st.setup.mol, res); err != nil {
				return err
			}
		}
		species[st.species] = append(species[st.species], reaction.ConformerResult{
			Source: st.file, EnergyHartree: sum.EnergyHartree, Input: sum.ThermoInput()})
		sums[st.species] = append(sums[st.species], res)
	}
	cond := thermo.Conditions{TemperatureK: f.temperature, PressurePa: f.pressureBar * units.StandardPressurePa}
	ev, err := reaction.Evaluate(sys.Reactions, species, cond, thermo.Options{})
	if err != nil {
		return err
	}
	rep := makeReactionReport(path, level, ev, sums)
	for _, s := range notMinimum {
		fmt.Fprintf(stderr, "poise: warning: %s; its reaction quantities are not those of a minimum\n", s)
	}
	if f.out != "" {
		js, err := json.MarshalIndent(rep, "", "  ")
		if err != nil {
			return err
		}
		if err := atomicfile.Write(filepath.Join(f.out, "reaction.json"), append(js, '\n')); err != nil {
			return err
		}
	}
	out := cmd.OutOrStdout()
	if f.asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		if err := enc.Encode(rep); err != nil {
			return err
		}
	} else {
		printReactionReport(out, rep)
	}
	if len(notMinimum) > 0 {
		return &exitError{code: exitNotMinimum, err: fmt.Errorf("%d structure(s) not confirmed minima: %s", len(notMinimum), strings.Join(notMinimum, "; "))}
	}
	return nil
}

func usedSpecies(rxns []reaction.Reaction, name string) bool {
	for _, r := range rxns {
		if _, ok := r.Nu()[name]; ok {
			return true
		}
	}
	return false
}

// reactionConformerJSON is one structure in the JSON report.
type reactionConformerJSON struct {
	File            string  `json:"file"`
	Verdict         string  `json:"verdict"`
	ImaginaryCount  int     `json:"imaginary_count"`
	EnergyHartree   float64 `json:"energy_hartree"`
	ZPEHartree      float64 `json:"zero_point_energy_hartree"`
	EnthalpyHartree float64 `json:"enthalpy_hartree"`
	GibbsHartree    float64 `json:"gibbs_hartree"`
	Population      float64 `json:"population"`
	StoreKey        string  `json:"store_key"`
	Reused          bool    `json:"reused_from_store"`
}

// reactionSpeciesJSON is one species in the JSON report.
type reactionSpeciesJSON struct {
	Name                    string                  `json:"name"`
	Formula                 string                  `json:"formula"`
	Charge                  int                     `json:"charge"`
	Multiplicity            int                     `json:"multiplicity"`
	Conformers              []reactionConformerJSON `json:"conformers"`
	LowestConformer         string                  `json:"lowest_gibbs_conformer"`
	GibbsMixtureHartree     float64                 `json:"gibbs_mixture_hartree"`
	EnthalpyHartree         float64                 `json:"enthalpy_hartree"`
	GibbsHartree            float64                 `json:"gibbs_hartree"`
	ElectronicEnergyHartree float64                 `json:"energy_hartree"`
}

// reactionValueJSON is one reaction in the JSON report.
type reactionValueJSON struct {
	Name                      string   `json:"name"`
	Equation                  string   `json:"equation"`
	DeltaEKJPerMol            float64  `json:"delta_e_kj_per_mol"`
	DeltaEKcalPerMol          float64  `json:"delta_e_kcal_per_mol"`
	DeltaZPEKJPerMol          float64  `json:"delta_zpe_kj_per_mol"`
	DeltaZPEKcalPerMol        float64  `json:"delta_zpe_kcal_per_mol"`
	DeltaHKJPerMol            float64  `json:"delta_h_kj_per_mol"`
	DeltaHKcalPerMol          float64  `json:"delta_h_kcal_per_mol"`
	DeltaGKJPerMol            float64  `json:"delta_g_kj_per_mol"`
	DeltaGKcalPerMol          float64  `json:"delta_g_kcal_per_mol"`
	DeltaGMixtureKJPerMol     float64  `json:"delta_g_mixture_kj_per_mol"`
	DeltaGMixtureKcalPerMol   float64  `json:"delta_g_mixture_kcal_per_mol"`
	DeltaGStandardKJPerMol    float64  `json:"delta_g_standard_kj_per_mol"`
	DeltaCpJPerMolK           float64  `json:"delta_cp_j_per_mol_k"`
	EquilibriumConstant       *float64 `json:"equilibrium_constant"`
	Log10EquilibriumConstant  float64  `json:"log10_equilibrium_constant"`
	Log10EquilibriumConstantM float64  `json:"log10_equilibrium_constant_mixture"`
}

// reactionReport is the JSON report of poise reaction.
type reactionReport struct {
	ReactionFile  string                `json:"reaction_file"`
	LevelOfTheory string                `json:"level_of_theory"`
	TemperatureK  float64               `json:"temperature_k"`
	PressureBar   float64               `json:"pressure_bar"`
	StandardState string                `json:"standard_state"`
	Species       []reactionSpeciesJSON `json:"species"`
	Reactions     []reactionValueJSON   `json:"reactions"`
	Caution       string                `json:"caution"`
	Version       string                `json:"program_version"`
	hasConformers bool
}

func makeReactionReport(path, level string, ev *reaction.Result, sums map[string][]*settle.Result) *reactionReport {
	kj, kcal := units.HartreeKJPerMol, units.HartreeKcalPerMol
	rep := &reactionReport{
		ReactionFile: path, LevelOfTheory: level,
		TemperatureK:  ev.Conditions.TemperatureK,
		PressureBar:   ev.Conditions.PressurePa / units.StandardPressurePa,
		StandardState: "ideal gas at 1 bar (K); ΔG at the pressure given",
		Caution:       reaction.Caution,
		Version:       version,
	}
	for _, s := range ev.Species {
		rs := sums[s.Name]
		js := reactionSpeciesJSON{Name: s.Name, Formula: rs[0].Summary.Formula, Charge: rs[0].Summary.Charge, Multiplicity: rs[0].Summary.Multiplicity,
			LowestConformer: s.Best().Source, GibbsMixtureHartree: s.GibbsMixHartree,
			EnthalpyHartree: s.Best().EnthalpyHartree, GibbsHartree: s.Best().GibbsHartree, ElectronicEnergyHartree: s.Best().EnergyHartree}
		if len(s.Conformers) > 1 {
			rep.hasConformers = true
		}
		for i, c := range s.Conformers {
			sum := rs[i].Summary
			js.Conformers = append(js.Conformers, reactionConformerJSON{File: c.Source, Verdict: sum.Verdict, ImaginaryCount: sum.ImaginaryCount,
				EnergyHartree: c.EnergyHartree, ZPEHartree: c.ZPEHartree, EnthalpyHartree: c.EnthalpyHartree, GibbsHartree: c.GibbsHartree,
				Population: c.Population, StoreKey: sum.Key, Reused: rs[i].Reused})
		}
		rep.Species = append(rep.Species, js)
	}
	for _, r := range ev.Reactions {
		v := reactionValueJSON{Name: r.Name, Equation: r.Reaction.String(),
			DeltaEKJPerMol: r.DeltaEHartree * kj, DeltaEKcalPerMol: r.DeltaEHartree * kcal,
			DeltaZPEKJPerMol: r.DeltaZPEHartree * kj, DeltaZPEKcalPerMol: r.DeltaZPEHartree * kcal,
			DeltaHKJPerMol: r.DeltaHHartree * kj, DeltaHKcalPerMol: r.DeltaHHartree * kcal,
			DeltaGKJPerMol: r.DeltaGHartree * kj, DeltaGKcalPerMol: r.DeltaGHartree * kcal,
			DeltaGMixtureKJPerMol: r.DeltaGMixHartree * kj, DeltaGMixtureKcalPerMol: r.DeltaGMixHartree * kcal,
			DeltaGStandardKJPerMol:   r.DeltaGStandardHartree * kj,
			DeltaCpJPerMolK:          r.DeltaCpJPerMolK,
			Log10EquilibriumConstant: r.Log10K, Log10EquilibriumConstantM: r.Log10KMix}
		if k := r.K(); !math.IsInf(k, 0) && k != 0 {
			v.EquilibriumConstant = &k
		}
		rep.Reactions = append(rep.Reactions, v)
	}
	return rep
}

// printReactionReport writes the text report.
func printReactionReport(w io.Writer, rep *reactionReport) {
	fmt.Fprintf(w, "reactions of %s at %s, %g K, %g bar\n", rep.ReactionFile, rep.LevelOfTheory, rep.TemperatureK, rep.PressureBar)
	fmt.Fprintf(w, "\nspecies (the conformer of lowest G represents each)\n")
	fmt.Fprintf(w, "  %-14s %-8s %-22s %18s %18s %18s\n", "name", "formula", "structure", "E / Eh", "H / Eh", "G / Eh")
	for _, s := range rep.Species {
		for i, c := range s.Conformers {
			name, formula := s.Name, s.Formula
			if i > 0 {
				name, formula = "", ""
			}
			mark := ""
			if len(s.Conformers) > 1 {
				mark = fmt.Sprintf("  population %.3f", c.Population)
				if c.File == s.LowestConformer {
					mark += " (lowest G)"
				}
			}
			if c.Verdict != settle.VerdictMinimum {
				mark += fmt.Sprintf("  NOT A MINIMUM (%d imaginary)", c.ImaginaryCount)
			}
			fmt.Fprintf(w, "  %-14s %-8s %-22s %18.8f %18.8f %18.8f%s\n", name, formula, c.File, c.EnergyHartree, c.EnthalpyHartree, c.GibbsHartree, mark)
		}
		if len(s.Conformers) > 1 {
			fmt.Fprintf(w, "  %-14s %-8s %-22s %18s %18s %18.8f\n", "", "", "conformer mixture", "", "", s.GibbsMixtureHartree)
		}
	}
	for _, r := range rep.Reactions {
		fmt.Fprintf(w, "\n%s: %s\n", r.Name, r.Equation)
		fmt.Fprintf(w, "  %-34s %12s %12s\n", "", "kJ/mol", "kcal/mol")
		row := func(label string, kjv, kcalv float64) {
			fmt.Fprintf(w, "  %-34s %12.2f %12.2f\n", label, kjv, kcalv)
		}
		row("ΔE (electronic)", r.DeltaEKJPerMol, r.DeltaEKcalPerMol)
		row("ΔZPE", r.DeltaZPEKJPerMol, r.DeltaZPEKcalPerMol)
		row(fmt.Sprintf("ΔH (%g K)", rep.TemperatureK), r.DeltaHKJPerMol, r.DeltaHKcalPerMol)
		row(fmt.Sprintf("ΔG (%g K, %g bar)", rep.TemperatureK, rep.PressureBar), r.DeltaGKJPerMol, r.DeltaGKcalPerMol)
		if rep.hasConformers {
			row("ΔG of the conformer mixtures", r.DeltaGMixtureKJPerMol, r.DeltaGMixtureKcalPerMol)
		}
		fmt.Fprintf(w, "  %-34s %12s\n", "K = exp(−ΔG°/RT), p° = 1 bar", kText(r.EquilibriumConstant, r.Log10EquilibriumConstant))
		if rep.hasConformers {
			fmt.Fprintf(w, "  %-34s %12s\n", "K of the conformer mixtures", kText(nil, r.Log10EquilibriumConstantM))
		}
		if r.DeltaHKJPerMol < 0 {
			fmt.Fprintf(w, "  exothermic: %.1f kJ released per mole of reaction as written\n", -r.DeltaHKJPerMol)
		}
	}
	fmt.Fprintf(w, "\n%s\n", wrapWords("caution: "+rep.Caution, 88))
}

// wrapWords breaks text into lines of at most width runes at spaces.
func wrapWords(text string, width int) string {
	var b strings.Builder
	n := 0
	for i, word := range strings.Fields(text) {
		l := len([]rune(word))
		switch {
		case i == 0:
		case n+1+l > width:
			b.WriteByte('\n')
			n = 0
		default:
			b.WriteByte(' ')
			n++
		}
		b.WriteString(word)
		n += l
	}
	return b.String()
}

// kText writes an equilibrium constant, as 10^x when it does not fit.
func kText(k *float64, log10K float64) string {
	if k == nil && math.Abs(log10K) < 300 {
		v := math.Pow(10, log10K)
		k = &v
	}
	if k == nil {
		return fmt.Sprintf("10^%.1f", log10K)
	}
	return fmt.Sprintf("%.3g", *k)
}
