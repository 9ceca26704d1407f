package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"poise/energy/scf"
	"poise/energy/units"
	"poise/freq"
	"poise/gradient"
	"poise/internal/atomicfile"
	"poise/settle"
)

// Plans of modes (one coordinate's displaced points per task) and
// reactions (one structure's settle per task); see task.go for the
// directory layout.

const displacementsDir = "displacements"

// planModesCalc prepares the Hessian calculation of a modes plan.
func planModesCalc(p *planFile, threads int) (*modesCalc, error) {
	return prepareModes(p.path(p.Input), p.Level.flags(threads), p.StepBohr, p.FourPoint, p.NoSymmetry, p.Rotations, p.path(displacementsDir))
}

// planSavedPoints reports the saved points of a modes plan.
func planSavedPoints(mc *modesCalc) (bool, []freq.Displacement, error) {
	return freq.SavedPoints(len(mc.s.mol.Atoms), mc.x0, mc.hopts)
}

// planModes writes the plan of a Hessian: the reference point is computed
// here (its density saved for every task), the displaced points of every
// coordinate become a task (the −h point starts from the +h point's
// extrapolated state, as in a single-process run).
func planModes(cmd *cobra.Command, path string, lf *levelFlags, f *modesFlags) error {
	if err := f.batch.check(); err != nil {
		return err
	}
	for _, name := range []string{"out", "json", "concurrent"} {
		if cmd.Flags().Changed(name) {
			return usageErr(fmt.Errorf("--%s does not apply with --plan: give it to 'poise modes --assemble %s'", name, f.plan))
		}
	}
	s, err := lf.prepare(path)
	if err != nil {
		return err
	}
	if len(s.mol.Atoms) == 1 {
		return usageErr(fmt.Errorf("%s: a single atom has no vibrations: there is nothing to plan (run 'poise modes %s' directly)", path, path))
	}
	sum, err := fileSHA256(path)
	if err != nil {
		return usageErr(err)
	}
	p := &planFile{Format: planFormat, Version: planVersion, Kind: planKindM, ProgramVersion: version,
		Created: time.Now().UTC().Format(time.RFC3339), Source: path, Input: "input.xyz", InputSHA256: sum,
		Level: levelOf(lf), ThreadsPerTask: lf.threads, StepBohr: f.step, FourPoint: f.fourPoint, NoSymmetry: f.noSymmetry, Rotations: !f.noSymmetry, dir: f.plan}
	// The points: those of the calculation the tasks and the assembly
	// rebuild from the plan (symmetry-unique unless --no-symmetry).
	pc, err := prepareModes(path, lf, f.step, f.fourPoint, f.noSymmetry, !f.noSymmetry, "")
	if err != nil {
		return err
	}
	pts, err := freq.PlanPoints(len(s.mol.Atoms), pc.x0, pc.hopts)
	if err != nil {
		return usageErr(fmt.Errorf("%s: %w", path, err))
	}
	x0 := pts.CoordsBohr
	for k, g := range pts.Groups {
		d := g[0]
		geo := make([][3]float64, len(s.mol.Atoms))
		for a := range geo {
			for c := 0; c < 3; c++ {
				v := x0[3*a+c]
				if 3*a+c == d.Coordinate {
					v += float64(d.Steps) * f.step
				}
				geo[a][c] = v / units.AngstromBohr
			}
		}
		steps := make([]int, len(g))
		moves := make([]string, len(g))
		for i, e := range g {
			steps[i] = e.Steps
			moves[i] = fmt.Sprintf("%+g", float64(e.Steps)*f.step)
		}
		p.Tasks = append(p.Tasks, planTask{Index: k, Coordinate: d.Coordinate, StepList: steps, GeometryAngstrom: geo,
			Label: fmt.Sprintf("atom %d %s%c %s bohr", d.Coordinate/3+1, s.mol.Atoms[d.Coordinate/3].Symbol, "xyz"[d.Coordinate%3], strings.Join(moves, ", "))})
	}
	existing, err := checkPlanDir(p)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(f.plan, 0o755); err != nil {
		return usageErr(fmt.Errorf("--plan: %w", err))
	}
	if !existing {
		data, err := os.ReadFile(path)
		if err != nil {
			return usageErr(err)
		}
		if err := atomicfile.Write(p.path(p.Input), data); err != nil {
			return err
		}
	}
	mc, err := planModesCalc(p, lf.threads)
	if err != nil {
		return err
	}
	// The reference point, and the density every task starts from.
	ctx := cmd.Context()
	computed, err := freq.ComputeReference(ctx, mc.surf, mc.x0, mc.hopts)
	if err != nil {
		return modesPointErr(path, err, lf)
	}
	if _, serr := os.Stat(p.path(stateName)); computed || serr != nil {
		if !computed { // reference saved earlier, its density lost: recompute it
			var pt gradient.Point
			if err := mc.surf.Evaluate(ctx, mc.x0, gradient.Request{Threads: lf.threads}, &pt); err != nil {
				return modesPointErr(path, err, lf)
			}
		}
		data, err := json.Marshal(mc.surf.WarmStart())
		if err != nil {
			return err
		}
		if err := atomicfile.Write(p.path(stateName), data); err != nil {
			return err
		}
	}
	if err := writePlanFiles(p); err != nil {
		return err
	}
	all := make([]int, len(p.Tasks))
	for i := range all {
		all[i] = i
	}
	scripts, err := writeBatchScripts(p, "submit", all, &f.batch)
	if err != nil {
		return err
	}
	out := cmd.OutOrStdout()
	fmt.Fprintf(out, "plan %s: the Hessian of %s (%s) as %d tasks, the displaced points of one coordinate each, %d thread(s) per task\n",
		p.dir, path, s.label(), len(p.Tasks), p.ThreadsPerTask)
	fmt.Fprintf(out, "reference point computed and saved (its density is every task's starting guess)\n")
	if existing {
		if st, err := statusOf(p); err == nil {
			fmt.Fprintf(out, "the plan existed: %d of %d tasks already finished\n", len(p.Tasks)-len(st.missing()), len(p.Tasks))
		}
	}
	printSubmit(out, p, scripts, "the plan")
	fmt.Fprintf(out, "then: poise modes --assemble %s\n", shellQuote(p.dir))
	return nil
}

