package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/spf13/cobra"

	"poise/energy/scf"
	"poise/freq"
	"poise/internal/atomicfile"
	"poise/optimize"
)

// A plan is a directory of independent tasks that a batch system (a Slurm
// job array) or 'poise task run-all' computes, and that 'poise modes
// --assemble' or 'poise reaction --assemble' turns into the usual result:
//
//	plan.json              the manifest (planFile): level of theory, settings, tasks
//	input.xyz              the structure (modes plans), or
//	input/…                the reaction file and its structures (reaction plans)
//	reference-state.json   the reference density every displaced point starts from (modes)
//	tasks/0007.json        the input of task 7; tasks/0007.failed if its last attempt failed
//	displacements/         the results of modes tasks (one file per displaced point; a
//	                       task computes the displaced points of one coordinate)
//	store/                 the results store of reaction tasks (unless --store was given)
//	submit.sbatch          the job-array script (submit-1.sbatch, … when split)
//	logs/                  the batch system's output of each task
//
// Every file is written atomically; plan.json last, so that a directory
// with a plan.json holds a whole plan.

const (
	planFormat   = "poise-plan"
	planVersion  = 1
	planName     = "plan.json"
	planKindM    = "modes"
	planKindR    = "reaction"
	stateName    = "reference-state.json"
	tasksDir     = "tasks"
	logsDir      = "logs"
	exitPlanOpen = 5 // --assemble found tasks missing or failed
)

// slurmMaxArraySize is Slurm's default MaxArraySize: array indices run
// from 0 to 1000 (Slurm documentation of slurm.conf).
const slurmMaxArraySize = 1001

// planLevel is the level of theory and SCF settings of a plan (the
// level-of-theory flags except --threads, which each task may choose).
type planLevel struct {
	Method        string `json:"method"`
	Basis         string `json:"basis"`
	Charge        int    `json:"charge"`
	Multiplicity  int    `json:"multiplicity"`
	Cartesian     bool   `json:"cartesian"`
	Spherical     bool   `json:"spherical"`
	Unrestricted  bool   `json:"unrestricted"`
	Memory        string `json:"memory"`
	MaxIterations int    `json:"max_iterations"`
	Grid          int    `json:"grid"`
	Dispersion    string `json:"dispersion"`
	// Fit is the --fit set as given; empty (omitted) for exact integrals,
	// so that plans written before density fitting existed read the same.
	Fit string `json:"fit,omitempty"`
}

func levelOf(lf *levelFlags) planLevel {
	return planLevel{Method: lf.method, Basis: lf.basisName, Charge: lf.charge, Multiplicity: lf.multiplicity,
		Cartesian: lf.cartesian, Spherical: lf.spherical, Unrestricted: lf.unrestricted, Memory: lf.memory,
		MaxIterations: lf.maxIter, Grid: lf.gridLevel, Dispersion: lf.dispersion, Fit: planFit(lf.fit)}
}

// planFit is the plan's form of a --fit value: empty for exact integrals.
func planFit(fit string) string {
	if fitOff(fit) {
		return ""
	}
	return strings.TrimSpace(fit)
}

func (l planLevel) flags(threads int) *levelFlags {
	return &levelFlags{method: l.Method, basisName: l.Basis, charge: l.Charge, multiplicity: l.Multiplicity,
		cartesian: l.Cartesian, spherical: l.Spherical, unrestricted: l.Unrestricted, threads: max(threads, 1),
		memory: l.Memory, maxIter: l.MaxIterations, gridLevel: l.Grid, dispersion: l.Dispersion, fit: l.Fit}
}

