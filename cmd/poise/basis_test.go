package main

import (
	"strings"
	"testing"
)

// runBasisCmd runs poise with args and returns its output and the exit
// status reportError would give.
func runBasisCmd(t *testing.T, args ...string) (string, int, error) {
	t.Helper()
	out, _, code, err := execCLI(t, true, args...)
	return out, code, err
}

func TestBasisCommand(t *testing.T) {
	tests := []struct {
		name string
		args []string
		code int
		want []string // in the output, or in the error when code != 0
	}{
		{"list", []string{"basis", "list"}, exitOK,
			[]string{"STO-3G", "6-31G*", "cc-pVQZ", "def2-universal-JKFIT", "cartesian", "spherical", "H–Kr", "H–Ar, Ca–Kr", "fitting (JK)"}},
		// Water-relevant summaries: O in 6-31G* is 3s2p1d with Cartesian d
		// (15 functions), common practice.
		{"summary", []string{"basis", "show", "6-31G(d)"}, exitOK,
			[]string{"6-31G*", "cartesian", "O   3s2p1d", "→  15 functions", "H   2s"}},
		{"element", []string{"basis", "show", "cc-pvdz", "o"}, exitOK,
			[]string{"O (oxygen) in cc-pVDZ: 3s2p1d → 14 spherical functions", "shell 6: d, 1 primitive, 5 functions", "11720", "Dunning"}},
		{"element by number", []string{"basis", "show", "sto-3g", "1"}, exitOK,
			[]string{"H (hydrogen) in STO-3G: 1s → 1 cartesian function", "3.42525091", "0.15432896", "Hehre"}},
		{"unknown set", []string{"basis", "show", "6-31G(3df)"}, exitUsage,
			[]string{`unknown basis set "6-31G(3df)"`, "STO-3G", "def2-TZVP"}},
		{"missing element", []string{"basis", "show", "6-31+G*", "K"}, exitUsage,
			[]string{"6-31+G* has no functions for K", "H–Ar", "STO-3G"}},
		{"unknown element", []string{"basis", "show", "sto-3g", "Qq"}, exitUsage,
			[]string{`unknown element "Qq"`, "H–Kr"}},
		{"too many arguments", []string{"basis", "show", "sto-3g", "H", "O"}, exitUsage, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			out, code, err := runBasisCmd(t, tc.args...)
			if code != tc.code {
				t.Fatalf("exit %d, want %d (err %v)\n%s", code, tc.code, err, out)
			}
			text := out
			if err != nil {
				text = err.Error()
			}
			for _, w := range tc.want {
				if !strings.Contains(text, w) {
					t.Errorf("output lacks %q:\n%s", w, text)
				}
			}
		})
	}
}
