package main

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"poise/freq"
)

// TestMain lets the test binary stand in for the poise program, so that
// tests can run it as a separate process (to kill it, or to hand it to a
// batch system) without building it.
func TestMain(m *testing.M) {
	if os.Getenv("POISE_TEST_AS_PROGRAM") == "1" {
		main()
		return
	}
	os.Exit(m.Run())
}

// poiseProcess is a command that runs this test binary as poise.
func poiseProcess(t *testing.T, args ...string) *exec.Cmd {
	t.Helper()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	c := exec.Command(exe, args...)
	c.Env = append(os.Environ(), "POISE_TEST_AS_PROGRAM=1")
	return c
}

// modesJSON runs poise with args (which must print the modes JSON).
func modesJSON(t *testing.T, args ...string) *freq.File {
	t.Helper()
	out, errOut, code, _ := execCLI(t, false, args...)
	if code != exitOK {
		t.Fatalf("poise %s: exit %d\n%s\n%s", strings.Join(args, " "), code, out, errOut)
	}
	var f freq.File
	if err := json.Unmarshal([]byte(out), &f); err != nil {
		t.Fatalf("poise %s: %v\n%s", strings.Join(args, " "), err, out)
	}
	return &f
}

// sameModes compares an assembled result with the single-process one:
// frequencies to 0.01 cm⁻¹, Hessian to 1e-7 Eh/bohr² (the issue's
// tolerances; the same displacements and SCF settings make them equal).
func sameModes(t *testing.T, got, want *freq.File) { sameModesWithin(t, got, want, 1e-7) }

// sameModesWithin is sameModes with the Hessians compared to tolH
// (Eh/bohr²).
func sameModesWithin(t *testing.T, got, want *freq.File, tolH float64) {
	t.Helper()
	if len(got.FrequenciesCm1) != len(want.FrequenciesCm1) || len(got.HessianAU) != len(want.HessianAU) {
		t.Fatalf("assembled: %d modes, %d Hessian rows; single process %d, %d", len(got.FrequenciesCm1), len(got.HessianAU), len(want.FrequenciesCm1), len(want.HessianAU))
	}
	for i := range want.FrequenciesCm1 {
		if d := math.Abs(got.FrequenciesCm1[i] - want.FrequenciesCm1[i]); d > 0.01 {
			t.Errorf("mode %d: assembled %.4f cm⁻¹, single process %.4f", i+1, got.FrequenciesCm1[i], want.FrequenciesCm1[i])
		}
	}
	worst := 0.0
	for i := range want.HessianAU {
		for j := range want.HessianAU[i] {
			worst = math.Max(worst, math.Abs(got.HessianAU[i][j]-want.HessianAU[i][j]))
		}
	}
	if worst > tolH {
		t.Errorf("Hessians differ by up to %.2e Eh/bohr²", worst)
	}
	t.Logf("assembled vs single process: Hessian max |ΔH| %.1e Eh/bohr²", worst)
}