// planTask is one task: its index (from 0, as Slurm's array indices) and
// what it computes.
type planTask struct {
	Index int    `json:"index"`
	Label string `json:"label"`
	// Modes plans: the displaced coordinate (from 0) and the signed
	// numbers of steps of its points, computed in this order, each after
	// the first from the state of an earlier one (freq.ComputeDisplacements);
	// plans written before the points of a coordinate were grouped have one
	// point per task, in Steps. The geometry of the first displaced point is
	// written for the record only.
	Coordinate       int          `json:"coordinate,omitempty"`
	Steps            int          `json:"steps,omitempty"`
	StepList         []int        `json:"step_list,omitempty"`
	GeometryAngstrom [][3]float64 `json:"geometry_angstrom,omitempty"`
	// Reaction plans: the species and its structure file (as in the
	// reaction file).
	Species string `json:"species,omitempty"`
	File    string `json:"file,omitempty"`
}

// points are the displaced points of a modes task, in the order they are
// computed.
func (t *planTask) points() []freq.Displacement {
	if len(t.StepList) == 0 {
		return []freq.Displacement{{Coordinate: t.Coordinate, Steps: t.Steps}}
	}
	ds := make([]freq.Displacement, len(t.StepList))
	for i, s := range t.StepList {
		ds[i] = freq.Displacement{Coordinate: t.Coordinate, Steps: s}
	}
	return ds
}

// planFile is plan.json.
type planFile struct {
	Format         string    `json:"format"`
	Version        int       `json:"version"`
	Kind           string    `json:"kind"`
	ProgramVersion string    `json:"program_version"`
	Created        string    `json:"created"`
	Source         string    `json:"source"` // the input as given when planning
	Input          string    `json:"input"`  // its copy, relative to the plan directory
	InputSHA256    string    `json:"input_sha256"`
	Level          planLevel `json:"level"`
	ThreadsPerTask int       `json:"threads_per_task"`
	// Modes plans.
	StepBohr  float64 `json:"step_bohr,omitempty"`
	FourPoint bool    `json:"four_point,omitempty"`
	// NoSymmetry: every displaced point is a task, images included.
	NoSymmetry bool `json:"no_symmetry,omitempty"`
	// Rotations: in a molecule without symmetry, three coordinates follow
	// from the invariance under rotations and are not tasks. Plans written
	// before it existed lack the key and displace them.
	Rotations bool `json:"rotations,omitempty"`
	// Reaction plans: the results store the tasks fill.
	Store string     `json:"store,omitempty"`
	Tasks []planTask `json:"tasks"`

	dir string
}

// same reports whether two plans compute the same thing.
func (p *planFile) same(o *planFile) bool {
	a, b := *p, *o
	a.Created, b.Created, a.dir, b.dir, a.Source, b.Source = "", "", "", "", "", ""
	a.ThreadsPerTask, b.ThreadsPerTask = 0, 0
	ja, _ := json.Marshal(a)
	jb, _ := json.Marshal(b)
	return bytes.Equal(ja, jb)
}

func (p *planFile) path(elem ...string) string {
	return filepath.Join(append([]string{p.dir}, elem...)...)
}

func taskFileName(i int) string { return fmt.Sprintf("%04d.json", i) }

func failedFileName(i int) string { return fmt.Sprintf("%04d.failed", i) }

// readPlan reads DIR/plan.json.
func readPlan(dir string) (*planFile, error) {
	data, err := os.ReadFile(filepath.Join(dir, planName))
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, usageErr(fmt.Errorf("%s holds no plan (no %s): make one with 'poise modes FILE.xyz --plan %s' or 'poise reaction FILE --plan %s'", dir, planName, dir, dir))
		}
		return nil, usageErr(err)
	}
	var p planFile
	if err := json.Unmarshal(data, &p); err != nil {
		return nil, usageErr(fmt.Errorf("%s: %w", filepath.Join(dir, planName), err))
	}
	if err := p.check(); err != nil {
		return nil, usageErr(fmt.Errorf("%s: %w", filepath.Join(dir, planName), err))
	}
	p.dir = dir
	return &p, nil
}

