package main

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync/atomic"
	"time"

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/xc"
	"poise/gradient"
	"poise/settle"
)

// memoryBudget is the --memory budget of every run (the CLI's default).
const memoryBudget = 2 << 30

// alkaneSizes are the chain lengths n of CnH2n+2 whose Fock build is timed.
var alkaneSizes = []int{4, 6, 8, 12, 16}

// alkaneBuilds is the number of Fock builds timed per alkane (in
// interleaved rounds); the fastest counts.
const alkaneBuilds = 3

// goal is the target of a workload: Value at most (or at least) Limit.
type goal struct {
	Limit  float64 `json:"limit"`
	AtMost bool    `json:"at_most"`
	Unit   string  `json:"unit"` // "s" or "" (a ratio or an exponent)
}

func (g goal) met(v float64) bool {
	if g.AtMost {
		return v <= g.Limit
	}
	return v >= g.Limit
}

func (g goal) String() string {
	op := "≥"
	if g.AtMost {
		op = "≤"
	}
	if g.Unit == "" {
		return fmt.Sprintf("%s %g", op, g.Limit)
	}
	return fmt.Sprintf("%s %g %s", op, g.Limit, g.Unit)
}

// measurement is what one run of a workload reports.
type measurement struct {
	Workload      string  `json:"workload"`
	WallSeconds   float64 `json:"wall_seconds"`
	Evaluations   int     `json:"evaluations"`
	SCFIterations int     `json:"scf_iterations"`
	// Value is the quantity compared with the goal: wall seconds, a ratio
	// or a fitted exponent.
	Value  float64 `json:"value"`
	Detail string  `json:"detail,omitempty"`
	// PeakRSSBytes is the peak resident memory of the run's process
	// (filled in by the parent).
	PeakRSSBytes int64 `json:"peak_rss_bytes"`
}

// env is what a workload runs with.
type env struct {
	threads   int
	molecules string // directory of the input XYZ files
	fit       bool   // density fitting (RI-JK, def2-universal-JKFIT)
}

// workload is one benchmark.
type workload struct {
	name  string
	what  string
	goal  goal
	cheap bool // in the default set
	run   func(ctx context.Context, e env) (measurement, error)
}

// workloads are all benchmarks, in the order they run.
var workloads = []workload{
	{name: "water-settle", what: "water B3LYP/6-31G* settle (relax, modes, thermochemistry)", goal: goal{2, true, "s"}, cheap: true,
		run: func(ctx context.Context, e env) (measurement, error) {
			return settleWorkload(ctx, e, "water.xyz", e.threads)
		}},
	{name: "benzene-energy", what: "benzene B3LYP/6-31G* energy", goal: goal{5, true, "s"}, cheap: true,
		run: func(ctx context.Context, e env) (measurement, error) {
			return energyWorkload(ctx, e, "benzene.xyz", "b3lyp")
		}},
	{name: "gradient-ratio", what: "benzene B3LYP/6-31G*: gradient step ÷ SCF energy", goal: goal{2, true, ""}, cheap: true,
		run: func(ctx context.Context, e env) (measurement, error) {
			return gradientRatio(ctx, e, "benzene.xyz", "b3lyp")
		}},
	{name: "gradient-ratio-hf", what: "benzene HF/6-31G*: gradient step ÷ SCF energy", goal: goal{1.5, true, ""}, cheap: true,
		run: func(ctx context.Context, e env) (measurement, error) {
			return gradientRatio(ctx, e, "benzene.xyz", "hf")
		}},
	{name: "alkane-exponent", what: "HF/6-31G* Fock build on CnH2n+2, n = 4…16: exponent of t ∝ N_bf^k", goal: goal{2.5, true, ""}, cheap: true,
		run: alkaneExponent},
	{name: "benzene-settle", what: "benzene B3LYP/6-31G* settle", goal: goal{180, true, "s"},
		run: func(ctx context.Context, e env) (measurement, error) {
			return settleWorkload(ctx, e, "benzene.xyz", e.threads)
		}},
	{name: "thread-speedup", what: "benzene B3LYP/6-31G* settle: wall with 1 thread ÷ wall with 2", goal: goal{1.8, false, ""},
		run: threadSpeedup},
	{name: "aspirin-settle", what: "aspirin (21 atoms) B3LYP/6-31G* settle (stretch goal)", goal: goal{1800, true, "s"},
		run: func(ctx context.Context, e env) (measurement, error) {
			return settleWorkload(ctx, e, "aspirin.xyz", e.threads)
		}},
	// The same workloads with density fitting (--fit jk): RI-JK in
	// def2-universal-JKFIT.
	{name: "benzene-energy-fit", what: "benzene B3LYP/6-31G* energy, RI-JK (--fit jk)", goal: goal{5, true, "s"},
		run: func(ctx context.Context, e env) (measurement, error) {
			e.fit = true
			return energyWorkload(ctx, e, "benzene.xyz", "b3lyp")
		}},
	{name: "benzene-settle-fit", what: "benzene B3LYP/6-31G* settle, RI-JK (--fit jk)", goal: goal{180, true, "s"},
		run: func(ctx context.Context, e env) (measurement, error) {
			e.fit = true
			return settleWorkload(ctx, e, "benzene.xyz", e.threads)
		}},
	{name: "aspirin-settle-fit", what: "aspirin (21 atoms) B3LYP/6-31G* settle, RI-JK (--fit jk; stretch goal)", goal: goal{1800, true, "s"},
		run: func(ctx context.Context, e env) (measurement, error) {
			e.fit = true
			return settleWorkload(ctx, e, "aspirin.xyz", e.threads)
		}},
}

