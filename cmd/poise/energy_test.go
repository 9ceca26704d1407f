package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// runCLI executes poise with args and returns stdout and the exit status.
func runCLI(t *testing.T, args ...string) (string, int, error) {
	t.Helper()
	out, _, code, err := execCLI(t, true, args...)
	return out, code, err
}

func writeFile(t *testing.T, name, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestEnergyJSON(t *testing.T) {
	out, code, err := runCLI(t, "energy", "../../testdata/molecules/water.xyz", "--basis", "sto-3g", "--json", "--threads", "1")
	if code != exitOK {
		t.Fatalf("exit %d: %v", code, err)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	for _, key := range []string{"energy_hartree", "converged", "iterations", "nuclear_repulsion_hartree", "dipole_debye", "orbital_energies_hartree"} {
		if _, ok := rep[key]; !ok {
			t.Errorf("JSON lacks %q", key)
		}
	}
	if rep["converged"] != true {
		t.Errorf("converged = %v", rep["converged"])
	}
}

func TestEnergyTable(t *testing.T) {
	out, code, err := runCLI(t, "energy", "../../testdata/molecules/water.xyz", "--basis", "sto-3g", "--threads", "1")
	if code != exitOK {
		t.Fatalf("exit %d: %v", code, err)
	}
	for _, want := range []string{"total energy", "nuclear repulsion", "HOMO", "LUMO", "Mulliken", "dipole"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestEnergyExitStatuses(t *testing.T) {
	good := "3\nwater\nO 0 0 0.1173\nH 0 0.75695 -0.4692\nH 0 -0.75695 -0.4692\n"
	cases := []struct {
		what string
		file string
		args []string
		code int
		msg  string
	}{
		{"empty file", "", nil, exitUsage, "empty"},
		{"wrong atom count", "4\nx\nH 0 0 0\nH 0 0 0.74\n", nil, exitUsage, ":"},
		{"unknown element", "1\nx\nXx 0 0 0\n", nil, exitUsage, "Xx"},
		{"non-numeric coordinate", "1\nx\nH 0 abc 0\n", nil, exitUsage, "abc"},
		{"non-finite coordinate", "1\nx\nH 0 NaN 0\n", nil, exitUsage, ":3"},
		{"atoms too close", "2\nx\nH 0 0 0\nH 0 0 0.1\n", nil, exitUsage, "nanometre"},
		{"element not in basis", "1\nx\nK 0 0 0\n", []string{"--basis", "6-31+g*"}, exitUsage, "6-31G"},
		{"impossible multiplicity", good, []string{"--multiplicity", "2"}, exitUsage, "multiplicity"},
		{"unknown basis", good, []string{"--basis", "nonsense"}, exitUsage, "basis"},
		{"unknown method", good, []string{"--method", "nonsense"}, exitUsage, "method"},
		{"not converged", good, []string{"--basis", "sto-3g", "--max-iterations", "2"}, exitNotConverge, "try"},
	}
	for _, c := range cases {
		t.Run(c.what, func(t *testing.T) {
			p := writeFile(t, "in.xyz", c.file)
			_, code, err := runCLI(t, append([]string{"energy", p, "--threads", "1"}, c.args...)...)
			if code != c.code {
				t.Fatalf("exit %d (%v), want %d", code, err, c.code)
			}
			if err == nil || !strings.Contains(err.Error(), c.msg) {
				t.Errorf("message %q lacks %q", err, c.msg)
			}
		})
	}
}

// The stability line's advice fits the mode: --stability check suggests
// following; after --stability follow an instability left over is
// reported as such (singlet O2 at HF/3-21G: following the restricted →
// unrestricted instability leaves an internal one that has no lower
// solution along it), not with advice to do what was done.
func TestEnergyStabilityVerdict(t *testing.T) {
	xyz := filepath.Join(t.TempDir(), "o2.xyz")
	if err := os.WriteFile(xyz, []byte("2\nsinglet O2\nO 0 0 0\nO 0 0 1.21\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		mode, want, not string
		follow          bool
	}{
		{"check", "UNSTABLE (rerun with --stability follow)", "after following", false},
		{"follow", "UNSTABLE, left so after following", "rerun with --stability follow", true},
	} {
		args := []string{"energy", xyz, "--method", "hf", "--basis", "3-21g", "--multiplicity", "1", "--stability", c.mode, "--threads", "1"}
		out, code, err := runCLI(t, args...)
		if code != exitOK {
			t.Fatalf("%s: exit %d: %v", c.mode, code, err)
		}
		if !strings.Contains(out, c.want) || strings.Contains(out, c.not) {
			t.Errorf("--stability %s: want %q and not %q in:\n%s", c.mode, c.want, c.not, out)
		}
		out, _, _ = runCLI(t, append(args, "--json")...)
		var rep struct {
			Stability *struct {
				Stable bool `json:"stable"`
				Follow bool `json:"follow"`
			} `json:"stability"`
		}
		if err := json.Unmarshal([]byte(out), &rep); err != nil || rep.Stability == nil || rep.Stability.Follow != c.follow || rep.Stability.Stable {
			t.Errorf("--stability %s JSON: %+v, %v", c.mode, rep.Stability, err)
		}
	}
}