// check validates a plan read from disk.
func (p *planFile) check() error {
	switch {
	case p.Format != planFormat:
		return fmt.Errorf("not a plan (format %q)", p.Format)
	case p.Version != planVersion:
		return fmt.Errorf("plan version %d; this poise reads version %d", p.Version, planVersion)
	case p.Kind != planKindM && p.Kind != planKindR:
		return fmt.Errorf("unknown plan kind %q", p.Kind)
	case p.Input == "" || !filepath.IsLocal(p.Input):
		return fmt.Errorf("input %q is not inside the plan directory", p.Input)
	case p.Kind == planKindR && p.Store == "":
		return errors.New("reaction plan without a results store")
	case len(p.Tasks) == 0:
		return errors.New("plan without tasks")
	}
	for i, t := range p.Tasks {
		if t.Index != i {
			return fmt.Errorf("task %d has index %d", i, t.Index)
		}
	}
	return nil
}

// writePlanFiles writes the task inputs, the manifest (last) and the log
// directory of a new plan.
func writePlanFiles(p *planFile) error {
	if err := os.MkdirAll(p.path(tasksDir), 0o755); err != nil {
		return err
	}
	if err := os.MkdirAll(p.path(logsDir), 0o755); err != nil {
		return err
	}
	for _, t := range p.Tasks {
		data, err := json.MarshalIndent(t, "", " ")
		if err != nil {
			return err
		}
		if err := atomicfile.Write(p.path(tasksDir, taskFileName(t.Index)), append(data, '\n')); err != nil {
			return err
		}
	}
	data, err := json.MarshalIndent(p, "", " ")
	if err != nil {
		return err
	}
	return atomicfile.Write(p.path(planName), append(data, '\n'))
}

// readTask reads the input of task i and checks it against the manifest.
func (p *planFile) readTask(i int) (planTask, error) {
	var t planTask
	if i < 0 || i >= len(p.Tasks) {
		return t, usageErr(fmt.Errorf("task %d: the plan in %s has tasks 0 to %d", i, p.dir, len(p.Tasks)-1))
	}
	data, err := os.ReadFile(p.path(tasksDir, taskFileName(i)))
	if err != nil {
		return t, fmt.Errorf("task %d: %w", i, err)
	}
	if err := json.Unmarshal(data, &t); err != nil {
		return t, fmt.Errorf("task %d: %s: %w", i, p.path(tasksDir, taskFileName(i)), err)
	}
	want := p.Tasks[i]
	if t.Index != want.Index || t.Label != want.Label || t.Coordinate != want.Coordinate || t.Steps != want.Steps || !slices.Equal(t.StepList, want.StepList) ||
		t.Species != want.Species || t.File != want.File {
		return t, fmt.Errorf("task %d: %s does not match %s", i, p.path(tasksDir, taskFileName(i)), planName)
	}
	return t, nil
}

// fileSHA256 is the hex SHA-256 of a file's contents (recorded in a plan,
// so that planning again from an edited input is told apart).
func fileSHA256(path string) (string, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return "", err
	}
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:]), nil
}

// batchFlags are the batch-script options of --plan and --assemble.
type batchFlags struct {
	maxArray int
	options  []string
}

func (b *batchFlags) register(cmd *cobra.Command) {
	fl := cmd.Flags()
	fl.IntVar(&b.maxArray, "max-array", slurmMaxArraySize, "largest job array the cluster accepts (its MaxArraySize); bigger plans are split into several arrays")
	fl.StringArrayVar(&b.options, "sbatch", nil, "extra batch option for the job-array script, repeatable (e.g. --sbatch=--partition=long --sbatch=--time=2:00:00)")
}

func (b *batchFlags) check() error {
	if b.maxArray < 1 {
		return usageErr(fmt.Errorf("--max-array %d: give the cluster's MaxArraySize (Slurm's default is %d)", b.maxArray, slurmMaxArraySize))
	}
	for _, o := range b.options {
		if !strings.HasPrefix(o, "-") || strings.ContainsAny(o, "\n\r") {
			return usageErr(fmt.Errorf("--sbatch %q: give one sbatch option such as --partition=long", o))
		}
	}
	return nil
}

