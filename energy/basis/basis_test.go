package basis

import (
	"encoding/json"
	"errors"
	"slices"
	"strings"
	"testing"

	"poise/energy/molecule"
)

const waterXYZ = `3
water
O   0.000000   0.000000   0.117300
H   0.000000   0.756950  -0.469200
H   0.000000  -0.756950  -0.469200
`

const benzeneXYZ = `12
benzene
C    1.397000    0.000000    0.000000
C    0.698500    1.209837    0.000000
C   -0.698500    1.209837    0.000000
C   -1.397000    0.000000    0.000000
C   -0.698500   -1.209837    0.000000
C    0.698500   -1.209837    0.000000
H    2.481000    0.000000    0.000000
H    1.240500    2.148610    0.000000
H   -1.240500    2.148610    0.000000
H   -2.481000    0.000000    0.000000
H   -1.240500   -2.148610    0.000000
H    1.240500   -2.148610    0.000000
`

func parse(t *testing.T, xyz string) *molecule.Molecule {
	t.Helper()
	m, err := molecule.ParseXYZ("test.xyz", []byte(xyz))
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// TestEverySetLoads loads the whole library and checks that the index
// agrees with each file.
func TestEverySetLoads(t *testing.T) {
	infos := List()
	if len(infos) != 27 {
		t.Fatalf("%d sets in the library, want 27", len(infos))
	}
	for _, in := range infos {
		s, err := Load(in.Name)
		if err != nil {
			t.Errorf("%s: %v", in.Name, err)
			continue
		}
		if s.Name != in.Name || s.Role != in.Role || s.Functions != in.Functions || s.Description != in.Description {
			t.Errorf("%s: index %+v disagrees with file %q %q %q", in.Name, in, s.Name, s.Role, s.Functions)
		}
		var syms []string
		for _, z := range s.Elements() {
			syms = append(syms, molecule.Symbol(z))
		}
		if !slices.Equal(syms, in.Elements) {
			t.Errorf("%s: index elements %v, file %v", in.Name, in.Elements, syms)
		}
		for _, z := range s.Elements() {
			shells, refs, ok := s.ElementShells(z)
			if !ok || len(shells) == 0 || len(refs) == 0 {
				t.Errorf("%s %s: %d shells, %d references", in.Name, molecule.Symbol(z), len(shells), len(refs))
			}
			for _, sh := range shells {
				if sh.Pure != (sh.L >= 2 && s.Functions == FunctionsSpherical) {
					t.Errorf("%s %s: l=%d Pure=%v", in.Name, molecule.Symbol(z), sh.L, sh.Pure)
				}
			}
		}
	}
}

func TestLoadAliases(t *testing.T) {
	tests := map[string]string{
		"6-31G(d)":             "6-31G*",
		"6-31g(d)":             "6-31G*",
		"6-31G(d,p)":           "6-31G**",
		"6-31G(d, p)":          "6-31G**",
		"6-31+G(d)":            "6-31+G*",
		"6-31+G(d,p)":          "6-31+G**",
		"6-31++G(d,p)":         "6-31++G**",
		"6-311G(d)":            "6-311G*",
		"6-311G(d,p)":          "6-311G**",
		"6-311+G(d,p)":         "6-311+G**",
		"6-311++G(d,p)":        "6-311++G**",
		"6-311+g(2d,p)":        "6-311+G(2d,p)",
		"sto3g":                "STO-3G",
		"STO-3G":               "STO-3G",
		"6-31g":                "6-31G",
		"631g*":                "6-31G*",
		"6-311g":               "6-311G",
		"def2svp":              "def2-SVP",
		"DEF2-TZVPP":           "def2-TZVPP",
		"ccpvdz":               "cc-pVDZ",
		"CC-PVTZ":              "cc-pVTZ",
		"aug-cc-pvdz":          "aug-cc-pVDZ",
		"pcseg1":               "pcseg-1",
		"def2/J":               "def2-universal-JFIT",
		"def2/JK":              "def2-universal-JKFIT",
		"def2-universal-jkfit": "def2-universal-JKFIT",
		"6-31pgss":             "6-31+G**", // file name
	}
	for in, want := range tests {
		s, err := Load(in)
		if err != nil {
			t.Errorf("Load(%q): %v", in, err)
			continue
		}
		if s.Name != want {
			t.Errorf("Load(%q) = %s, want %s", in, s.Name, want)
		}
	}
}

func TestLoadUnknown(t *testing.T) {
	for _, name := range []string{"6-31G(2df)", "cc-pV5Z", "", "def2"} {
		_, err := Load(name)
		var ue *UnknownSetError
		if !errors.As(err, &ue) {
			t.Fatalf("Load(%q): %v, want *UnknownSetError", name, err)
		}
		if ue.Name != name || len(ue.Available) != 27 {
			t.Errorf("%+v", ue)
		}
		for _, s := range []string{"unknown basis set", "STO-3G", "cc-pVQZ", "def2-universal-JKFIT"} {
			if !strings.Contains(err.Error(), s) {
				t.Errorf("message %q lacks %q", err, s)
			}
		}
	}
}

// TestFunctionCounts compares numbers of basis functions with values in
// common use (from memory; they follow from the published contracted
// compositions, e.g. O cc-pVDZ [3s2p1d], H [2s1p]).
func TestFunctionCounts(t *testing.T) {
	tests := []struct {
		set  string
		mol  string
		conv Convention
		want int
	}{
		{"STO-3G", waterXYZ, Default, 7},
		{"6-31G", waterXYZ, Default, 13},
		{"6-31G*", waterXYZ, Default, 19},
		{"6-31G*", waterXYZ, Cartesian, 19},
		{"6-31G*", waterXYZ, Spherical, 18},
		{"6-31G**", waterXYZ, Default, 25},
		{"6-311G**", waterXYZ, Default, 30},
		{"cc-pVDZ", waterXYZ, Default, 24},
		{"cc-pVDZ", waterXYZ, Spherical, 24},
		{"cc-pVDZ", waterXYZ, Cartesian, 25},
		{"cc-pVTZ", waterXYZ, Default, 58},
		{"cc-pVQZ", waterXYZ, Default, 115},
		{"aug-cc-pVDZ", waterXYZ, Default, 41},
		{"def2-SVP", waterXYZ, Default, 24},
		{"def2-TZVP", waterXYZ, Default, 43},
		{"6-31G*", benzeneXYZ, Default, 102},
		{"cc-pVDZ", benzeneXYZ, Default, 114},
	}
	for _, tc := range tests {
		s, err := Load(tc.set)
		if err != nil {
			t.Fatal(err)
		}
		m := parse(t, tc.mol)
		shells, err := s.Shells(m, tc.conv)
		if err != nil {
			t.Fatal(err)
		}
		if got := NumFunctions(shells); got != tc.want {
			t.Errorf("%s %s %v: %d functions, want %d", tc.set, m.Formula(), tc.conv, got, tc.want)
		}
		if _, n := Offsets(shells); n != tc.want {
			t.Errorf("Offsets total %d", n)
		}
	}
}

// TestCompositions checks contracted compositions against the papers that
// define the sets (from memory): STO-3G (Hehre, Stewart, Pople 1969), 6-31G*
// (Hariharan, Pople 1973), cc-pVXZ and aug-cc-pVDZ (Dunning 1989; Kendall,
// Dunning, Harrison 1992), def2 (Weigend, Ahlrichs 2005), 6-311G (Krishnan
// et al. 1980), 3d metals (Balabanov, Peterson 2005).
func TestCompositions(t *testing.T) {
	tests := []struct {
		set, element, want string
	}{
		{"STO-3G", "O", "2s1p"},
		{"3-21G", "O", "3s2p"},
		{"6-31G*", "C", "3s2p1d"},
		{"6-31G**", "H", "2s1p"},
		{"6-311G", "O", "4s3p"},
		{"cc-pVDZ", "O", "3s2p1d"},
		{"cc-pVDZ", "H", "2s1p"},
		{"cc-pVTZ", "O", "4s3p2d1f"},
		{"cc-pVQZ", "O", "5s4p3d2f1g"},
		{"aug-cc-pVDZ", "O", "4s3p2d"},
		{"def2-SVP", "O", "3s2p1d"},
		{"def2-TZVP", "O", "5s3p2d1f"},
		{"def2-TZVP", "H", "3s1p"},
		// 3d metals (Balabanov, Peterson, J. Chem. Phys. 123, 064107 (2005)).
		{"cc-pVDZ", "Zn", "6s5p3d1f"},
		{"cc-pVQZ", "Zn", "8s7p5d3f2g1h"},
	}
	for _, tc := range tests {
		s, err := Load(tc.set)
		if err != nil {
			t.Fatal(err)
		}
		z, _ := molecule.ElementBySymbol(tc.element)
		shells, _, ok := s.ElementShells(z)
		if !ok {
			t.Fatalf("%s lacks %s", tc.set, tc.element)
		}
		if got := Composition(shells); got != tc.want {
			t.Errorf("%s %s: %s, want %s", tc.set, tc.element, got, tc.want)
		}
	}
}

// TestPublishedNumbers checks a few primitives against the papers.
func TestPublishedNumbers(t *testing.T) {
	// STO-3G hydrogen (ζ = 1.24): exponents 3.42525091, 0.62391373,
	// 0.16885540, coefficients 0.15432897, 0.53532814, 0.44463454 (Hehre,
	// Stewart, Pople, J. Chem. Phys. 51, 2657 (1969); from memory).
	s, err := Load("STO-3G")
	if err != nil {
		t.Fatal(err)
	}
	h, refs, _ := s.ElementShells(1)
	wantExp := []float64{3.42525091, 0.62391373, 0.16885540}
	wantCoef := []float64{0.15432897, 0.53532814, 0.44463454}
	if len(h) != 1 || h[0].L != 0 || len(h[0].Exponents) != 3 {
		t.Fatalf("STO-3G H: %+v", h)
	}
	for i := range wantExp {
		if d := h[0].Exponents[i] - wantExp[i]; d > 1e-7 || d < -1e-7 {
			t.Errorf("exponent %d: %.8f, want %.8f", i, h[0].Exponents[i], wantExp[i])
		}
		if d := h[0].Coefficients[i] - wantCoef[i]; d > 1e-7 || d < -1e-7 {
			t.Errorf("coefficient %d: %.8f, want %.8f", i, h[0].Coefficients[i], wantCoef[i])
		}
	}
	if !strings.Contains(refs[0].Cites[0], "Hehre") {
		t.Errorf("STO-3G H reference %v", refs)
	}
	// 6-31G*: a single d shell with exponent 0.8 on C, N, O, F (Hariharan,
	// Pople, Theor. Chim. Acta 28, 213 (1973); from memory).
	s, err = Load("6-31G*")
	if err != nil {
		t.Fatal(err)
	}
	for _, z := range []int{6, 7, 8, 9} {
		shells, _, _ := s.ElementShells(z)
		last := shells[len(shells)-1]
		if last.L != 2 || len(last.Exponents) != 1 || last.Exponents[0] != 0.8 || last.Pure {
			t.Errorf("6-31G* %s polarization shell %+v", molecule.Symbol(z), last)
		}
	}
}

func TestHighestAngularMomentum(t *testing.T) {
	// cc-pVQZ for Zn reaches h functions (l = 5) (Balabanov, Peterson,
	// J. Chem. Phys. 123, 064107 (2005)); the def2 JK fitting set reaches
	// i (l = 6) for the 3d metals (Weigend, J. Comput. Chem. 29, 167 (2008)).
	tests := []struct {
		set  string
		z    int
		want int
	}{
		{"cc-pVQZ", 30, 5},
		{"cc-pVQZ", 8, 4},
		{"def2-universal-JKFIT", 30, 6},
	}
	for _, tc := range tests {
		s, err := Load(tc.set)
		if err != nil {
			t.Fatal(err)
		}
		shells, _, _ := s.ElementShells(tc.z)
		maxL := 0
		for _, sh := range shells {
			maxL = max(maxL, sh.L)
		}
		if maxL != tc.want {
			t.Errorf("%s %s: highest l %d, want %d", tc.set, molecule.Symbol(tc.z), maxL, tc.want)
		}
		if tc.want == 5 && !strings.Contains(Composition(shells), "1h") {
			t.Errorf("composition %s lacks h", Composition(shells))
		}
	}
}

func TestMissingElement(t *testing.T) {
	s, err := Load("6-31+G*")
	if err != nil {
		t.Fatal(err)
	}
	m := parse(t, "3\nKOH\nK 0 0 0\nO 0 0 2.2\nH 0 0 3.2\n")
	_, err = s.Shells(m, Default)
	var me *MissingElementError
	if !errors.As(err, &me) {
		t.Fatalf("error %v, want *MissingElementError", err)
	}
	if me.Set != "6-31+G*" || me.Element != "K" {
		t.Errorf("%+v", me)
	}
	// Sets with K, per data/INDEX.tsv.
	for _, want := range []string{"STO-3G", "6-31G*", "6-311+G**", "def2-SVP", "pcseg-1"} {
		if !slices.Contains(me.Alternatives, want) {
			t.Errorf("alternatives %v lack %s", me.Alternatives, want)
		}
	}
	for _, not := range []string{"6-31+G*", "6-31+G**", "cc-pVDZ", "aug-cc-pVDZ", "def2-universal-JFIT"} {
		if slices.Contains(me.Alternatives, not) {
			t.Errorf("alternatives %v contain %s", me.Alternatives, not)
		}
	}
	for _, w := range []string{"6-31+G* has no functions for K", "STO-3G", "def2-TZVP"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("message %q lacks %q", err, w)
		}
	}
	if s.Has(19) || !s.Has(18) {
		t.Error("Has")
	}
}