func modesPointErr(path string, err error, lf *levelFlags) error {
	if errors.Is(err, scf.ErrNotConverged) {
		return convergeErr(fmt.Errorf("%s: %w\n  try: --max-iterations %d; check the geometry, charge and multiplicity; for open shells --unrestricted", path, err, 2*lf.maxIter))
	}
	return fmt.Errorf("%s: %w", path, err)
}

// runModesTask computes the displaced points of one task of a modes plan.
func runModesTask(ctx context.Context, p *planFile, t planTask, threads int) (bool, error) {
	mc, err := planModesCalc(p, threads)
	if err != nil {
		return false, err
	}
	data, err := os.ReadFile(p.path(stateName))
	if err != nil {
		return false, fmt.Errorf("the reference density: %w (plan again with the same command)", err)
	}
	var state scf.State
	if err := json.Unmarshal(data, &state); err != nil {
		return false, fmt.Errorf("%s: %w (plan again with the same command)", p.path(stateName), err)
	}
	if err := mc.surf.SetWarmStart(&state); err != nil {
		return false, err
	}
	hopts := mc.hopts
	hopts.Threads = threads
	n, err := freq.ComputeDisplacements(ctx, mc.surf, mc.x0, hopts, t.points())
	return n > 0, err
}

// noEvaluation is a surface for assembling: every point must be saved.
type noEvaluation struct{ gradient.Surface }

func (noEvaluation) Evaluate(context.Context, []float64, gradient.Request, *gradient.Point) error {
	return errors.New("assembling a plan computes nothing, but a point is missing")
}

// assembleModes reads a finished modes plan into a modes file (before the
// analysis); an unfinished one is listed with a script for the rest.
func assembleModes(cmd *cobra.Command, f *modesFlags) (*freq.File, *planFile, error) {
	if err := f.batch.check(); err != nil {
		return nil, nil, err
	}
	p, err := readPlan(f.assemble)
	if err != nil {
		return nil, nil, err
	}
	if p.Kind != planKindM {
		return nil, nil, usageErr(fmt.Errorf("%s is a %s plan: assemble it with 'poise %s --assemble %s'", p.dir, p.Kind, p.Kind, p.dir))
	}
	mc, err := planModesCalc(p, 1)
	if err != nil {
		return nil, nil, err
	}
	haveRef, _, err := planSavedPoints(mc)
	if err != nil {
		return nil, nil, err
	}
	if !haveRef {
		return nil, nil, fmt.Errorf("%s: the reference point is missing: plan again with the same command", p.dir)
	}
	st, err := statusOf(p)
	if err != nil {
		return nil, nil, err
	}
	if len(st.missing()) > 0 {
		return nil, nil, incompletePlan(cmd, p, st, &f.batch)
	}
	h, err := freq.ComputeHessian(cmd.Context(), noEvaluation{mc.surf}, mc.x0, mc.hopts)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", p.dir, err)
	}
	file, err := mc.modesFile(p.Source, h, p.ThreadsPerTask, len(p.Tasks), 0)
	if err != nil {
		return nil, nil, err
	}
	return file, p, nil
}