// poiseExecutable is the program the batch scripts call: this binary, or
// "poise" from PATH when this is a temporary 'go run' build.
func poiseExecutable() (path string, temporary bool) {
	exe, err := os.Executable()
	if err != nil {
		return "poise", true
	}
	if p, err := filepath.EvalSymlinks(exe); err == nil {
		exe = p
	}
	if strings.Contains(exe, string(filepath.Separator)+"go-build") {
		return "poise", true
	}
	return exe, false
}

// jobMemoryMiB is the memory a task asks the batch system for: the
// --memory budget plus the overhead beyond it (Go runtime, grids, the
// binary), a quarter of the budget and at least 512 MiB.
func jobMemoryMiB(memory string) (int64, error) {
	b, err := parseMemory(memory)
	if err != nil {
		return 0, err
	}
	mib := b >> 20
	return mib + max(512, mib/4), nil
}

// writeBatchScripts writes job-array scripts that run the given tasks:
// name.sbatch, or name-1.sbatch, name-2.sbatch, … when there are more than
// maxArray. It returns their paths.
func writeBatchScripts(p *planFile, name string, tasks []int, bf *batchFlags) ([]string, error) {
	absDir, err := filepath.Abs(p.dir)
	if err != nil {
		return nil, err
	}
	exe, _ := poiseExecutable()
	memMiB, err := jobMemoryMiB(p.Level.Memory)
	if err != nil {
		return nil, usageErr(err)
	}
	var chunks [][]int
	for len(tasks) > 0 {
		k := min(len(tasks), bf.maxArray)
		chunks = append(chunks, tasks[:k])
		tasks = tasks[k:]
	}
	// Remove the scripts of an earlier, differently split call.
	for _, pattern := range []string{name + ".sbatch", name + "-*.sbatch"} {
		old, _ := filepath.Glob(p.path(pattern))
		for _, o := range old {
			os.Remove(o)
		}
	}
	var paths []string
	for c, chunk := range chunks {
		file := name + ".sbatch"
		if len(chunks) > 1 {
			file = fmt.Sprintf("%s-%d.sbatch", name, c+1)
		}
		var b strings.Builder
		fmt.Fprintf(&b, "#!/bin/bash\n")
		fmt.Fprintf(&b, "# poise %s plan of %s: %d task(s)", p.Kind, p.Source, len(chunk))
		if len(chunks) > 1 {
			fmt.Fprintf(&b, ", array %d of %d", c+1, len(chunks))
		}
		fmt.Fprintf(&b, ". Submit with: sbatch %s\n", shellQuote(filepath.Join(absDir, file)))
		fmt.Fprintf(&b, "#SBATCH --job-name=poise-%s\n", strings.TrimSuffix(filepath.Base(p.Source), filepath.Ext(p.Source)))
		fmt.Fprintf(&b, "#SBATCH --array=%s\n", arraySpec(len(chunk)))
		fmt.Fprintf(&b, "#SBATCH --cpus-per-task=%d\n", p.ThreadsPerTask)
		fmt.Fprintf(&b, "#SBATCH --mem=%dM\n", memMiB)
		fmt.Fprintf(&b, "#SBATCH --output=%s\n", filepath.Join(absDir, logsDir, "task-%A_%a.out"))
		for _, o := range bf.options {
			fmt.Fprintf(&b, "#SBATCH %s\n", o)
		}
		fmt.Fprintf(&b, "set -eu\n")
		fmt.Fprintf(&b, "POISE=${POISE:-%s}\n", shellQuote(exe))
		if contiguous(chunk) {
			fmt.Fprintf(&b, "index=$((SLURM_ARRAY_TASK_ID + %d))\n", chunk[0])
		} else {
			ids := make([]string, len(chunk))
			for i, t := range chunk {
				ids[i] = strconv.Itoa(t)
			}
			fmt.Fprintf(&b, "tasks=(%s)\n", strings.Join(ids, " "))
			fmt.Fprintf(&b, "index=${tasks[$SLURM_ARRAY_TASK_ID]}\n")
		}
		fmt.Fprintf(&b, "exec \"$POISE\" task run %s --index \"$index\" --threads \"${SLURM_CPUS_PER_TASK:-%d}\"\n", shellQuote(absDir), p.ThreadsPerTask)
		path := p.path(file)
		if err := atomicfile.Write(path, []byte(b.String())); err != nil {
			return nil, err
		}
		if err := os.Chmod(path, 0o755); err != nil {
			return nil, err
		}
		paths = append(paths, path)
	}
	return paths, nil
}