func TestShellsPlacement(t *testing.T) {
	s, err := Load("cc-pVDZ")
	if err != nil {
		t.Fatal(err)
	}
	m := parse(t, waterXYZ)
	shells, err := s.Shells(m, Default)
	if err != nil {
		t.Fatal(err)
	}
	// O [3s2p1d] then H [2s1p] twice, in atom order.
	wantAtom := []int{0, 0, 0, 0, 0, 0, 1, 1, 1, 2, 2, 2}
	wantL := []int{0, 0, 0, 1, 1, 2, 0, 0, 1, 0, 0, 1}
	if len(shells) != len(wantAtom) {
		t.Fatalf("%d shells", len(shells))
	}
	for i, sh := range shells {
		if sh.Atom != wantAtom[i] || sh.L != wantL[i] || sh.Center != m.Atoms[sh.Atom].Position {
			t.Errorf("shell %d: atom %d l %d center %v", i, sh.Atom, sh.L, sh.Center)
		}
		if sh.Pure != (sh.L >= 2) {
			t.Errorf("shell %d: Pure %v", i, sh.Pure)
		}
	}
	// Shells are copies: changing them leaves the set intact.
	shells[0].Exponents[0] = -1
	again, _ := s.Shells(m, Default)
	if again[0].Exponents[0] == -1 {
		t.Error("Shells shares storage with the set")
	}
	el, _, _ := s.ElementShells(8)
	el[0].Coefficients[0] = 42
	el2, _, _ := s.ElementShells(8)
	if el2[0].Coefficients[0] == 42 {
		t.Error("ElementShells shares storage with the set")
	}
	if _, err := s.Shells(m, Convention(7)); err == nil {
		t.Error("bad convention accepted")
	}
}

