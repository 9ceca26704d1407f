package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// planarAmmonia is the D3h saddle point of ammonia's inversion.
const planarAmmonia = `4
planar ammonia
N 0.000000 0.000000 0.000000
H 1.000000 0.000000 0.000000
H -0.500000 0.866025 0.000000
H -0.500000 -0.866025 0.000000
`

func writeInput(t *testing.T, name, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestSettleCLI(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	in := writeInput(t, "nh3.xyz", planarAmmonia)
	store := t.TempDir()
	out := filepath.Join(t.TempDir(), "out")
	level := []string{"--method", "hf", "--basis", "sto-3g", "--threads", "2", "--store", store}

	// From the saddle point to a minimum: exit 0, the verdict line, files.
	stdout, stderr, code, _ := execCLI(t, false, append([]string{"settle", in, "--out", out}, level...)...)
	if code != exitOK {
		t.Fatalf("exit %d; stderr:\n%s", code, stderr)
	}
	if !strings.Contains(stdout, "minimum confirmed: 0 imaginary modes") {
		t.Errorf("no verdict line in:\n%s", stdout)
	}
	for _, name := range []string{"nh3.xyz", "nh3.trajectory.xyz", "nh3.modes.json", "nh3-ir.svg", "nh3-ir.png", "nh3.thermo.txt", "summary.json", "summary.txt"} {
		if st, err := os.Stat(filepath.Join(out, name)); err != nil || st.Size() == 0 {
			t.Errorf("%s missing or empty (%v)", name, err)
		}
	}
	data, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if err != nil {
		t.Fatal(err)
	}
	var sum map[string]any
	if err := json.Unmarshal(data, &sum); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"verdict", "imaginary_count", "energy_hartree", "enthalpy_hartree", "gibbs_hartree", "symbols", "geometry_angstrom", "level_of_theory", "program_version"} {
		if _, ok := sum[k]; !ok {
			t.Errorf("summary.json lacks %q", k)
		}
	}
	if sum["verdict"] != "minimum" || sum["imaginary_count"] != 0.0 || sum["level_of_theory"] != "HF/STO-3G" {
		t.Errorf("summary: verdict %v, imaginary_count %v, level %v", sum["verdict"], sum["imaginary_count"], sum["level_of_theory"])
	}
	// The modes file is the input of poise thermo.
	if _, stderr, code, _ := execCLI(t, false, "thermo", filepath.Join(out, "nh3.modes.json")); code != exitOK {
		t.Errorf("poise thermo on the modes file: exit %d\n%s", code, stderr)
	}

	// The same run again comes from the store; --json prints the summary.
	stdout, stderr, code, _ = execCLI(t, false, append([]string{"settle", in, "--out", out, "--json"}, level...)...)
	if code != exitOK {
		t.Fatalf("second run: exit %d; stderr:\n%s", code, stderr)
	}
	var again map[string]any
	if err := json.Unmarshal([]byte(stdout), &again); err != nil {
		t.Fatalf("--json output: %v\n%s", err, stdout)
	}
	if again["gibbs_hartree"] != sum["gibbs_hartree"] || again["store_key"] != sum["store_key"] {
		t.Errorf("second run: G %v (key %v), first %v (key %v)", again["gibbs_hartree"], again["store_key"], sum["gibbs_hartree"], sum["store_key"])
	}
	txt, _ := os.ReadFile(filepath.Join(out, "summary.txt"))
	if !strings.Contains(string(txt), "results store") {
		t.Errorf("second run's summary does not say it came from the store:\n%s", txt)
	}

	// No displacement allowed: the saddle point stays, exit status 4.
	stdout, stderr, code, _ = execCLI(t, false, append([]string{"settle", in, "--out", filepath.Join(t.TempDir(), "o"), "--max-cycles", "0"}, level...)...)
	if code != exitNotMinimum {
		t.Errorf("--max-cycles 0 on planar NH3: exit %d, want %d\n%s", code, exitNotMinimum, stderr)
	}
	if !strings.Contains(stdout, "not a minimum: 1 imaginary modes (") {
		t.Errorf("no not-a-minimum verdict in:\n%s", stdout)
	}
}

func TestSettleCLIBadInput(t *testing.T) {
	in := writeInput(t, "nh3.xyz", planarAmmonia)
	for _, c := range []struct {
		name string
		args []string
	}{
		{"missing file", []string{"settle", filepath.Join(t.TempDir(), "none.xyz")}},
		{"no file", []string{"settle"}},
		{"bad temperature", []string{"settle", in, "--temperature", "-5"}},
		{"bad pressure", []string{"settle", in, "--pressure", "0"}},
		{"bad cycles", []string{"settle", in, "--max-cycles", "-1"}},
		{"bad prerelax", []string{"settle", in, "--prerelax", "hf"}},
		{"unknown energy level", []string{"settle", in, "--energy-at", "nope/sto-3g"}},
		{"unknown basis", []string{"settle", in, "--basis", "no-such-basis"}},
		{"store and no-store", []string{"settle", in, "--store", "x", "--no-store"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			store := t.TempDir()
			args := append(append([]string{}, c.args...), "--method", "hf", "--basis", "sto-3g")
			if c.name == "unknown basis" {
				args = c.args
			}
			if c.name != "store and no-store" {
				args = append(args, "--store", store, "--out", filepath.Join(t.TempDir(), "o"))
			}
			_, stderr, code, _ := execCLI(t, false, args...)
			if code != exitUsage {
				t.Errorf("exit %d, want %d; stderr:\n%s", code, exitUsage, stderr)
			}
			if entries, _ := os.ReadDir(store); len(entries) != 0 {
				t.Errorf("the store was written: %d entries", len(entries))
			}
		})
	}
}