// A modes plan run on this machine (run-all) assembles into the result of
// one ordinary run; the plan directory holds the inputs, the manifest and
// a job-array script for Slurm.
func TestModesPlanLocal(t *testing.T) {
	level := []string{"--method", "hf", "--basis", "3-21g"}
	dir := filepath.Join(t.TempDir(), "plan")
	out, errOut, code, _ := execCLI(t, false, append([]string{"modes", modesWaterXYZ, "--plan", dir, "--threads", "1",
		"--max-array", "2", "--sbatch=--partition=short"}, level...)...)
	if code != exitOK {
		t.Fatalf("plan: exit %d\n%s\n%s", code, out, errOut)
	}
	if !strings.Contains(out, "sbatch ") || !strings.Contains(out, "poise modes --assemble") {
		t.Errorf("plan output lacks the commands:\n%s", out)
	}
	// Water in the yz plane, C2v: 5 displaced points (one H: +x, ±y, ±z;
	// the other H by symmetry, O by translational invariance) in 3 tasks
	// (x; y; z), at most 2 per array: two scripts.
	scripts, _ := filepath.Glob(filepath.Join(dir, "submit-*.sbatch"))
	if len(scripts) != 2 {
		t.Fatalf("%d scripts for 3 tasks of at most 2: %v", len(scripts), scripts)
	}
	s2, _ := os.ReadFile(filepath.Join(dir, "submit-2.sbatch"))
	for _, want := range []string{"#SBATCH --array=0\n", "#SBATCH --cpus-per-task=1\n", "#SBATCH --partition=short\n", "index=$((SLURM_ARRAY_TASK_ID + 2))", "task run "} {
		if !strings.Contains(string(s2), want) {
			t.Errorf("submit-2.sbatch lacks %q:\n%s", want, s2)
		}
	}
	for _, f := range []string{"plan.json", "input.xyz", "reference-state.json", "tasks/0000.json", "tasks/0002.json", "displacements/reference.json"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("plan directory: %v", err)
		}
	}
	// Assembling before the tasks: every task is listed, exit status 5.
	_, errOut, code, _ = execCLI(t, false, "modes", "--assemble", dir)
	if code != exitPlanOpen || !strings.Contains(errOut, "3 of 3 tasks") {
		t.Errorf("early assemble: exit %d\n%s", code, errOut)
	}
	out, errOut, code, _ = execCLI(t, false, "task", "run-all", dir, "--jobs", "2", "--threads", "2", "--json")
	if code != exitOK {
		t.Fatalf("run-all: exit %d\n%s\n%s", code, out, errOut)
	}
	var sum runAllSummary
	if err := json.Unmarshal([]byte(out), &sum); err != nil || len(sum.Computed) != 3 || len(sum.Skipped) != 0 {
		t.Fatalf("run-all: %+v, %v", sum, err)
	}
	got := modesJSON(t, "modes", "--assemble", dir, "--json")
	if c := got.Computation; c == nil || c.Gradients != 0 || c.Reused != 5 || c.SymmetryOperations != 4 {
		t.Errorf("assembling computed something, or without symmetry: %+v", got.Computation)
	}
	want := modesJSON(t, append([]string{"modes", modesWaterXYZ, "--threads", "2", "--out", t.TempDir(), "--json"}, level...)...)
	sameModes(t, got, want)
	// Every point computed: the same frequencies. The oxygen's columns,
	// minus the sum of the hydrogens', differ from its own central
	// differences by their truncation error, h²/6·∂⁴E/∂x⁴ ≈ 1e-6 Eh/bohr²
	// with h = 0.0025 bohr (HF has the symmetry and the translational
	// invariance exactly).
	full := modesJSON(t, append([]string{"modes", modesWaterXYZ, "--threads", "2", "--out", t.TempDir(), "--json", "--no-symmetry"}, level...)...)
	if c := full.Computation; c == nil || c.Displacements != 18 {
		t.Errorf("--no-symmetry: %+v", full.Computation)
	}
	sameModesWithin(t, got, full, 1e-5)
	if _, err := os.Stat(filepath.Join(dir, "water.modes.json")); err != nil {
		t.Errorf("assemble writes into the plan directory: %v", err)
	}
	// Planning again with the same command reuses the plan; another level
	// is refused.
	if _, e, code, _ := execCLI(t, false, append([]string{"modes", modesWaterXYZ, "--plan", dir, "--threads", "1"}, level...)...); code != exitOK {
		t.Errorf("same plan again: exit %d: %s", code, e)
	}
	if _, e, code, _ := execCLI(t, false, "modes", modesWaterXYZ, "--plan", dir, "--method", "hf", "--basis", "sto-3g"); code != exitUsage || !strings.Contains(e, "another plan") {
		t.Errorf("other plan in the same directory: exit %d: %s", code, e)
	}
}

