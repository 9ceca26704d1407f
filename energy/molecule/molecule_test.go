package molecule

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const waterXYZ = `3
water, r(OH) 0.9572 A, HOH 104.52 deg
O   0.000000   0.000000   0.117300
H   0.000000   0.756950  -0.469200
H   0.000000  -0.756950  -0.469200
`

func TestParseXYZGood(t *testing.T) {
	tests := []struct {
		name    string
		input   string
		symbols []string
		first   [3]float64 // ångström
		comment string
	}{
		{"water", waterXYZ, []string{"O", "H", "H"}, [3]float64{0, 0, 0.1173}, "water, r(OH) 0.9572 A, HOH 104.52 deg"},
		{"case and numbers", "3\n\ncl 0 0 0\nCL 2 0 0\n8 0 2 0\n", []string{"Cl", "Cl", "O"}, [3]float64{0, 0, 0}, ""},
		{"extra columns and blank tail", "2\nH2 with charges\nH 0 0 0 0.1 extra\nH 0 0 0.74 -0.1\n\n\n  \n", []string{"H", "H"}, [3]float64{0, 0, 0}, "H2 with charges"},
		{"CRLF, tabs, BOM", "\xef\xbb\xbf1\r\nKr atom\r\n\tkr\t1.5\t-2.5e0\t3E-1\r\n", []string{"Kr"}, [3]float64{1.5, -2.5, 0.3}, "Kr atom"},
		{"Fortran exponents", "1\n\nHe 1.5D+00 0.0d0 -2.0D-01\n", []string{"He"}, [3]float64{1.5, 0, -0.2}, ""},
		{"padded count", "  1  \ncomment\nH 0 0 0", []string{"H"}, [3]float64{}, "comment"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m, err := ParseXYZ("in.xyz", []byte(tc.input))
			if err != nil {
				t.Fatal(err)
			}
			if len(m.Atoms) != len(tc.symbols) {
				t.Fatalf("%d atoms, want %d", len(m.Atoms), len(tc.symbols))
			}
			for i, s := range tc.symbols {
				if m.Atoms[i].Symbol != s {
					t.Errorf("atom %d symbol %q, want %q", i+1, m.Atoms[i].Symbol, s)
				}
				z, _ := ElementBySymbol(s)
				if m.Atoms[i].Z != z || m.Atoms[i].Mass != MostAbundantMass(z) {
					t.Errorf("atom %d: Z %d mass %g", i+1, m.Atoms[i].Z, m.Atoms[i].Mass)
				}
			}
			for k := 0; k < 3; k++ {
				// Conversion with the CODATA 2018 Bohr radius.
				want := tc.first[k] / 0.529177210903
				if math.Abs(m.Atoms[0].Position[k]-want) > 1e-12 {
					t.Errorf("position[%d] = %.15g bohr, want %.15g", k, m.Atoms[0].Position[k], want)
				}
			}
			if m.Comment != tc.comment {
				t.Errorf("comment %q, want %q", m.Comment, tc.comment)
			}
			if m.Charge != 0 || m.Multiplicity != 0 {
				t.Errorf("charge %d multiplicity %d, want 0 0", m.Charge, m.Multiplicity)
			}
		})
	}
}