func arraySpec(n int) string {
	if n == 1 {
		return "0"
	}
	return fmt.Sprintf("0-%d", n-1)
}

func contiguous(t []int) bool {
	for i := 1; i < len(t); i++ {
		if t[i] != t[i-1]+1 {
			return false
		}
	}
	return true
}

// shellQuote quotes s for bash when it needs it.
func shellQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r == '/' || r == '.' || r == '-' || r == '_' || r == '+' || r == ':' || r == ',' || r == '=' ||
			(r >= '0' && r <= '9') || (r >= 'a' && r <= 'z') || (r >= 'A' && r <= 'Z'))
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// printSubmit tells how to submit the scripts (or run the plan locally).
func printSubmit(w io.Writer, p *planFile, scripts []string, what string) {
	if _, temporary := poiseExecutable(); temporary {
		fmt.Fprintf(w, "note: the scripts call 'poise' from PATH (this is a temporary 'go run' build): install it with 'go install ./cmd/poise', or set POISE=/path/to/poise when submitting\n")
	}
	fmt.Fprintf(w, "submit %s to Slurm with:\n", what)
	for _, s := range scripts {
		fmt.Fprintf(w, "  sbatch %s\n", shellQuote(s))
	}
	fmt.Fprintf(w, "or run them on this machine with:\n  poise task run-all %s --jobs %d\n", shellQuote(p.dir), max(1, runtime.NumCPU()/max(p.ThreadsPerTask, 1)))
}

// taskStatus is the state of every task of a plan.
type taskStatus struct {
	done   []bool
	failed map[int]string // the message of the last failed attempt of unfinished tasks
}

func (s *taskStatus) missing() []int {
	var m []int
	for i, d := range s.done {
		if !d {
			m = append(m, i)
		}
	}
	return m
}

// statusOf looks at every task's result.
func statusOf(p *planFile) (*taskStatus, error) {
	st := &taskStatus{done: make([]bool, len(p.Tasks)), failed: map[int]string{}}
	switch p.Kind {
	case planKindM:
		mc, err := planModesCalc(p, 1)
		if err != nil {
			return nil, err
		}
		_, missing, err := planSavedPoints(mc)
		if err != nil {
			return nil, err
		}
		for i := range st.done {
			st.done[i] = true
		}
		idx := map[[2]int]int{}
		for _, t := range p.Tasks {
			for _, d := range t.points() {
				idx[[2]int{d.Coordinate, d.Steps}] = t.Index
			}
		}
		for _, d := range missing {
			st.done[idx[[2]int{d.Coordinate, d.Steps}]] = false
		}
	case planKindR:
		job, err := planReactionJob(p, 1, io.Discard)
		if err != nil {
			return nil, err
		}
		for i, s := range job.structs {
			_, st.done[i] = job.opts.Store.Get(settleKey(s.setup, job.opts))
		}
	}
	for i, d := range st.done {
		if d {
			continue
		}
		if data, err := os.ReadFile(p.path(tasksDir, failedFileName(i))); err == nil {
			var f taskFailure
			if json.Unmarshal(data, &f) == nil {
				st.failed[i] = f.Error
			}
		}
	}
	return st, nil
}

// taskFailure is tasks/NNNN.failed.
type taskFailure struct {
	Index   int    `json:"index"`
	Error   string `json:"error"`
	Host    string `json:"host"`
	Time    string `json:"time"`
	SlurmID string `json:"slurm_job_id,omitempty"`
}

