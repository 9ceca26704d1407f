package reaction

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestParseGood(t *testing.T) {
	src := `# ammonia synthesis and a conformer species
species nitrogen  n2.xyz            # comment after a statement
species hydrogen  h2.xyz  multiplicity 1
species ammonia   nh3.xyz charge 0
species ammonium  nh4.xyz charge 1
species butane    anti.xyz gauche.xyz
Reaction  haber : nitrogen + 3 hydrogen -> 2 ammonia
reaction 1/2 nitrogen + 1.5 hydrogen -> ammonia
`
	f, err := Parse("dir/x.reaction", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Species) != 5 || len(f.Reactions) != 2 {
		t.Fatalf("%d species, %d reactions", len(f.Species), len(f.Reactions))
	}
	bu, _ := f.Lookup("butane")
	if len(bu.Files) != 2 || bu.Paths[1] != filepath.Join("dir", "gauche.xyz") {
		t.Errorf("butane: %+v", bu)
	}
	am, _ := f.Lookup("ammonium")
	if am.Charge != 1 || am.Line != 5 {
		t.Errorf("ammonium: %+v", am)
	}
	h, _ := f.Lookup("hydrogen")
	if h.Multiplicity != 1 {
		t.Errorf("hydrogen: %+v", h)
	}
	r := f.Reactions[0]
	if r.Name != "haber" || r.Line != 7 || r.String() != "nitrogen + 3 hydrogen -> 2 ammonia" {
		t.Errorf("reaction 1: %q %d %q", r.Name, r.Line, r)
	}
	nu := r.Nu()
	if nu["nitrogen"] != -1 || nu["hydrogen"] != -3 || nu["ammonia"] != 2 {
		t.Errorf("nu = %v", nu)
	}
	r2 := f.Reactions[1]
	if r2.Name != "reaction 2" || r2.Reactants[0].Coefficient != 0.5 || r2.Reactants[1].Coefficient != 1.5 {
		t.Errorf("reaction 2: %+v", r2)
	}
}

func TestParseBad(t *testing.T) {
	head := "species a a.xyz\nspecies b b.xyz\n"
	cases := []struct {
		name, src string
		line      int
		want      string
	}{
		{"empty", "", 0, "no reaction"},
		{"only species", head, 0, "no reaction"},
		{"unknown keyword", "molecule a a.xyz\n", 1, "starts with species or reaction"},
		{"duplicate species", head + "species a c.xyz\nreaction a -> b\n", 3, `species "a" declared twice (first at line 1)`},
		{"duplicate reaction", head + "reaction r: a -> b\nreaction r: b -> a\n", 4, "declared twice"},
		{"unknown species", head + "reaction a + c -> b\n", 3, `unknown species "c"`},
		{"no file", "species a\n", 1, "has no XYZ file"},
		{"no name", "species\n", 1, "needs a name"},
		{"bad name", "species 2a a.xyz\n", 1, "must start with a letter"},
		{"bad char", "species a,b a.xyz\n", 1, "not allowed"},
		{"charge missing", "species a a.xyz charge\n", 1, "needs a whole number"},
		{"charge bad", "species a a.xyz charge x\n", 1, "not a whole number"},
		{"mult zero", "species a a.xyz multiplicity 0\n", 1, "at least 1"},
		{"charge twice", "species a a.xyz charge 1 charge 1\n", 1, "charge given twice"},
		{"file after charge", "species a a.xyz charge 1 b.xyz\n", 1, "list the files first"},
		{"same file twice", "species a a.xyz a.xyz\n", 1, "listed twice"},
		{"no arrow", head + "reaction a + b\n", 3, "exactly one ->"},
		{"two arrows", head + "reaction a -> b -> a\n", 3, "exactly one ->"},
		{"empty left", head + "reaction -> b\n", 3, "nothing on the left"},
		{"empty right", head + "reaction a ->\n", 3, "nothing on the right"},
		{"dangling plus", head + "reaction a + -> b\n", 3, "a + with no species"},
		{"zero coefficient", head + "reaction 0 a -> b\n", 3, "coefficient"},
		{"negative coefficient", head + "reaction -1 a -> b\n", 3, "coefficient"},
		{"bad fraction", head + "reaction 1/0 a -> b\n", 3, "coefficient"},
		{"huge coefficient", head + "reaction 1e9 a -> b\n", 3, "up to 1000"},
		{"three words", head + "reaction 2 a b -> b\n", 3, "separate terms"},
		{"twice on a side", head + "reaction a + a -> b\n", 3, "appears twice on the left"},
		{"empty label", head + "reaction : a -> b\n", 3, "empty reaction label"},
		{"label after arrow", head + "reaction a -> b: c\n", 3, "label goes first"},
		{"not utf8", "species a \xff.xyz\n", 0, "not UTF-8"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			f, err := Parse("x.reaction", []byte(c.src))
			var re *Error
			if !errors.As(err, &re) {
				t.Fatalf("error %v (%T), want *Error", err, err)
			}
			if f != nil {
				t.Error("file returned with an error")
			}
			if re.Line != c.line || !strings.Contains(re.Msg, c.want) {
				t.Errorf("got %q (line %d), want line %d with %q", err, re.Line, c.line, c.want)
			}
			if c.line > 0 && !strings.HasPrefix(err.Error(), "x.reaction:") {
				t.Errorf("error %q does not start with file:line", err)
			}
		})
	}
}

