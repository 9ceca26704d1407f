package main

import (
	"encoding/json"
	"strings"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/xc"
)

const h2XYZ = "2\nH2\nH 0 0 0\nH 0 0 0.74\n"

// TestLoadFit: the values --fit accepts and the sets they mean; an orbital
// set, an unknown name and a Coulomb-only set with a method that has exact
// exchange are usage errors that say what to give instead.
func TestLoadFit(t *testing.T) {
	for _, tc := range []struct {
		fit, method string
		want        string // the set's name; "" for no fitting
		errs        []string
	}{
		{"none", "b3lyp", "", nil},
		{"", "hf", "", nil},
		{"NONE", "hf", "", nil},
		{"jk", "hf", "def2-universal-JKFIT", nil},
		{"JK", "b3lyp", "def2-universal-JKFIT", nil},
		{"def2-universal-jkfit", "pbe0", "def2-universal-JKFIT", nil},
		{"def2jkfit", "pbe", "def2-universal-JKFIT", nil},
		{"def2-universal-jfit", "pbe", "def2-universal-JFIT", nil},
		{"def2jfit", "blyp", "def2-universal-JFIT", nil},
		{"def2jfit", "lda", "def2-universal-JFIT", nil},
		{"def2jfit", "hf", "", []string{"fits only the Coulomb term", "def2-universal-JKFIT", "jk", "hf"}},
		{"def2-universal-jfit", "b3lyp", "", []string{"fits only the Coulomb term", "def2-universal-JKFIT", "b3lyp"}},
		{"def2jfit", "pbe0", "", []string{"fits only the Coulomb term"}},
		{"def2-svp", "hf", "", []string{"def2-SVP", "orbital basis set", "jk"}},
		{"sto-3g", "b3lyp", "", []string{"STO-3G", "orbital basis set"}},
		{"nonsense", "hf", "", []string{"--fit", "unknown basis set", "none, jk"}},
	} {
		t.Run(tc.fit+"/"+tc.method, func(t *testing.T) {
			fn, err := xc.Lookup(tc.method)
			if err != nil {
				t.Fatal(err)
			}
			set, err := loadFit(tc.fit, fn)
			if tc.errs != nil {
				if err == nil {
					t.Fatalf("accepted as %v", set.Name)
				}
				if exitCode(err) != exitUsage {
					t.Errorf("exit %d, want %d", exitCode(err), exitUsage)
				}
				for _, w := range tc.errs {
					if !strings.Contains(err.Error(), w) {
						t.Errorf("error %q does not say %q", err, w)
					}
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			got := ""
			if set != nil {
				got = set.Name
			}
			if got != tc.want {
				t.Errorf("set %q, want %q", got, tc.want)
			}
		})
	}
}

// TestFitShellsMissingElement: an element the fitting set lacks is a usage
// error that names the element and the set. (The library's fitting sets
// cover every element its orbital sets do, so an empty set stands in.)
func TestFitShellsMissingElement(t *testing.T) {
	mol, err := molecule.ParseXYZ("w.xyz", []byte("3\nwater\nO 0 0 0.1173\nH 0 0.75695 -0.4692\nH 0 -0.75695 -0.4692\n"))
	if err != nil {
		t.Fatal(err)
	}
	empty := &basis.Set{Name: "empty-jkfit", Role: basis.RoleJKFit, Functions: basis.FunctionsSpherical}
	_, err = fitShells("w.xyz", empty, mol)
	if exitCode(err) != exitUsage {
		t.Fatalf("exit %d (%v), want %d", exitCode(err), err, exitUsage)
	}
	for _, w := range []string{"w.xyz", "--fit", "empty-jkfit", "O"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("error %q does not say %q", err, w)
		}
	}
	jk, err := basis.Load("jk")
	if err == nil {
		t.Errorf("'jk' is a --fit shorthand, not a library name, but basis.Load read it as %s", jk.Name)
	}
	jk, err = basis.Load("def2-universal-jkfit")
	if err != nil {
		t.Fatal(err)
	}
	aux, err := fitShells("w.xyz", jk, mol)
	if err != nil {
		t.Fatal(err)
	}
	for _, sh := range aux {
		if sh.L >= 2 && !sh.Pure {
			t.Fatalf("auxiliary shell l=%d Cartesian: fitting sets are spherical", sh.L)
		}
	}
}

// TestFitUsageErrorsCLI: every command that takes level flags rejects a
// bad --fit with exit status 2 before computing anything.
func TestFitUsageErrorsCLI(t *testing.T) {
	in := writeInput(t, "h2.xyz", h2XYZ)
	for _, cmd := range []string{"energy", "gradient", "relax", "modes", "settle"} {
		for _, tc := range []struct {
			args []string
			msg  string
		}{
			{[]string{"--method", "hf", "--fit", "def2-svp"}, "orbital basis set"},
			{[]string{"--method", "hf", "--fit", "def2-universal-jfit"}, "fits only the Coulomb term, and hf has exact exchange: give a Coulomb-and-exchange set such as def2-universal-JKFIT"},
			{[]string{"--method", "b3lyp", "--fit", "def2jfit"}, "fits only the Coulomb term"},
			{[]string{"--method", "hf", "--fit", "nosuchset"}, "unknown basis set"},
		} {
			t.Run(cmd+" "+strings.Join(tc.args, " "), func(t *testing.T) {
				args := append([]string{cmd, in, "--basis", "sto-3g", "--threads", "1"}, tc.args...)
				if cmd == "settle" {
					args = append(args, "--no-store")
				}
				_, stderr, code, _ := execCLI(t, false, args...)
				if code != exitUsage {
					t.Fatalf("exit %d, want %d\n%s", code, exitUsage, stderr)
				}
				if !strings.Contains(stderr, tc.msg) {
					t.Errorf("message %q lacks %q", stderr, tc.msg)
				}
			})
		}
	}
	// A Coulomb-only fit serves PBE, but not an HF level used beside it.
	for _, flag := range []string{"--prerelax", "--energy-at"} {
		args := []string{"settle", in, "--method", "pbe", "--basis", "sto-3g", "--fit", "def2jfit", "--threads", "1", "--no-store", flag, "hf/sto-3g"}
		_, stderr, code, _ := execCLI(t, false, args...)
		if code != exitUsage || !strings.Contains(stderr, "fits only the Coulomb term") {
			t.Errorf("%s hf/sto-3g with a JFIT fit: exit %d, want %d with the reason\n%s", flag, code, exitUsage, stderr)
		}
	}
}

// TestFitOutputs: with --fit the level of theory in text and JSON names the
// auxiliary set and the JSON has "fit"; without it the level is printed as
// before and "fit" is "none". Other JSON keys keep their values.
func TestFitOutputs(t *testing.T) {
	in := writeInput(t, "h2.xyz", h2XYZ)
	for _, tc := range []struct {
		cmd   string
		fit   []string
		fitJS string
		level string
	}{
		{"energy", nil, "none", "HF/STO-3G"},
		{"energy", []string{"--fit", "jk"}, "def2-universal-JKFIT", "HF/STO-3G (RI-JK: def2-universal-JKFIT)"},
		{"gradient", []string{"--fit", "def2-universal-jkfit"}, "def2-universal-JKFIT", "HF/STO-3G (RI-JK: def2-universal-JKFIT)"},
		{"relax", []string{"--fit", "none"}, "none", "HF/STO-3G"},
		{"relax", []string{"--fit", "jk"}, "def2-universal-JKFIT", "HF/STO-3G (RI-JK: def2-universal-JKFIT)"},
	} {
		t.Run(tc.cmd+" "+strings.Join(tc.fit, " "), func(t *testing.T) {
			args := append([]string{tc.cmd, in, "--method", "hf", "--basis", "sto-3g", "--threads", "1"}, tc.fit...)
			out, stderr, code, _ := execCLI(t, false, append(args, "--json")...)
			if code != exitOK {
				t.Fatalf("exit %d\n%s%s", code, out, stderr)
			}
			var rep map[string]any
			if err := json.Unmarshal([]byte(out), &rep); err != nil {
				t.Fatalf("%v\n%s", err, out)
			}
			if rep["fit"] != tc.fitJS {
				t.Errorf(`"fit" = %v, want %q`, rep["fit"], tc.fitJS)
			}
			if rep["basis"] != "STO-3G" || rep["method"] != "hf" {
				t.Errorf(`"basis" = %v, "method" = %v: want STO-3G, hf`, rep["basis"], rep["method"])
			}
			if rep["level_of_theory"] != tc.level {
				t.Errorf(`"level_of_theory" = %v, want %q`, rep["level_of_theory"], tc.level)
			}
			if tc.cmd == "relax" {
				return // its text output goes to files
			}
			text, stderr, code, _ := execCLI(t, false, args...)
			if code != exitOK {
				t.Fatalf("exit %d\n%s%s", code, text, stderr)
			}
			if !strings.Contains(text, tc.level) || (tc.fitJS == "none" && strings.Contains(text, "RI-J")) {
				t.Errorf("text output does not show the level %q:\n%s", tc.level, text)
			}
		})
	}
}

// TestPlanLevelFit: the level of a plan keeps --fit through plan.json; a
// plan without fitting has no "fit" key, and a plan written before the
// flag existed reads as one without fitting.
func TestPlanLevelFit(t *testing.T) {
	for _, tc := range []struct {
		fit     string
		wantKey bool
		want    string // planLevel.Fit
	}{
		{"none", false, ""},
		{"", false, ""},
		{"None", false, ""},
		{"jk", true, "jk"},
		{"def2-universal-jkfit", true, "def2-universal-jkfit"},
		{"def2jfit", true, "def2jfit"},
	} {
		t.Run(tc.fit, func(t *testing.T) {
			lf := &levelFlags{method: "hf", basisName: "sto-3g", memory: "1GiB", maxIter: 50, gridLevel: 3, dispersion: "none", fit: tc.fit}
			data, err := json.Marshal(levelOf(lf))
			if err != nil {
				t.Fatal(err)
			}
			var raw map[string]any
			if err := json.Unmarshal(data, &raw); err != nil {
				t.Fatal(err)
			}
			if _, ok := raw["fit"]; ok != tc.wantKey {
				t.Errorf(`"fit" key present %v, want %v: %s`, ok, tc.wantKey, data)
			}
			var back planLevel
			if err := json.Unmarshal(data, &back); err != nil {
				t.Fatal(err)
			}
			if back.Fit != tc.want {
				t.Errorf("read back fit %q, want %q", back.Fit, tc.want)
			}
			f := back.flags(2)
			if fitOff(f.fit) != (tc.want == "") || (tc.want != "" && f.fit != tc.want) {
				t.Errorf("flags of the read plan: fit %q, want %q", f.fit, tc.want)
			}
			if f.method != "hf" || f.basisName != "sto-3g" || f.threads != 2 {
				t.Errorf("flags of the read plan: %+v", f)
			}
		})
	}
	// A level as plans wrote it before --fit existed.
	old := `{"method":"b3lyp","basis":"6-31g*","charge":0,"multiplicity":0,"cartesian":false,"spherical":false,"unrestricted":false,"memory":"2GiB","max_iterations":128,"grid":3,"dispersion":"none"}`
	var l planLevel
	if err := json.Unmarshal([]byte(old), &l); err != nil {
		t.Fatal(err)
	}
	if f := l.flags(1); !fitOff(f.fit) {
		t.Errorf("an old plan reads with --fit %q", f.fit)
	}
	again, err := json.Marshal(l)
	if err != nil {
		t.Fatal(err)
	}
	if string(again) != old {
		t.Errorf("an old plan's level written again changes:\n%s\n%s", again, old)
	}
}

// TestFitNotWithSavedLevel: --fit does not apply where a plan or a modes
// file fixes the level of theory.
func TestFitNotWithSavedLevel(t *testing.T) {
	for _, args := range [][]string{
		{"modes", "--from", "x.modes.json", "--fit", "jk"},
		{"modes", "--assemble", "plan-dir", "--fit", "jk"},
		{"reaction", "--assemble", "plan-dir", "--fit", "jk"},
	} {
		t.Run(strings.Join(args, " "), func(t *testing.T) {
			_, stderr, code, _ := execCLI(t, false, args...)
			if code != exitUsage || !strings.Contains(stderr, "--fit does not apply") {
				t.Errorf("exit %d, want %d with \"--fit does not apply\":\n%s", code, exitUsage, stderr)
			}
		})
	}
}
