package gradient

import (
	"strings"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/xc"
)

func loadSet(t *testing.T, name string) *basis.Set {
	t.Helper()
	s, err := basis.Load(name)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func lookupXC(t *testing.T, name string) *xc.Functional {
	t.Helper()
	fn, err := xc.Lookup(name)
	if err != nil {
		t.Fatal(err)
	}
	return fn
}

// TestFitValidation: NewSCFSurface accepts a Coulomb-and-exchange fitting
// set for every method, a Coulomb-only one only for methods without exact
// exchange, no orbital set, and no set that misses an element of the
// molecule (the error names the element and the set).
func TestFitValidation(t *testing.T) {
	water := makeMol(t, waterDistorted, 0, 1)
	jk := loadSet(t, "def2-universal-jkfit")
	j := loadSet(t, "def2-universal-jfit")
	// A fitting set with no elements at all: it covers nothing.
	empty := &basis.Set{Name: "empty-jkfit", Role: basis.RoleJKFit, Functions: basis.FunctionsSpherical}
	for _, tc := range []struct {
		name   string
		fit    *basis.Set
		method string // "" leaves Config.Method nil (Hartree–Fock)
		want   []string
	}{
		{"no fit", nil, "", nil},
		{"jkfit nil method", jk, "", nil},
		{"jkfit hf", jk, "hf", nil},
		{"jkfit b3lyp", jk, "b3lyp", nil},
		{"jkfit pbe", jk, "pbe", nil},
		{"jfit pbe", j, "pbe", nil},
		{"jfit blyp", j, "blyp", nil},
		{"jfit nil method", j, "", []string{"def2-universal-JFIT", "Coulomb", "hf"}},
		{"jfit hf", j, "hf", []string{"Coulomb", "hf"}},
		{"jfit b3lyp", j, "b3lyp", []string{"Coulomb", "b3lyp"}},
		{"jfit pbe0", j, "pbe0", []string{"Coulomb", "pbe0"}},
		{"orbital set", loadSet(t, "def2-svp"), "", []string{"def2-SVP", "not a density-fitting set"}},
		{"missing element", empty, "", []string{"empty-jkfit", "O"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var fn *xc.Functional
			if tc.method != "" {
				fn = lookupXC(t, tc.method)
			}
			_, err := NewSCFSurface(water, Config{Basis: loadSet(t, "sto-3g"), Method: fn, Fit: tc.fit})
			if tc.want == nil {
				if err != nil {
					t.Fatalf("rejected: %v", err)
				}
				return
			}
			if err == nil {
				t.Fatal("accepted")
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not say %q", err, w)
				}
			}
		})
	}
}

// TestFitShellsFollowGeometry: the auxiliary shells of an evaluation sit on
// the atoms at the evaluated coordinates, in spherical functions even when
// the orbital basis is Cartesian, and there are none without fitting.
func TestFitShellsFollowGeometry(t *testing.T) {
	water := makeMol(t, waterDistorted, 0, 1)
	jk := loadSet(t, "def2-universal-jkfit")
	for _, tc := range []struct {
		name string
		conv basis.Convention
		fit  *basis.Set
	}{
		{"cartesian orbitals", basis.Cartesian, jk},
		{"spherical orbitals", basis.Spherical, jk},
		{"no fit", basis.Cartesian, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := NewSCFSurface(water, Config{Basis: loadSet(t, "6-31g*"), Convention: tc.conv, Fit: tc.fit})
			if err != nil {
				t.Fatal(err)
			}
			m := water.Clone()
			m.Atoms[1].Position[0] += 0.3
			m.Atoms[2].Position[2] -= 0.2
			aux, err := FitShells(s.cfg.Fit, m)
			if err != nil {
				t.Fatal(err)
			}
			if tc.fit == nil {
				if aux != nil {
					t.Fatalf("%d auxiliary shells without fitting", len(aux))
				}
				return
			}
			if len(aux) == 0 {
				t.Fatal("no auxiliary shells")
			}
			perAtom := make([]int, len(m.Atoms))
			high := 0
			for i, sh := range aux {
				if sh.Center != m.Atoms[sh.Atom].Position {
					t.Errorf("shell %d on atom %d at %v, the atom is at %v", i, sh.Atom, sh.Center, m.Atoms[sh.Atom].Position)
				}
				if sh.L >= 2 {
					high++
					if !sh.Pure {
						t.Errorf("shell %d (l=%d) Cartesian: fitting sets are spherical", i, sh.L)
					}
				}
				perAtom[sh.Atom]++
			}
			if high == 0 {
				t.Error("no d or higher auxiliary shells: the convention is not tested")
			}
			for a, n := range perAtom {
				want, _, _ := jk.ElementShells(m.Atoms[a].Z)
				if n != len(want) {
					t.Errorf("atom %d: %d auxiliary shells, the set has %d for %s", a, n, len(want), m.Atoms[a].Symbol)
				}
			}
		})
	}
}

// TestFitShellsAngularMomentum: def2-universal-JKFIT carries l = 6
// functions for Sc–Zn (the published set, as embedded), beyond the
// integrals' l = 5; asking for it is an error naming the set and the
// element, not a panic.
func TestFitShellsAngularMomentum(t *testing.T) {
	jk := loadSet(t, "def2-universal-jkfit")
	fe := &molecule.Molecule{Atoms: []molecule.Atom{{Z: 26, Symbol: "Fe", Mass: molecule.MostAbundantMass(26)}}}
	_, err := FitShells(jk, fe)
	if err == nil {
		t.Fatal("l = 6 fitting functions accepted")
	}
	for _, w := range []string{"def2-universal-JKFIT", "Fe", "6"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("error %q does not say %q", err, w)
		}
	}
	// The same set serves the lighter elements.
	if _, err := FitShells(jk, &molecule.Molecule{Atoms: []molecule.Atom{{Z: 8, Symbol: "O", Mass: molecule.MostAbundantMass(8)}}}); err != nil {
		t.Errorf("oxygen: %v", err)
	}
}