// runTask computes task i of the plan with the given threads; computed is
// false when it was already finished.
func runTask(ctx context.Context, p *planFile, i, threads int, log io.Writer) (computed bool, err error) {
	t, err := p.readTask(i)
	if err != nil {
		return false, err
	}
	switch p.Kind {
	case planKindM:
		computed, err = runModesTask(ctx, p, t, threads)
	case planKindR:
		computed, err = runReactionTask(ctx, p, t, threads, log)
	}
	failed := p.path(tasksDir, failedFileName(i))
	if err != nil {
		if ctx.Err() == nil { // an interrupted task has not failed
			host, _ := os.Hostname()
			data, _ := json.MarshalIndent(taskFailure{Index: i, Error: err.Error(), Host: host,
				Time: time.Now().UTC().Format(time.RFC3339), SlurmID: os.Getenv("SLURM_JOB_ID")}, "", " ")
			if werr := atomicfile.Write(failed, append(data, '\n')); werr != nil {
				fmt.Fprintf(log, "poise: task %d: could not record the failure: %v\n", i, werr)
			}
		}
		return false, fmt.Errorf("task %d (%s): %w", i, t.Label, err)
	}
	os.Remove(failed)
	return computed, nil
}

func newTaskCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "task",
		Short: "run the tasks of a plan (poise modes/reaction --plan DIR)",
		Long: `A plan is a directory of independent tasks written by 'poise modes FILE.xyz --plan DIR'
(the displaced points of one coordinate of the Hessian per task) or 'poise reaction FILE --plan DIR' (one
structure's whole settle per task), with a Slurm job-array script. The script calls
'poise task run DIR --index N' for every task; 'poise task run-all DIR' runs the plan on
one machine instead; 'poise task status DIR' shows what is finished. Then
'poise modes --assemble DIR' or 'poise reaction --assemble DIR' gives the usual result.`,
	}
	cmd.AddCommand(newTaskRunCmd(), newTaskRunAllCmd(), newTaskStatusCmd())
	return cmd
}

func newTaskRunCmd() *cobra.Command {
	var index, offset, threads int
	cmd := &cobra.Command{
		Use:   "run DIR [--index N]",
		Short: "compute one task of a plan (index from --index or SLURM_ARRAY_TASK_ID)",
		Long: `Computes task N of the plan in DIR and writes its result atomically; a finished task is
not computed again (a killed or failed one is). Without --index the task is
SLURM_ARRAY_TASK_ID + --offset. Exit status 3 when the calculation does not converge
(the failure is recorded in DIR/tasks/NNNN.failed for 'poise task status').`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			p, err := readPlan(args[0])
			if err != nil {
				return err
			}
			i := index
			if !cmd.Flags().Changed("index") {
				env := os.Getenv("SLURM_ARRAY_TASK_ID")
				if env == "" {
					return usageErr(errors.New("give --index N (no SLURM_ARRAY_TASK_ID in the environment)"))
				}
				k, err := strconv.Atoi(env)
				if err != nil {
					return usageErr(fmt.Errorf("SLURM_ARRAY_TASK_ID=%q is not a number", env))
				}
				i = k + offset
			}
			if threads < 1 {
				return usageErr(fmt.Errorf("--threads %d: give at least 1", threads))
			}
			if i >= 0 && i < len(p.Tasks) {
				host, _ := os.Hostname()
				fmt.Fprintf(cmd.OutOrStdout(), "task %d (%s): started on %s with %d thread(s)\n", i, p.Tasks[i].Label, host, threads)
			}
			t0 := time.Now()
			computed, err := runTask(cmd.Context(), p, i, threads, cmd.ErrOrStderr())
			if err != nil {
				return taskExit(err)
			}
			if computed {
				fmt.Fprintf(cmd.OutOrStdout(), "task %d (%s): done in %.1f s\n", i, p.Tasks[i].Label, time.Since(t0).Seconds())
			} else {
				fmt.Fprintf(cmd.OutOrStdout(), "task %d (%s): already finished, nothing computed\n", i, p.Tasks[i].Label)
			}
			return nil
		},
	}
	fl := cmd.Flags()
	fl.IntVar(&index, "index", 0, "task index, from 0")
	fl.IntVar(&offset, "offset", 0, "added to SLURM_ARRAY_TASK_ID when --index is not given")
	fl.IntVar(&threads, "threads", runtime.NumCPU(), "number of threads")
	return cmd
}