func TestParseXYZBad(t *testing.T) {
	tests := []struct {
		name  string
		input string
		line  int
		want  []string // substrings of the message
	}{
		{"empty", "", 0, []string{"bad.xyz: empty file"}},
		{"only blank lines", "\n \n\t\n", 0, []string{"empty file"}},
		{"count not a number", "three\n\nH 0 0 0\n", 1, []string{"bad.xyz:1:", "positive integer", `"three"`}},
		{"count zero", "0\n\n", 1, []string{"positive integer"}},
		{"count negative", "-2\n\nH 0 0 0\nH 0 0 1\n", 1, []string{"positive integer"}},
		{"count fractional", "2.0\n\nH 0 0 0\nH 0 0 1\n", 1, []string{"positive integer"}},
		{"no comment line", "2\n", 1, []string{"says 2 atoms but 0 atom lines"}},
		{"too few atoms", "3\nc\nH 0 0 0\nH 0 0 1\n", 4, []string{"says 3 atoms but 2 atom lines"}},
		{"too many atoms", "1\nc\nH 0 0 0\nH 0 0 1\n", 4, []string{"says 1 atom but 2 atom lines"}},
		{"comment line missing", "2\nH 0 0 0\nH 0 0 1\n", 3, []string{"says 2 atoms but 1 atom line follows the comment line", "comment line, even when blank"}},
		{"two frames", "1\nc\nH 0 0 0\n1\nc\nH 0 0 1\n", 4, []string{"more than one structure"}},
		{"blank line inside", "3\nc\nH 0 0 0\n\nH 0 0 1\nH 0 0 2\n", 4, []string{"blank line where atom 2 of 3"}},
		{"unknown element", "1\nc\nXx 0 0 0\n", 3, []string{"bad.xyz:3:", `unknown element "Xx"`, "H to Kr"}},
		{"unsupported element", "1\nc\nXe 0 0 0\n", 3, []string{"Xe (Z 54) is not supported", "H to Kr"}},
		{"unsupported number", "1\nc\n37 0 0 0\n", 3, []string{"atomic number 37", "H to Kr"}},
		{"atomic number zero", "1\nc\n0 0 0 0\n", 3, []string{"atomic number 0"}},
		{"dummy atom", "1\nc\nX 0 0 0\n", 3, []string{`unknown element "X"`}},
		{"missing coordinate", "1\nc\nH 0 0\n", 3, []string{"atom 1 has 2 of its 3 coordinates"}},
		{"symbol only", "1\nc\nH\n", 3, []string{"atom 1 has 0 of its 3 coordinates"}},
		{"non-numeric", "2\nc\nH 0 0 0\nH 0 abc 1\n", 4, []string{"atom 2: y coordinate \"abc\" is not a number"}},
		{"NaN", "1\nc\nH NaN 0 0\n", 3, []string{"x coordinate \"NaN\" is not finite"}},
		{"Inf", "1\nc\nH 0 0 -Inf\n", 3, []string{"z coordinate \"-Inf\" is not finite"}},
		{"overflow", "1\nc\nH 0 1e999 0\n", 3, []string{"not finite"}},
		{"huge", "1\nc\nH 0 1e300 0\n", 3, []string{"implausibly large"}},
		{"duplicated atom", "5\nc\nO 0 0 0\nH 0 0 1\nO 0 1 0\nH 1 0 0\nO 0 0.12 0\n", 7, []string{"atoms 1 (O) and 5 (O) are 0.12 Å apart", "duplicated", "nanometres"}},
		{"nanometres", "3\nwater in nm\nO 0 0 0.01173\nH 0 0.075695 -0.04692\nH 0 -0.075695 -0.04692\n", 4, []string{"atoms 1 (O) and 2 (H)", "nanometres"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m, err := ParseXYZ("bad.xyz", []byte(tc.input))
			if err == nil {
				t.Fatalf("no error; parsed %d atoms", len(m.Atoms))
			}
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %T %v is not *InputError", err, err)
			}
			if ie.File != "bad.xyz" || ie.Line != tc.line {
				t.Errorf("file %q line %d, want bad.xyz line %d (%v)", ie.File, ie.Line, tc.line, err)
			}
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("message %q lacks %q", err.Error(), w)
				}
			}
		})
	}
}

func TestInputErrorFormat(t *testing.T) {
	tests := []struct {
		e    InputError
		want string
	}{
		{InputError{"a.xyz", 3, "bad"}, "a.xyz:3: bad"},
		{InputError{"a.xyz", 0, "bad"}, "a.xyz: bad"},
		{InputError{"", 0, "bad"}, "bad"},
	}
	for _, tc := range tests {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("got %q, want %q", got, tc.want)
		}
	}
}

func TestReadXYZFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "w.xyz")
	if err := os.WriteFile(path, []byte(waterXYZ), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := ReadXYZFile(path)
	if err != nil || len(m.Atoms) != 3 {
		t.Fatalf("ReadXYZFile: %v", err)
	}
	_, err = ReadXYZFile(filepath.Join(dir, "missing.xyz"))
	var ie *InputError
	if !errors.As(err, &ie) || !strings.Contains(err.Error(), "missing.xyz") {
		t.Errorf("missing file: %v", err)
	}
}

func TestWriteXYZRoundTrip(t *testing.T) {
	m, err := ParseXYZ("w.xyz", []byte(waterXYZ))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteXYZ(&buf, m, "line one\nline two"); err != nil {
		t.Fatal(err)
	}
	back, err := ParseXYZ("back.xyz", buf.Bytes())
	if err != nil {
		t.Fatalf("%v\n%s", err, buf.String())
	}
	if back.Comment != "line one line two" {
		t.Errorf("comment %q", back.Comment)
	}
	a, b := m.PositionsAngstrom(), back.PositionsAngstrom()
	for i := range a {
		for k := 0; k < 3; k++ {
			if math.Abs(a[i][k]-b[i][k]) > 1e-8 {
				t.Errorf("atom %d coordinate %d: %g vs %g Å", i, k, a[i][k], b[i][k])
			}
		}
	}
	// PositionsAngstrom undoes the conversion to bohr.
	if math.Abs(a[1][1]-0.75695) > 1e-12 {
		t.Errorf("PositionsAngstrom y(H1) = %.15g, want 0.75695", a[1][1])
	}
}