func TestConvention(t *testing.T) {
	tests := map[string]Convention{"": Default, "default": Default, "Cartesian": Cartesian, "spherical": Spherical, "pure": Spherical}
	for in, want := range tests {
		got, err := ParseConvention(in)
		if err != nil || got != want {
			t.Errorf("ParseConvention(%q) = %v %v", in, got, err)
		}
	}
	if _, err := ParseConvention("polar"); err == nil {
		t.Error("accepted polar")
	}
}

func TestAngularLetters(t *testing.T) {
	want := []string{"s", "p", "d", "f", "g", "h", "i", "k"}
	for l, w := range want {
		if AngularLetter(l) != w {
			t.Errorf("l=%d: %s", l, AngularLetter(l))
		}
	}
}

// TestParseSetRejects checks that malformed set data is refused.
func TestParseSetRejects(t *testing.T) {
	good := map[string]any{
		"name": "x", "description": "d", "role": "orbital", "functions": "spherical",
		"elements": map[string]any{"H": map[string]any{"Z": 1, "shells": []any{
			map[string]any{"l": 0, "exponents": []float64{1}, "coefficients": []float64{1}},
		}, "references": []any{}}},
	}
	raw, _ := json.Marshal(good)
	if _, err := parseSet(raw); err != nil {
		t.Fatalf("good set refused: %v", err)
	}
	bad := []string{
		`{"name":"x","role":"orbital","functions":"polar","elements":{}}`,
		`{"name":"x","role":"other","functions":"spherical","elements":{}}`,
		`{"name":"x","role":"orbital","functions":"spherical","elements":{"H":{"Z":2,"shells":[{"l":0,"exponents":[1],"coefficients":[1]}]}}}`,
		`{"name":"x","role":"orbital","functions":"spherical","elements":{"H":{"Z":1,"shells":[{"l":0,"exponents":[1,2],"coefficients":[1]}]}}}`,
		`{"name":"x","role":"orbital","functions":"spherical","elements":{"H":{"Z":1,"shells":[{"l":0,"exponents":[-1],"coefficients":[1]}]}}}`,
		`{"name":"x","role":"orbital","functions":"spherical","elements":{"H":{"Z":1,"shells":[{"l":2,"pure":false,"exponents":[1],"coefficients":[1]}]}}}`,
		`{"name":"x","role":"orbital","functions":"spherical","elements":{"H":{"Z":1,"shells":[{"l":9,"exponents":[1],"coefficients":[1]}]}}}`,
		`{"name":"x","role":"orbital","functions":"spherical","elements":{"H":{"Z":1,"shells":[]}}}`,
		`not json`,
	}
	for _, b := range bad {
		if _, err := parseSet([]byte(b)); err == nil {
			t.Errorf("accepted %s", b)
		}
	}
}

func BenchmarkLoad(b *testing.B) {
	for _, name := range []string{"6-31G*", "cc-pVQZ"} {
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				if _, err := Load(name); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