// writeFiles creates files (name → content) in a temporary directory.
func writeFiles(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for name, s := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

const (
	h2XYZ   = "2\nH2\nH 0 0 0.37\nH 0 0 -0.37\n"
	c2h4XYZ = "6\nC2H4\nC 0 0 0.665\nC 0 0 -0.665\nH 0 0.9297 1.234\nH 0 -0.9297 1.234\nH 0 0.9297 -1.234\nH 0 -0.9297 -1.234\n"
	c2h6XYZ = "8\nC2H6\nC 0 0 0.765\nC 0 0 -0.765\nH 1.027662 0 1.128333\nH -0.513831 0.889981 1.128333\nH -0.513831 -0.889981 1.128333\nH -1.027662 0 -1.128333\nH 0.513831 0.889981 -1.128333\nH 0.513831 -0.889981 -1.128333\n"
	nh3XYZ  = "4\nNH3\nN 0 0 0.1\nH 0.94 0 -0.27\nH -0.47 0.814 -0.27\nH -0.47 -0.814 -0.27\n"
	nh4XYZ  = "5\nNH4+\nN 0 0 0\nH 0.6 0.6 0.6\nH -0.6 -0.6 0.6\nH -0.6 0.6 -0.6\nH 0.6 -0.6 -0.6\n"
)

func TestLoad(t *testing.T) {
	base := map[string]string{"h2.xyz": h2XYZ, "c2h4.xyz": c2h4XYZ, "c2h6.xyz": c2h6XYZ, "c2h6b.xyz": c2h6XYZ, "nh3.xyz": nh3XYZ, "nh4.xyz": nh4XYZ}
	cases := []struct {
		name, src string
		want      string // "" for success
	}{
		{"balanced", "species e c2h4.xyz\nspecies h h2.xyz\nspecies a c2h6.xyz c2h6b.xyz\nreaction hyd: e + h -> a\n", ""},
		{"H imbalance", "species e c2h4.xyz\nspecies h h2.xyz\nspecies a c2h6.xyz\nreaction e + 2 h -> a\n", "H: 8 on the left, 6 on the right"},
		{"C imbalance named", "species e c2h4.xyz\nspecies h h2.xyz\nspecies a c2h6.xyz\nreaction e + h -> 2 a\n", "C: 2 on the left, 4 on the right; H: 6 on the left, 12 on the right"},
		{"charge imbalance", "species n nh3.xyz\nspecies p nh4.xyz charge 1\nspecies h h2.xyz\nreaction 2 n + h -> 2 p\n", "charge: 0 on the left, 2 on the right"},
		{"charged balanced", "species n nh3.xyz\nspecies p nh4.xyz charge 1\nspecies h h2.xyz charge 2 multiplicity 1\nreaction 2 n + h -> 2 p\n", ""},
		{"missing file", "species e nothere.xyz\nspecies h h2.xyz\nreaction e -> h\n", "nothere.xyz"},
		{"conformers differ", "species e c2h4.xyz c2h6.xyz\nspecies h h2.xyz\nreaction e -> h\n", "conformers must have the same atoms"},
		{"bad spin", "species h h2.xyz multiplicity 2\nspecies e c2h4.xyz\nreaction h -> e\n", "multiplicity 2"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			files := map[string]string{"x.reaction": c.src}
			for k, v := range base {
				files[k] = v
			}
			dir := writeFiles(t, files)
			sys, err := Load(filepath.Join(dir, "x.reaction"))
			if c.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				if len(sys.Molecules["a"]) != 2 && sys.Molecules["a"] != nil {
					t.Errorf("conformers: %d", len(sys.Molecules["a"]))
				}
				return
			}
			var re *Error
			if !errors.As(err, &re) || re.Line == 0 || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("got %v, want a file:line error with %q", err, c.want)
			}
		})
	}
}

// TestDemoFile reads the reactor-cooling demo: it must load and balance.
func TestDemoFile(t *testing.T) {
	sys, err := Load("../../testdata/demo/hydrogenation.reaction")
	if err != nil {
		t.Fatal(err)
	}
	if len(sys.Reactions) != 1 || sys.Reactions[0].String() != "ethylene + hydrogen -> ethane" {
		t.Errorf("reactions: %v", sys.Reactions)
	}
}