// copyReactionInputs copies a reaction file and the structures it names
// into DIR/input, keeping their relative places, and returns the copy of
// the reaction file (relative to DIR).
func copyReactionInputs(path string, job *reactionJob, dir string) (string, error) {
	up := 0 // how many levels above the reaction file's directory the structures reach
	var rel []string
	for _, sp := range job.sys.Species {
		for _, f := range sp.Files {
			if filepath.IsAbs(f) {
				return "", usageErr(fmt.Errorf("%s: species %q: %s is an absolute path: a plan copies its inputs, give structure paths relative to the reaction file", path, sp.Name, f))
			}
			c := filepath.Clean(f)
			k := 0
			for strings.HasPrefix(c[k*3:], ".."+string(filepath.Separator)) {
				k++
			}
			if !filepath.IsLocal(c[k*3:]) {
				return "", usageErr(fmt.Errorf("%s: species %q: path %s is not a plain relative path", path, sp.Name, f))
			}
			up = max(up, k)
			rel = append(rel, c)
		}
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return "", err
	}
	// The reaction file goes as many directories deep as its structures
	// reach up, under the names of its own parent directories.
	parts := strings.Split(filepath.Dir(abs), string(filepath.Separator))
	if up > len(parts)-1 {
		return "", usageErr(fmt.Errorf("%s: structure paths reach above the root directory", path))
	}
	sub := filepath.Join(append([]string{"input"}, parts[len(parts)-up:]...)...)
	copyFile := func(src, dst string) error {
		data, err := os.ReadFile(src)
		if err != nil {
			return usageErr(err)
		}
		if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
			return err
		}
		return atomicfile.Write(dst, data)
	}
	rxn := filepath.Join(sub, filepath.Base(path))
	if err := copyFile(path, filepath.Join(dir, rxn)); err != nil {
		return "", err
	}
	for _, r := range rel {
		if err := copyFile(filepath.Join(filepath.Dir(path), r), filepath.Join(dir, sub, r)); err != nil {
			return "", err
		}
	}
	return rxn, nil
}

// planReactionJob reads the reaction file of a plan at its level.
func planReactionJob(p *planFile, threads int, stderr io.Writer) (*reactionJob, error) {
	f := &reactionFlags{temperature: 298.15, pressureBar: 1, storeDir: p.Store}
	return prepareReaction(stderr, p.path(p.Input), p.Level.flags(threads), f)
}

// settleWorkDir is where a settle run keeps its finished work until its
// result is stored: beside the store's entries, under its key, so that
// any later run of the same structure and level continues from it.
func settleWorkDir(st *settle.Store, s *setup, opts settle.Options) string {
	return filepath.Join(st.Dir(), "work", settleKey(s, opts))
}

// settleKey is the store key of settling s with opts.
func settleKey(s *setup, opts settle.Options) string {
	return settle.Key(s.mol, settleLevel(s), opts)
}