func TestSpin(t *testing.T) {
	atoms := func(zs ...int) *Molecule {
		m := &Molecule{}
		for i, z := range zs {
			m.Atoms = append(m.Atoms, Atom{Z: z, Symbol: Symbol(z), Position: [3]float64{0, 0, 2 * float64(i)}})
		}
		return m
	}
	tests := []struct {
		name          string
		m             *Molecule
		charge, mult  int
		wantMult      int
		alpha, beta   int
		wantErrSubstr string
	}{
		{"H atom default doublet", atoms(1), 0, 0, 2, 1, 0, ""},
		{"H2 default singlet", atoms(1, 1), 0, 0, 1, 1, 1, ""},
		{"O2 triplet", atoms(8, 8), 0, 3, 3, 9, 7, ""},
		{"O2 quintet", atoms(8, 8), 0, 5, 5, 10, 6, ""},
		{"CH2 triplet", atoms(6, 1, 1), 0, 3, 3, 5, 3, ""},
		{"OH- default", atoms(8, 1), -1, 0, 1, 5, 5, ""},
		{"NH4+ default", atoms(7, 1, 1, 1, 1), 1, 0, 1, 5, 5, ""},
		{"H2+ default", atoms(1, 1), 1, 0, 2, 1, 0, ""},
		{"bare proton", atoms(1), 1, 0, 1, 0, 0, ""},
		{"bare proton singlet", atoms(1), 1, 1, 1, 0, 0, ""},
		{"bare proton triplet", atoms(1), 1, 3, 0, 0, 0, "needs 2 unpaired electrons, but there are only 0"},
		{"H2 doublet", atoms(1, 1), 0, 2, 0, 0, 0, "2 electrons cannot have multiplicity 2: an even electron count needs an odd multiplicity"},
		{"H atom singlet", atoms(1), 0, 1, 0, 0, 0, "1 electrons cannot have multiplicity 1: an odd electron count needs an even multiplicity"},
		{"negative multiplicity", atoms(1, 1), 0, -1, 0, 0, 0, "multiplicity -1 is invalid"},
		{"too high", atoms(1, 1), 0, 5, 0, 0, 0, "multiplicity 5 needs 4 unpaired electrons, but there are only 2"},
		{"negative electrons", atoms(1), 2, 0, 0, 0, 0, "charge +2 is larger than the total nuclear charge 1"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.m.SetSpin(tc.charge, tc.mult)
			if tc.wantErrSubstr != "" {
				var ie *InputError
				if !errors.As(err, &ie) {
					t.Fatalf("error %v, want *InputError", err)
				}
				if !strings.Contains(err.Error(), tc.wantErrSubstr) {
					t.Errorf("message %q lacks %q", err, tc.wantErrSubstr)
				}
				if tc.m.Charge != 0 || tc.m.Multiplicity != 0 {
					t.Errorf("failed SetSpin changed the molecule")
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if tc.m.Multiplicity != tc.wantMult || tc.m.Charge != tc.charge {
				t.Errorf("multiplicity %d charge %d, want %d %d", tc.m.Multiplicity, tc.m.Charge, tc.wantMult, tc.charge)
			}
			if tc.m.NumAlpha() != tc.alpha || tc.m.NumBeta() != tc.beta {
				t.Errorf("alpha %d beta %d, want %d %d", tc.m.NumAlpha(), tc.m.NumBeta(), tc.alpha, tc.beta)
			}
			if tc.m.NumAlpha()+tc.m.NumBeta() != tc.m.NumElectrons() {
				t.Errorf("alpha+beta != electrons")
			}
		})
	}
}

func TestNuclearRepulsionWater(t *testing.T) {
	// Geometry (bohr) and reference value 8.002367061810450 Eh: the water
	// worked example of a widely used published SCF programming tutorial
	// (from memory).
	m := &Molecule{Atoms: []Atom{
		{Z: 8, Symbol: "O", Position: [3]float64{0, -0.143225816552, 0}},
		{Z: 1, Symbol: "H", Position: [3]float64{1.638036840407, 1.136548822547, 0}},
		{Z: 1, Symbol: "H", Position: [3]float64{-1.638036840407, 1.136548822547, 0}},
	}}
	if got, want := m.NuclearRepulsion(), 8.002367061810450; math.Abs(got-want) > 1e-10 {
		t.Errorf("nuclear repulsion %.15f Eh, want %.15f", got, want)
	}
	if m.NumElectrons() != 10 {
		t.Errorf("electrons %d", m.NumElectrons())
	}
}

func TestNuclearRepulsionH2(t *testing.T) {
	// H2 at 1.4 bohr: 1/1.4 Eh by Coulomb's law in atomic units.
	m := &Molecule{Atoms: []Atom{{Z: 1}, {Z: 1, Position: [3]float64{0, 0, 1.4}}}}
	if got := m.NuclearRepulsion(); math.Abs(got-1/1.4) > 1e-15 {
		t.Errorf("got %g", got)
	}
}

func TestFormula(t *testing.T) {
	// Hill order (E. A. Hill, J. Am. Chem. Soc. 22, 478 (1900)): C, H, then
	// alphabetical; without C everything alphabetical.
	tests := []struct {
		zs   []int
		want string
	}{
		{[]int{8, 1, 1}, "H2O"},
		{[]int{6, 1, 1, 1, 8, 1}, "CH4O"},
		{[]int{17, 1}, "ClH"},
		{[]int{1, 6, 17, 17, 17}, "CHCl3"},
		{[]int{6, 8, 8}, "CO2"},
		{[]int{26, 17, 17, 17}, "Cl3Fe"},
		{[]int{35, 6, 1, 1, 1, 7}, "CH3BrN"},
	}
	for _, tc := range tests {
		m := &Molecule{}
		for _, z := range tc.zs {
			m.Atoms = append(m.Atoms, Atom{Z: z, Symbol: Symbol(z)})
		}
		if got := m.Formula(); got != tc.want {
			t.Errorf("%v: %q, want %q", tc.zs, got, tc.want)
		}
	}
}

func TestClone(t *testing.T) {
	m, err := ParseXYZ("w.xyz", []byte(waterXYZ))
	if err != nil {
		t.Fatal(err)
	}
	c := m.Clone()
	c.Atoms[0].Position[0] = 42
	c.Atoms[1].Mass = 2
	if m.Atoms[0].Position[0] == 42 || m.Atoms[1].Mass == 2 {
		t.Error("Clone shares atoms with the original")
	}
	if c.Comment != m.Comment || len(c.Atoms) != 3 {
		t.Error("Clone lost data")
	}
}

func TestElements(t *testing.T) {
	// Masses: AME 2020 (Wang et al., Chinese Phys. C 45, 030003 (2021)) as
	// tabulated in data/isotopes.tsv; standard weights: CIAAW 2021.
	tests := []struct {
		sym, name    string
		z            int
		mostAbundant float64
		standard     float64
	}{
		{"H", "hydrogen", 1, 1.0078250319, 1.008},
		{"C", "carbon", 6, 12.0, 12.011},
		{"O", "oxygen", 8, 15.9949146193, 15.999},
		{"Cl", "chlorine", 17, 34.96885269, 35.45},
		{"Ar", "argon", 18, 39.962383122, 39.95},
		{"Fe", "iron", 26, 55.93493554, 55.845},
		{"Se", "selenium", 34, 79.9165218, 78.971},
		{"Kr", "krypton", 36, 83.911497727, 83.798},
	}
	for _, tc := range tests {
		for _, s := range []string{tc.sym, strings.ToLower(tc.sym), strings.ToUpper(tc.sym), " " + tc.sym + " "} {
			if z, ok := ElementBySymbol(s); !ok || z != tc.z {
				t.Errorf("ElementBySymbol(%q) = %d %v", s, z, ok)
			}
		}
		if Symbol(tc.z) != tc.sym || ElementName(tc.z) != tc.name {
			t.Errorf("Z %d: %q %q", tc.z, Symbol(tc.z), ElementName(tc.z))
		}
		if got := MostAbundantMass(tc.z); math.Abs(got-tc.mostAbundant) > 1e-9 {
			t.Errorf("%s most abundant mass %.10f, want %.10f", tc.sym, got, tc.mostAbundant)
		}
		if got := StandardAtomicWeight(tc.z); got != tc.standard {
			t.Errorf("%s standard weight %g, want %g", tc.sym, got, tc.standard)
		}
	}
	if m, ok := IsotopeMass(1, 2); !ok || math.Abs(m-2.01410177784) > 1e-10 {
		t.Errorf("deuterium mass %v %v", m, ok) // AME 2020
	}
	if m, ok := IsotopeMass(17, 37); !ok || math.Abs(m-36.96590257) > 1e-8 {
		t.Errorf("37Cl mass %v %v", m, ok) // AME 2020
	}
	if _, ok := IsotopeMass(8, 20); ok {
		t.Error("20O is not in the table")
	}
	for _, s := range []string{"Xe", "X", "", "Hee", "Q"} {
		if _, ok := ElementBySymbol(s); ok {
			t.Errorf("ElementBySymbol(%q) accepted", s)
		}
	}
	for _, z := range []int{0, 37, -1} {
		if Symbol(z) != "" || MostAbundantMass(z) != 0 || Isotopes(z) != nil {
			t.Errorf("Z %d accepted", z)
		}
	}
	// Abundances of every element add up to one (NIST compositions).
	for z := 1; z <= MaxZ; z++ {
		sum := 0.0
		for _, iso := range Isotopes(z) {
			sum += iso.Abundance
		}
		if math.Abs(sum-1) > 2e-4 {
			t.Errorf("%s abundances sum to %g", Symbol(z), sum)
		}
	}
	// The standard atomic weight lies within the isotope mass range.
	for z := 1; z <= MaxZ; z++ {
		isos := Isotopes(z)
		w := StandardAtomicWeight(z)
		if w < isos[0].Mass-0.01 || w > isos[len(isos)-1].Mass+0.01 {
			t.Errorf("%s: weight %g outside isotope masses", Symbol(z), w)
		}
	}
}

func TestIsotopesCopy(t *testing.T) {
	a := Isotopes(6)
	a[0].Mass = 99
	if Isotopes(6)[0].Mass != 12 {
		t.Error("Isotopes returns shared storage")
	}
}
