package main

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// slurmReady reports whether a Slurm controller answers here (CI starts a
// single-node one with ../shared/slurm/start-local-slurm.sh).
func slurmReady() (bool, string) {
	for _, tool := range []string{"sbatch", "sinfo"} {
		if _, err := exec.LookPath(tool); err != nil {
			return false, tool + " not found"
		}
	}
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	out, err := exec.CommandContext(ctx, "sinfo", "-h", "-o", "%T").Output()
	if err != nil {
		return false, "sinfo: " + err.Error()
	}
	for _, s := range strings.Fields(string(out)) {
		switch strings.TrimSuffix(s, "*") {
		case "idle", "mixed", "allocated":
			return true, ""
		}
	}
	return false, "no Slurm node is up: " + strings.TrimSpace(string(out))
}

// A modes plan for water at B3LYP/6-31G* runs end to end on a real Slurm:
// sbatch the job array, wait for it, assemble, and compare with the
// single-process result (frequencies to 0.01 cm⁻¹, Hessian to 1e-7).
// In CI (CI=true) a missing Slurm is a failure, elsewhere a skip.
func TestSlurmModesPlan(t *testing.T) {
	if testing.Short() {
		t.Skip("B3LYP/6-31G* water through a Slurm job array")
	}
	if ok, why := slurmReady(); !ok {
		if os.Getenv("CI") == "true" {
			t.Fatalf("CI needs a running Slurm (../shared/slurm/start-local-slurm.sh): %s", why)
		}
		t.Skipf("no Slurm here: %s", why)
	}
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	dir := filepath.Join(t.TempDir(), "plan")
	level := []string{"--method", "b3lyp", "--basis", "6-31g*"}
	out, e, code, _ := execCLI(t, false, append([]string{"modes", modesWaterXYZ, "--plan", dir, "--threads", "1"}, level...)...)
	if code != exitOK {
		t.Fatalf("plan: exit %d\n%s\n%s", code, out, e)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Minute)
	defer cancel()
	sb := exec.CommandContext(ctx, "sbatch", "--wait", filepath.Join(dir, "submit.sbatch"))
	// The scripts run "$POISE": this test binary standing in for poise.
	sb.Env = append(os.Environ(), "POISE="+exe, "POISE_TEST_AS_PROGRAM=1")
	t0 := time.Now()
	if msg, err := sb.CombinedOutput(); err != nil {
		logs, _ := filepath.Glob(filepath.Join(dir, "logs", "*"))
		var tail string
		for _, l := range logs {
			data, _ := os.ReadFile(l)
			tail += l + ":\n" + string(data)
		}
		t.Fatalf("sbatch --wait: %v\n%s\n%s", err, msg, tail)
	}
	got := modesJSON(t, "modes", "--assemble", dir, "--json")
	if got.Computation != nil {
		t.Logf("job array of %d tasks finished in %.0f s", got.Computation.Displacements, time.Since(t0).Seconds())
	}
	want := modesJSON(t, append([]string{"modes", modesWaterXYZ, "--threads", "2", "--out", t.TempDir(), "--json"}, level...)...)
	sameModes(t, got, want)
}
