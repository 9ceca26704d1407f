package main

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"poise/freq"
	"poise/settle"
)

// savedPoint is a finished displacement file as found on disk.
type savedPoint struct {
	data []byte
	mod  time.Time
}

func savedPoints(t *testing.T, dir string) map[string]savedPoint {
	t.Helper()
	files, _ := filepath.Glob(filepath.Join(dir, "disp-*.json"))
	m := map[string]savedPoint{}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		st, err := os.Stat(f)
		if err != nil {
			t.Fatal(err)
		}
		m[filepath.Base(f)] = savedPoint{data, st.ModTime()}
	}
	return m
}

// poise modes (water, HF/3-21G) killed at random moments 20 times (kill -9,
// every fourth time SIGINT), resumed each time: the final frequencies equal
// those of an uninterrupted run to 0.001 cm⁻¹, no finished displacement is
// ever computed again (its file is never rewritten), every saved point is a
// whole file, and no partial file is left behind.
func TestModesKilledAndResumed(t *testing.T) {
	if testing.Short() {
		t.Skip("20 interrupted runs")
	}
	// Every displaced point (--no-symmetry): enough of them to be killed
	// in the middle of the run.
	level := []string{"--method", "hf", "--basis", "3-21g", "--threads", "2", "--no-symmetry"}
	want := modesJSON(t, append([]string{"modes", modesWaterXYZ, "--out", t.TempDir(), "--json"}, level...)...)

	out := filepath.Join(t.TempDir(), "out")
	work := filepath.Join(out, "displacements")
	args := append([]string{"modes", modesWaterXYZ, "--out", out, "--json"}, level...)
	// One uninterrupted run in its own process sets the time scale.
	t0 := time.Now()
	if msg, err := poiseProcess(t, append([]string{"modes", modesWaterXYZ, "--out", t.TempDir()}, level...)...).CombinedOutput(); err != nil {
		t.Fatalf("%v\n%s", err, msg)
	}
	full := time.Since(t0)
	rng := rand.New(rand.NewPCG(2026, 12)) // fixed seed: the same kill moments every run
	finished := 0
	for k := 0; k < 20; k++ {
		before := savedPoints(t, work)
		p := poiseProcess(t, args...)
		var stderr bytes.Buffer
		p.Stderr = &stderr
		if err := p.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(0.6 * rng.Float64() * float64(full)))
		sig := syscall.SIGKILL
		if k%4 == 3 {
			sig = syscall.SIGINT
		}
		p.Process.Signal(sig)
		err := p.Wait()
		if err == nil {
			finished++
		} else if sig == syscall.SIGINT && !strings.Contains(stderr.String(), "run the same command again to resume") && p.ProcessState.ExitCode() > 0 {
			t.Errorf("interrupted run %d does not say how to resume:\n%s", k, stderr.String())
		}
		after := savedPoints(t, work)
		for name, b := range before {
			a, ok := after[name]
			if !ok || !bytes.Equal(a.data, b.data) || !a.mod.Equal(b.mod) {
				t.Errorf("run %d: finished point %s was computed again or lost", k, name)
			}
		}
		for name, a := range after {
			var pt map[string]any
			if err := jsonUnmarshal(a.data, &pt); err != nil {
				t.Errorf("run %d: %s is not a whole file: %v", k, name, err)
			}
		}
	}
	t.Logf("%d of 20 interrupted runs had finished before the signal; %d points saved", finished, len(savedPoints(t, work)))
	got := modesJSON(t, args...)
	for i := range want.FrequenciesCm1 {
		if d := math.Abs(got.FrequenciesCm1[i] - want.FrequenciesCm1[i]); d > 0.001 {
			t.Errorf("mode %d: %.4f cm⁻¹ after 20 interruptions, %.4f uninterrupted", i+1, got.FrequenciesCm1[i], want.FrequenciesCm1[i])
		}
	}
	if c := got.Computation; c == nil || c.Computed+c.Reused != 18 {
		t.Errorf("final run: %+v", got.Computation)
	}
	for _, dir := range []string{out, work} {
		left, _ := filepath.Glob(filepath.Join(dir, ".tmp-*"))
		if len(left) > 0 {
			t.Errorf("partial files left behind: %v", left)
		}
	}
	if _, err := freq.ReadFile(filepath.Join(out, "water.modes.json")); err != nil {
		t.Error(err)
	}
}

func jsonUnmarshal(data []byte, v any) error { return json.Unmarshal(data, v) }

// poise settle (water, HF/3-21G) killed with kill -9 or SIGINT at random
// moments, resumed each time, ends with the uninterrupted result (energy
// to 1e-7 Eh: a resumed relaxation takes another path within the strict
// criteria), keeps no work directory once finished, and leaves no partial
// file.
func TestSettleKilledAndResumed(t *testing.T) {
	if testing.Short() {
		t.Skip("interrupted settles")
	}
	// Every displaced point (--no-symmetry): enough work left after each
	// resume for the next interruption to land in the middle of it.
	level := []string{"--method", "hf", "--basis", "3-21g", "--threads", "2", "--no-store", "--no-symmetry"}
	plainOut := t.TempDir()
	t0 := time.Now()
	if msg, err := poiseProcess(t, append([]string{"settle", modesWaterXYZ, "--out", plainOut}, level...)...).CombinedOutput(); err != nil {
		t.Fatalf("%v\n%s", err, msg)
	}
	full := time.Since(t0)
	want := readSummary(t, filepath.Join(plainOut, "summary.json"))

	out := filepath.Join(t.TempDir(), "settle")
	args := append([]string{"settle", modesWaterXYZ, "--out", out}, level...)
	rng := rand.New(rand.NewPCG(12, 2026))
	resumedMessage := false
	for k := 0; k < 8; k++ {
		p := poiseProcess(t, args...)
		var stderr bytes.Buffer
		p.Stderr = &stderr
		if err := p.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration((0.1 + 0.5*rng.Float64()) * float64(full)))
		sig := syscall.SIGKILL
		if k%2 == 1 {
			sig = syscall.SIGINT
		}
		p.Process.Signal(sig)
		p.Wait()
		if sig == syscall.SIGINT && strings.Contains(stderr.String(), "run the same command again to continue") {
			resumedMessage = true
		}
	}
	if !resumedMessage {
		t.Error("no interrupted settle said how to continue")
	}
	if msg, err := poiseProcess(t, args...).CombinedOutput(); err != nil {
		t.Fatalf("final run: %v\n%s", err, msg)
	}
	got := readSummary(t, filepath.Join(out, "summary.json"))
	if got.Verdict != want.Verdict || math.Abs(got.EnergyHartree-want.EnergyHartree) > 1e-7 {
		t.Errorf("after interruptions: %s, %.10f Eh; uninterrupted %s, %.10f Eh", got.Verdict, got.EnergyHartree, want.Verdict, want.EnergyHartree)
	}
	if _, err := os.Stat(filepath.Join(out, "work")); !os.IsNotExist(err) {
		t.Errorf("work directory left after a finished settle: %v", err)
	}
	left, _ := filepath.Glob(filepath.Join(out, ".tmp-*"))
	if len(left) > 0 {
		t.Errorf("partial files left: %v", left)
	}
}

func readSummary(t *testing.T, path string) *settle.Summary {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var s settle.Summary
	if err := json.Unmarshal(data, &s); err != nil {
		t.Fatal(err)
	}
	return &s
}