// planReaction writes one task per structure of the reaction file.
func planReaction(cmd *cobra.Command, path string, lf *levelFlags, f *reactionFlags) error {
	if err := f.batch.check(); err != nil {
		return err
	}
	switch {
	case f.noStore:
		return usageErr(errors.New("--no-store does not apply with --plan: the tasks leave their results in a store (default DIR/store)"))
	case f.out != "" || f.asJSON:
		return usageErr(fmt.Errorf("--out and --json do not apply with --plan: give them to 'poise reaction --assemble %s'", f.plan))
	}
	// Check everything before writing anything.
	job, err := prepareReaction(cmd.ErrOrStderr(), path, lf, &reactionFlags{temperature: f.temperature, pressureBar: f.pressureBar, noStore: true})
	if err != nil {
		return err
	}
	store := f.storeDir
	if store == "" {
		store = filepath.Join(f.plan, "store")
	}
	if store, err = filepath.Abs(store); err != nil {
		return err
	}
	sum, err := fileSHA256(path)
	if err != nil {
		return usageErr(err)
	}
	p := &planFile{Format: planFormat, Version: planVersion, Kind: planKindR, ProgramVersion: version,
		Created: time.Now().UTC().Format(time.RFC3339), Source: path, InputSHA256: sum,
		Level: levelOf(lf), ThreadsPerTask: lf.threads, Store: store, dir: f.plan}
	for i, s := range job.structs {
		p.Tasks = append(p.Tasks, planTask{Index: i, Species: s.species, File: s.file,
			Label: fmt.Sprintf("settle %s (%s)", s.species, s.file)})
	}
	// The input's place in the plan depends only on the file, so a plan
	// made again compares equal.
	tmp, err := os.MkdirTemp("", "poise-plan-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	if p.Input, err = copyReactionInputs(path, job, tmp); err != nil {
		return err
	}
	existing, err := checkPlanDir(p)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(f.plan, 0o755); err != nil {
		return usageErr(fmt.Errorf("--plan: %w", err))
	}
	if !existing {
		if _, err := copyReactionInputs(path, job, f.plan); err != nil {
			return err
		}
	}
	// The copy must read as the original did.
	if _, err := planReactionJob(p, lf.threads, io.Discard); err != nil {
		return fmt.Errorf("the copied reaction file in %s: %w", f.plan, err)
	}
	if err := writePlanFiles(p); err != nil {
		return err
	}
	all := make([]int, len(p.Tasks))
	for i := range all {
		all[i] = i
	}
	scripts, err := writeBatchScripts(p, "submit", all, &f.batch)
	if err != nil {
		return err
	}
	out := cmd.OutOrStdout()
	fmt.Fprintf(out, "plan %s: %d structure(s) of %s to settle at %s, one task each, %d thread(s) per task; results store %s\n",
		p.dir, len(p.Tasks), path, job.structs[0].setup.label(), p.ThreadsPerTask, store)
	printSubmit(out, p, scripts, "the plan")
	fmt.Fprintf(out, "then: poise reaction --assemble %s\n", shellQuote(p.dir))
	return nil
}

// runReactionTask settles one structure of a reaction plan into the store.
func runReactionTask(ctx context.Context, p *planFile, t planTask, threads int, log io.Writer) (bool, error) {
	job, err := planReactionJob(p, threads, io.Discard)
	if err != nil {
		return false, err
	}
	if len(job.structs) != len(p.Tasks) {
		return false, fmt.Errorf("the reaction file of the plan has %d structures, the plan %d tasks", len(job.structs), len(p.Tasks))
	}
	s := job.structs[t.Index]
	if s.species != t.Species || s.file != t.File {
		return false, fmt.Errorf("structure %d of the reaction file is %s (%s), the task says %s (%s)", t.Index, s.species, s.file, t.Species, t.File)
	}
	if _, ok := job.opts.Store.Get(settleKey(s.setup, job.opts)); ok {
		return false, nil
	}
	opts := job.opts
	opts.Log = func(line string) { fmt.Fprintf(log, "  %s: %s\n", t.Species, line) }
	opts.WorkDir = settleWorkDir(opts.Store, s.setup, opts)
	res, err := settle.Run(ctx, s.setup.mol, settleLevel(s.setup), opts)
	if err != nil {
		return false, err
	}
	settle.RemoveWork(opts.WorkDir)
	if !res.Summary.Minimum() {
		fmt.Fprintf(log, "poise: warning: %s (%s): %s\n", s.species, s.file, verdictLine(res.Summary))
	}
	return true, nil
}

// assembleReaction reports the reactions of a finished reaction plan.
func assembleReaction(cmd *cobra.Command, lf *levelFlags, f *reactionFlags) error {
	if err := f.batch.check(); err != nil {
		return err
	}
	for _, name := range []string{"method", "basis", "charge", "multiplicity", "cartesian", "spherical", "unrestricted", "grid", "dispersion", "fit", "max-iterations", "store", "no-store", "plan"} {
		if cmd.Flags().Changed(name) {
			return usageErr(fmt.Errorf("--%s does not apply with --assemble: the plan in %s fixes it", name, f.assemble))
		}
	}
	p, err := readPlan(f.assemble)
	if err != nil {
		return err
	}
	if p.Kind != planKindR {
		return usageErr(fmt.Errorf("%s is a %s plan: assemble it with 'poise %s --assemble %s'", p.dir, p.Kind, p.Kind, p.dir))
	}
	st, err := statusOf(p)
	if err != nil {
		return err
	}
	if len(st.missing()) > 0 {
		return incompletePlan(cmd, p, st, &f.batch)
	}
	l := p.Level.flags(lf.threads)
	rf := *f
	rf.storeDir = p.Store
	job, err := prepareReaction(cmd.ErrOrStderr(), p.path(p.Input), l, &rf)
	if err != nil {
		return err
	}
	return evaluateReaction(cmd, p.Source, l, &rf, job)
}