// findWorkload returns the workload of that name.
func findWorkload(name string) (workload, bool) {
	for _, w := range workloads {
		if w.name == name {
			return w, true
		}
	}
	return workload{}, false
}

// parseWorkloads reads a comma-separated list of workload names (spaces
// around names allowed, repeats dropped) and returns them in the order
// given. An empty list means the cheap set, or every workload with all.
func parseWorkloads(list string, all bool) ([]workload, error) {
	if strings.TrimSpace(list) == "" {
		var out []workload
		for _, w := range workloads {
			if all || w.cheap {
				out = append(out, w)
			}
		}
		return out, nil
	}
	if all {
		return nil, errors.New("--workloads and --all exclude each other: give one")
	}
	var out []workload
	seen := map[string]bool{}
	for _, f := range strings.Split(list, ",") {
		name := strings.ToLower(strings.TrimSpace(f))
		if name == "" {
			return nil, fmt.Errorf("--workloads %q: empty name between commas", list)
		}
		w, ok := findWorkload(name)
		if !ok {
			return nil, fmt.Errorf("--workloads: unknown workload %q; known: %s", name, strings.Join(workloadNames(), ", "))
		}
		if !seen[name] {
			seen[name] = true
			out = append(out, w)
		}
	}
	return out, nil
}

func workloadNames() []string {
	var names []string
	for _, w := range workloads {
		names = append(names, w.name)
	}
	return names
}

// readMolecule reads a closed-shell neutral molecule from the molecule
// directory.
func readMolecule(e env, file string) (*molecule.Molecule, error) {
	m, err := molecule.ReadXYZFile(filepath.Join(e.molecules, file))
	if err != nil {
		return nil, fmt.Errorf("%w (run from the repository root or give --molecules DIR)", err)
	}
	if err := m.SetSpin(0, 0); err != nil {
		return nil, err
	}
	return m, nil
}

// level is method/6-31G* with the CLI's defaults, density fitted with
// def2-universal-JKFIT when e.fit.
func level(method string, e env, threads int) (settle.Level, error) {
	set, err := basis.Load("6-31g*")
	if err != nil {
		return settle.Level{}, err
	}
	fn, err := xc.Lookup(method)
	if err != nil {
		return settle.Level{}, err
	}
	l := settle.Level{Basis: set, Convention: basis.Default, Method: fn,
		SCF: scf.Options{Threads: threads, MemoryBytes: memoryBudget}}
	if e.fit {
		if l.Fit, err = basis.Load("def2-universal-jkfit"); err != nil {
			return settle.Level{}, err
		}
	}
	return l, nil
}

// countingSurface counts the SCF iterations of every evaluation.
type countingSurface struct {
	gradient.Surface
	iters *atomic.Int64
}

// AxisOperationsExact forwards the wrapped surface's answer (see
// gradient.AxisSymmetric), so that Hessians use the same symmetry as
// without the wrapper.
func (c countingSurface) AxisOperationsExact() bool {
	as, ok := c.Surface.(gradient.AxisSymmetric)
	return ok && as.AxisOperationsExact()
}

func (c countingSurface) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	err := c.Surface.Evaluate(ctx, x, req, out)
	c.iters.Add(int64(out.SCFIterations))
	return err
}