// taskExit gives a task's error its exit status: 3 for convergence
// failures.
func taskExit(err error) error {
	var ee *exitError
	if errors.As(err, &ee) {
		return err
	}
	switch {
	case errors.Is(err, scf.ErrNotConverged):
		return convergeErr(fmt.Errorf("%w\n  try: a plan with --max-iterations raised; check the geometry, charge and multiplicity", err))
	case errors.Is(err, optimize.ErrNotConverged):
		return convergeErr(fmt.Errorf("%w\n  try: 'poise settle' on the structure with --max-steps raised, then plan with the relaxed structure", err))
	}
	return err
}

func newTaskRunAllCmd() *cobra.Command {
	var jobs, threads int
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "run-all DIR",
		Short: "compute every unfinished task of a plan on this machine",
		Long: `Runs the unfinished tasks of the plan in DIR here, --jobs at a time sharing --threads
(each job gets --threads/--jobs). Finished tasks are skipped; failed tasks are reported at
the end (exit status 3 when a calculation did not converge). Interrupted, it keeps every
finished task: run it again to continue.`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if jobs < 1 || threads < 1 {
				return usageErr(fmt.Errorf("--jobs %d --threads %d: give at least 1 of each", jobs, threads))
			}
			p, err := readPlan(args[0])
			if err != nil {
				return err
			}
			return runAll(cmd, p, jobs, threads, asJSON)
		},
	}
	fl := cmd.Flags()
	fl.IntVar(&jobs, "jobs", 1, "tasks computed at once")
	fl.IntVar(&threads, "threads", runtime.NumCPU(), "total number of threads, shared by the jobs")
	fl.BoolVar(&asJSON, "json", false, "print a JSON summary (computed, skipped and failed task indices)")
	return cmd
}

// runAllSummary is the JSON output of poise task run-all.
type runAllSummary struct {
	Tasks    int            `json:"tasks"`
	Computed []int          `json:"computed"`
	Skipped  []int          `json:"already_finished"`
	Failed   map[int]string `json:"failed"`
}