// One task killed (kill -9) in the middle of its calculation: assembling
// names it, a script for just that task is written, and running the plan
// again computes that task only.
func TestModesPlanKilledTask(t *testing.T) {
	if testing.Short() {
		t.Skip("B3LYP/3-21G water: 19 gradients")
	}
	// B3LYP: each point takes long enough (the grid) to be killed midway;
	// every coordinate a task (--no-symmetry), 9 of them with 2 points each.
	level := []string{"--method", "b3lyp", "--basis", "3-21g", "--no-symmetry"}
	dir := filepath.Join(t.TempDir(), "plan")
	if _, e, code, _ := execCLI(t, false, append([]string{"modes", modesWaterXYZ, "--plan", dir, "--threads", "1"}, level...)...); code != exitOK {
		t.Fatalf("plan: %s", e)
	}
	const victim = 7
	// Every other task, one at a time as a batch system would.
	for i := 0; i < 9; i++ {
		if i == victim {
			continue
		}
		if out, e, code, _ := execCLI(t, false, "task", "run", dir, "--index", strconv.Itoa(i), "--threads", "2"); code != exitOK {
			t.Fatalf("task %d: exit %d\n%s\n%s", i, code, out, e)
		}
	}
	// The victim runs in its own process and is killed once it has started.
	p := poiseProcess(t, "task", "run", dir, "--index", strconv.Itoa(victim), "--threads", "1")
	stdout, err := p.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := p.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(stdout).ReadString('\n')
	if err != nil || !strings.Contains(line, "started") {
		t.Fatalf("task %d: first line %q, %v", victim, line, err)
	}
	time.Sleep(20 * time.Millisecond)
	if err := p.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	p.Wait()

	_, errOut, code, _ := execCLI(t, false, "modes", "--assemble", dir)
	if code != exitPlanOpen || !strings.Contains(errOut, "1 of 9 tasks") || !strings.Contains(errOut, "task 7 (") {
		t.Fatalf("assemble after the kill: exit %d\n%s", code, errOut)
	}
	script, err := os.ReadFile(filepath.Join(dir, "resubmit.sbatch"))
	if err != nil || !strings.Contains(string(script), "#SBATCH --array=0\n") || !strings.Contains(string(script), "index=$((SLURM_ARRAY_TASK_ID + 7))") {
		t.Errorf("resubmit script for task 7 only:\n%s (%v)", script, err)
	}
	// Running the resubmit script's task list locally: task 7 only.
	out, e, code, _ := execCLI(t, false, "task", "run-all", dir, "--json")
	if code != exitOK {
		t.Fatalf("run-all: %s", e)
	}
	var sum runAllSummary
	if err := json.Unmarshal([]byte(out), &sum); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(sum.Computed, []int{victim}) || len(sum.Skipped) != 8 {
		t.Errorf("after the kill: computed %v (want [7]), %d skipped (want 8)", sum.Computed, len(sum.Skipped))
	}
	leftovers, _ := filepath.Glob(filepath.Join(dir, "displacements", ".tmp-*"))
	if len(leftovers) != 0 {
		t.Errorf("partial files left: %v", leftovers)
	}
	if _, e, code, _ := execCLI(t, false, "modes", "--assemble", dir); code != exitOK {
		t.Errorf("assemble: exit %d: %s", code, e)
	}
}

// A reaction plan (structures referenced from another directory, so the
// copy must keep their relative places) runs locally and assembles into
// the report of an ordinary run, which then finds every structure in the
// plan's store.
func TestReactionPlan(t *testing.T) {
	if testing.Short() {
		t.Skip("settles three molecules at HF/STO-3G")
	}
	root := t.TempDir()
	for _, name := range []string{"ethylene.xyz", "hydrogen.xyz", "ethane.xyz"} {
		data, err := os.ReadFile(filepath.Join(demoDir, name))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.MkdirAll(filepath.Join(root, "structures"), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(root, "structures", name), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.MkdirAll(filepath.Join(root, "work"), 0o755); err != nil {
		t.Fatal(err)
	}
	rxn := filepath.Join(root, "work", "h.reaction")
	text := "species ethylene ../structures/ethylene.xyz\nspecies hydrogen ../structures/hydrogen.xyz\nspecies ethane ../structures/ethane.xyz\n" +
		"reaction hydrogenation: ethylene + hydrogen -> ethane\n"
	if err := os.WriteFile(rxn, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	level := []string{"--method", "hf", "--basis", "sto-3g"}
	dir := filepath.Join(t.TempDir(), "plan")
	out, e, code, _ := execCLI(t, false, append([]string{"reaction", rxn, "--plan", dir, "--threads", "1"}, level...)...)
	if code != exitOK {
		t.Fatalf("plan: exit %d\n%s\n%s", code, out, e)
	}
	if _, err := os.Stat(filepath.Join(dir, "input", "work", "h.reaction")); err != nil {
		t.Errorf("reaction file copy: %v", err)
	}
	if _, e, code, _ := execCLI(t, false, "reaction", "--assemble", dir); code != exitPlanOpen || !strings.Contains(e, "3 of 3 tasks") {
		t.Errorf("early assemble: exit %d\n%s", code, e)
	}
	if out, e, code, _ := execCLI(t, false, "task", "run-all", dir, "--jobs", "2", "--threads", "2"); code != exitOK {
		t.Fatalf("run-all: exit %d\n%s\n%s", code, out, e)
	}
	got := reactionJSON(t, "reaction", "--assemble", dir, "--json")
	want := reactionJSON(t, append([]string{"reaction", rxn, "--store", filepath.Join(dir, "store"), "--threads", "2", "--json"}, level...)...)
	for _, s := range want["species"].([]any) {
		for _, c := range s.(map[string]any)["conformers"].([]any) {
			if c.(map[string]any)["reused_from_store"] != true {
				t.Errorf("ordinary run recomputed %v: the plan's store entries are not those it wants", c)
			}
		}
	}
	g, w := got["reactions"].([]any)[0].(map[string]any), want["reactions"].([]any)[0].(map[string]any)
	for _, k := range []string{"delta_e_kj_per_mol", "delta_h_kj_per_mol", "delta_g_kj_per_mol"} {
		if g[k] != w[k] {
			t.Errorf("%s: assembled %v, ordinary run %v", k, g[k], w[k])
		}
	}
}