// newSurface is the SCF surface of mol at lvl, as settle builds it.
func newSurface(mol *molecule.Molecule, l settle.Level, iters *atomic.Int64) (gradient.Surface, error) {
	o := l.SCF
	o.XC, o.XCStart, o.Guess, o.Progress = nil, nil, nil, nil
	s, err := gradient.NewSCFSurface(mol, gradient.Config{Basis: l.Basis, Convention: l.Convention, Method: l.Method,
		GridLevel: l.GridLevel, SCF: o, Dispersion: l.Dispersion, Fit: l.Fit})
	if err != nil {
		return nil, err
	}
	return countingSurface{Surface: s, iters: iters}, nil
}

// settleWorkload settles the molecule at B3LYP/6-31G* without the results
// store.
func settleWorkload(ctx context.Context, e env, file string, threads int) (measurement, error) {
	mol, err := readMolecule(e, file)
	if err != nil {
		return measurement{}, err
	}
	lvl, err := level("b3lyp", e, threads)
	if err != nil {
		return measurement{}, err
	}
	var iters atomic.Int64
	opts := settle.DefaultOptions()
	opts.NewSurface = func(m *molecule.Molecule, l settle.Level) (gradient.Surface, error) { return newSurface(m, l, &iters) }
	start := time.Now()
	res, err := settle.Run(ctx, mol, lvl, opts)
	wall := time.Since(start).Seconds()
	if err != nil {
		return measurement{}, fmt.Errorf("settle %s: %w", file, err)
	}
	s := res.Summary
	return measurement{WallSeconds: wall, Evaluations: s.Evaluations, SCFIterations: int(iters.Load()), Value: wall,
		Detail: fmt.Sprintf("%s, %d relaxation steps, energy %.8f Eh", s.Verdict, s.RelaxSteps, s.EnergyHartree)}, nil
}

// energyWorkload is one SCF energy from the atomic guess.
func energyWorkload(ctx context.Context, e env, file, method string) (measurement, error) {
	mol, err := readMolecule(e, file)
	if err != nil {
		return measurement{}, err
	}
	lvl, err := level(method, e, e.threads)
	if err != nil {
		return measurement{}, err
	}
	var iters atomic.Int64
	start := time.Now()
	s, err := newSurface(mol, lvl, &iters)
	if err != nil {
		return measurement{}, err
	}
	var p gradient.Point
	if err := s.Evaluate(ctx, gradient.Coordinates(mol), gradient.Request{}, &p); err != nil {
		return measurement{}, err
	}
	wall := time.Since(start).Seconds()
	return measurement{WallSeconds: wall, Evaluations: 1, SCFIterations: int(iters.Load()), Value: wall,
		Detail: fmt.Sprintf("energy %.8f Eh", p.EnergyHartree)}, nil
}

// gradientRatio times an energy and, on a fresh surface, an energy with
// its analytic gradient (both from the atomic guess) and returns the
// gradient step ÷ SCF energy ratio of the gradients issue: the time the
// gradient adds to the converged SCF, (t(E+G) − t(E)) / t(E).
func gradientRatio(ctx context.Context, e env, file, method string) (measurement, error) {
	mol, err := readMolecule(e, file)
	if err != nil {
		return measurement{}, err
	}
	lvl, err := level(method, e, e.threads)
	if err != nil {
		return measurement{}, err
	}
	x := gradient.Coordinates(mol)
	var iters atomic.Int64
	timed := func(req gradient.Request) (float64, error) {
		s, err := newSurface(mol, lvl, &iters)
		if err != nil {
			return 0, err
		}
		start := time.Now()
		var p gradient.Point
		err = s.Evaluate(ctx, x, req, &p)
		return time.Since(start).Seconds(), err
	}
	tE, err := timed(gradient.Request{})
	if err != nil {
		return measurement{}, err
	}
	tG, err := timed(gradient.Request{Gradient: true})
	if err != nil {
		return measurement{}, err
	}
	return measurement{WallSeconds: tE + tG, Evaluations: 2, SCFIterations: int(iters.Load()), Value: (tG - tE) / tE,
		Detail: fmt.Sprintf("energy %.2f s, energy+gradient %.2f s", tE, tG)}, nil
}