func runAll(cmd *cobra.Command, p *planFile, jobs, threads int, asJSON bool) error {
	st, err := statusOf(p)
	if err != nil {
		return err
	}
	sum := runAllSummary{Tasks: len(p.Tasks), Computed: []int{}, Skipped: []int{}, Failed: map[int]string{}}
	todo := st.missing()
	for i, d := range st.done {
		if d {
			sum.Skipped = append(sum.Skipped, i)
		}
	}
	jobs = min(jobs, max(len(todo), 1))
	progress := !asJSON && isTerminal(os.Stderr)
	ctx := cmd.Context()
	var (
		mu       sync.Mutex
		next     int
		finished = len(sum.Skipped)
		wg       sync.WaitGroup
		convFail bool
	)
	for w := 0; w < jobs; w++ {
		share := threads / jobs
		if w < threads%jobs {
			share++
		}
		share = max(share, 1)
		wg.Add(1)
		go func() {
			defer wg.Done()
			for ctx.Err() == nil {
				mu.Lock()
				if next >= len(todo) {
					mu.Unlock()
					return
				}
				i := todo[next]
				next++
				mu.Unlock()
				computed, err := runTask(ctx, p, i, share, cmd.ErrOrStderr())
				mu.Lock()
				switch {
				case err != nil && ctx.Err() == nil:
					sum.Failed[i] = err.Error()
					convFail = convFail || errors.Is(err, scf.ErrNotConverged) || errors.Is(err, optimize.ErrNotConverged)
				case err == nil && computed:
					sum.Computed = append(sum.Computed, i)
				case err == nil:
					sum.Skipped = append(sum.Skipped, i)
				}
				finished++
				if progress {
					fmt.Fprintf(os.Stderr, "\r  tasks %d/%d ", finished, len(p.Tasks))
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	if progress {
		fmt.Fprint(os.Stderr, "\r\033[K")
	}
	sort.Ints(sum.Computed)
	sort.Ints(sum.Skipped)
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("interrupted after %d of %d tasks; finished tasks are kept in %s: run the same command again to continue", finished, len(p.Tasks), p.dir)
	}
	out := cmd.OutOrStdout()
	if asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", " ")
		if err := enc.Encode(sum); err != nil {
			return err
		}
	} else {
		fmt.Fprintf(out, "%d tasks: %d computed, %d already finished, %d failed\n", len(p.Tasks), len(sum.Computed), len(sum.Skipped), len(sum.Failed))
	}
	if len(sum.Failed) > 0 {
		var ids []int
		for i := range sum.Failed {
			ids = append(ids, i)
		}
		sort.Ints(ids)
		var lines []string
		for _, i := range ids {
			lines = append(lines, "  "+sum.Failed[i])
		}
		err := fmt.Errorf("%d task(s) failed:\n%s", len(ids), strings.Join(lines, "\n"))
		if convFail {
			return convergeErr(err)
		}
		return err
	}
	next2 := "poise modes --assemble "
	if p.Kind == planKindR {
		next2 = "poise reaction --assemble "
	}
	if !asJSON {
		fmt.Fprintf(out, "next: %s%s\n", next2, shellQuote(p.dir))
	}
	return nil
}

func newTaskStatusCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "status DIR",
		Short: "show which tasks of a plan are finished, missing or failed",
		Args:  exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			p, err := readPlan(args[0])
			if err != nil {
				return err
			}
			st, err := statusOf(p)
			if err != nil {
				return err
			}
			out := cmd.OutOrStdout()
			missing := st.missing()
			fmt.Fprintf(out, "%s plan of %s in %s: %d tasks, %d finished, %d to do\n", p.Kind, p.Source, p.dir, len(p.Tasks), len(p.Tasks)-len(missing), len(missing))
			describeMissing(out, p, st)
			return nil
		},
	}
}

// describeMissing lists the unfinished tasks (failed ones with their error).
func describeMissing(w io.Writer, p *planFile, st *taskStatus) {
	for _, i := range st.missing() {
		if msg, ok := st.failed[i]; ok {
			fmt.Fprintf(w, "  task %d (%s): FAILED: %s\n", i, p.Tasks[i].Label, firstLine(msg))
		} else {
			fmt.Fprintf(w, "  task %d (%s): not finished\n", i, p.Tasks[i].Label)
		}
	}
}

func firstLine(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		return s[:i]
	}
	return s
}

// incompletePlan lists the unfinished tasks, writes a batch script for
// just those and returns the error of --assemble (exit status 5).
func incompletePlan(cmd *cobra.Command, p *planFile, st *taskStatus, bf *batchFlags) error {
	missing := st.missing()
	w := cmd.ErrOrStderr()
	fmt.Fprintf(w, "%d of %d tasks of the plan in %s are not finished:\n", len(missing), len(p.Tasks), p.dir)
	describeMissing(w, p, st)
	scripts, err := writeBatchScripts(p, "resubmit", missing, bf)
	if err != nil {
		return err
	}
	printSubmit(w, p, scripts, "just these tasks")
	return &exitError{code: exitPlanOpen, err: fmt.Errorf("plan %s incomplete: %d task(s) to do; assemble again when they have finished", p.dir, len(missing))}
}

// checkPlanDir refuses to write a plan over another one: a directory with
// the same plan is reused (nothing finished is lost), anything else is a
// user mistake.
func checkPlanDir(p *planFile) (existing bool, err error) {
	old, err := readPlan(p.dir)
	if err != nil {
		if _, serr := os.Stat(filepath.Join(p.dir, planName)); errors.Is(serr, os.ErrNotExist) {
			return false, nil
		}
		return false, err
	}
	if !old.same(p) {
		return false, usageErr(fmt.Errorf("%s holds another plan (of %s): choose another directory or remove it", p.dir, old.Source))
	}
	return true, nil
}