// alkaneExponent times an integral-direct Coulomb and exchange build at
// HF/6-31G* for each alkane (density after one SCF iteration from the
// atomic guess) and fits t ∝ N_bf^k.
//
// Every size is built alkaneBuilds times, in interleaved rounds (each
// round builds every size once), and the fastest build of each size
// counts. On a shared machine a slow spell then slows one build of every
// size rather than all builds of one size, which would tilt the fit; the
// same number of builds per size keeps the minimum equally biased.
func alkaneExponent(ctx context.Context, e env) (measurement, error) {
	set, err := basis.Load("6-31g*")
	if err != nil {
		return measurement{}, err
	}
	type size struct {
		n, nbf int
		jk     *scf.JKBuilder
		dens   [][]float64
	}
	start := time.Now()
	iters := 0
	var sizes []size
	for _, n := range alkaneSizes {
		mol, err := molecule.ParseXYZ(fmt.Sprintf("C%dH%d", n, 2*n+2), []byte(alkaneXYZ(n)))
		if err != nil {
			return measurement{}, err
		}
		if err := mol.SetSpin(0, 0); err != nil {
			return measurement{}, err
		}
		sh, err := set.Shells(mol, basis.Default)
		if err != nil {
			return measurement{}, err
		}
		// Direct (a 1-byte budget) so that the build computes its integrals.
		opt := scf.Options{Threads: e.threads, MemoryBytes: 1, MaxIterations: 1}
		res, err := scf.Run(ctx, mol, sh, opt)
		if res == nil {
			return measurement{}, fmt.Errorf("C%dH%d: %w", n, 2*n+2, err)
		}
		iters += res.Iterations
		jk, err := scf.NewJKBuilder(ctx, sh, opt)
		if err != nil {
			return measurement{}, err
		}
		sizes = append(sizes, size{n: n, nbf: res.NBF, jk: jk, dens: res.Density})
	}
	secs := make([]float64, len(sizes))
	cpu := make([]float64, len(sizes))
	for i := range secs {
		secs[i], cpu[i] = math.Inf(1), math.Inf(1)
	}
	for rep := 0; rep < alkaneBuilds; rep++ {
		for i, sz := range sizes {
			t0, c0 := time.Now(), processCPUSeconds()
			if _, _, err := sz.jk.Build(ctx, sz.dens); err != nil {
				return measurement{}, err
			}
			secs[i] = math.Min(secs[i], time.Since(t0).Seconds())
			cpu[i] = math.Min(cpu[i], processCPUSeconds()-c0)
		}
	}
	nbf := make([]float64, len(sizes))
	var parts []string
	for i, sz := range sizes {
		nbf[i] = float64(sz.nbf)
		parts = append(parts, fmt.Sprintf("n=%d %d bf %.2fs", sz.n, sz.nbf, secs[i]))
	}
	k, _, err := fitPowerLaw(nbf, secs)
	if err != nil {
		return measurement{}, err
	}
	// The exponent of the CPU time too: less exposed to other processes
	// on a shared machine than the wall time.
	if kc, _, err := fitPowerLaw(nbf, cpu); err == nil {
		parts = append(parts, fmt.Sprintf("exponent of the CPU time %.2f", kc))
	}
	return measurement{WallSeconds: time.Since(start).Seconds(), SCFIterations: iters, Value: k,
		Detail: strings.Join(parts, "; ")}, nil
}

// threadSpeedup settles benzene with one thread and with two, each in a
// process of its own (as every workload runs), so that the second run
// does not inherit the first one's heap.
func threadSpeedup(ctx context.Context, e env) (measurement, error) {
	exe, err := os.Executable()
	if err != nil {
		return measurement{}, err
	}
	run := func(threads int) (measurement, error) {
		f := benchFlags{threads: threads, molecules: e.molecules}
		return runOnce(ctx, exe, "benzene-settle", &f, "", os.Stderr)
	}
	one, err := run(1)
	if err != nil {
		return measurement{}, err
	}
	two, err := run(2)
	if err != nil {
		return measurement{}, err
	}
	return measurement{WallSeconds: one.WallSeconds + two.WallSeconds, Evaluations: one.Evaluations + two.Evaluations,
		SCFIterations: one.SCFIterations + two.SCFIterations, Value: one.WallSeconds / two.WallSeconds,
		Detail: fmt.Sprintf("1 thread %.1f s (peak %d MiB), 2 threads %.1f s (peak %d MiB), each in its own process",
			one.WallSeconds, one.PeakRSSBytes>>20, two.WallSeconds, two.PeakRSSBytes>>20)}, nil
}

// median of a non-empty slice.
func median(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return 0.5 * (s[n/2-1] + s[n/2])
}

// minimum of a non-empty slice.
func minimum(v []float64) float64 {
	m := math.Inf(1)
	for _, x := range v {
		m = math.Min(m, x)
	}
	return m
}
