package molecule

import (
	"bufio"
	"bytes"
	_ "embed"
	"fmt"
	"strconv"
	"strings"
	"sync"
)

// MaxZ is the highest atomic number poise supports (krypton).
const MaxZ = 36

// symbols holds the element symbols of the whole periodic table, index Z
// (index 0 unused). Only Z 1..MaxZ are supported; the rest let error
// messages tell an unsupported element from a misspelled one.
var symbols = [...]string{"",
	"H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne",
	"Na", "Mg", "Al", "Si", "P", "S", "Cl", "Ar", "K", "Ca",
	"Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn",
	"Ga", "Ge", "As", "Se", "Br", "Kr", "Rb", "Sr", "Y", "Zr",
	"Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd", "In", "Sn",
	"Sb", "Te", "I", "Xe", "Cs", "Ba", "La", "Ce", "Pr", "Nd",
	"Pm", "Sm", "Eu", "Gd", "Tb", "Dy", "Ho", "Er", "Tm", "Yb",
	"Lu", "Hf", "Ta", "W", "Re", "Os", "Ir", "Pt", "Au", "Hg",
	"Tl", "Pb", "Bi", "Po", "At", "Rn", "Fr", "Ra", "Ac", "Th",
	"Pa", "U", "Np", "Pu", "Am", "Cm", "Bk", "Cf", "Es", "Fm",
	"Md", "No", "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds",
	"Rg", "Cn", "Nh", "Fl", "Mc", "Lv", "Ts", "Og",
}

// names holds the English element names for Z 1..MaxZ (IUPAC spelling).
var names = [MaxZ + 1]string{"",
	"hydrogen", "helium", "lithium", "beryllium", "boron", "carbon", "nitrogen",
	"oxygen", "fluorine", "neon", "sodium", "magnesium", "aluminium", "silicon",
	"phosphorus", "sulfur", "chlorine", "argon", "potassium", "calcium",
	"scandium", "titanium", "vanadium", "chromium", "manganese", "iron",
	"cobalt", "nickel", "copper", "zinc", "gallium", "germanium", "arsenic",
	"selenium", "bromine", "krypton",
}

// supportedElements is the phrase error messages use for the supported range.
const supportedElements = "poise supports H to Kr (Z 1–36)"

// ElementBySymbol returns the atomic number of a supported element (H–Kr)
// from its symbol, ignoring case and surrounding white space ("cl", "CL" and
// "Cl" are chlorine).
func ElementBySymbol(s string) (Z int, ok bool) {
	z := lookupSymbol(s)
	if z < 1 || z > MaxZ {
		return 0, false
	}
	return z, true
}

// lookupSymbol finds s anywhere in the periodic table; 0 if it is no symbol.
func lookupSymbol(s string) int {
	s = strings.TrimSpace(s)
	if s == "" || len(s) > 2 {
		return 0
	}
	for z := 1; z < len(symbols); z++ {
		if strings.EqualFold(symbols[z], s) {
			return z
		}
	}
	return 0
}

// Symbol returns the symbol of element Z ("Cl"), or "" outside H–Kr.
func Symbol(Z int) string {
	if Z < 1 || Z > MaxZ {
		return ""
	}
	return symbols[Z]
}

// ElementName returns the English name of element Z ("chlorine"), or ""
// outside H–Kr.
func ElementName(Z int) string {
	if Z < 1 || Z > MaxZ {
		return ""
	}
	return names[Z]
}

// Isotope is one naturally occurring (or, for ³H, tabulated) isotope.
type Isotope struct {
	A         int     // mass number
	Mass      float64 // atomic mass, u (AME 2020)
	Abundance float64 // natural abundance as a fraction 0..1 (not percent; NIST)
}

// elementData is the parsed isotope table of one element.
type elementData struct {
	isotopes       []Isotope
	standardWeight float64 // u, CIAAW 2021 (abridged)
	mostAbundant   int     // index into isotopes
}

// isotopesTSV is data/isotopes.tsv: AME 2020 masses, NIST abundances and
// CIAAW 2021 standard atomic weights for H–Kr (see doc.go).
//
//go:embed data/isotopes.tsv
var isotopesTSV []byte

// elementTable parses the embedded isotope table once, on first use. The
// result is read-only afterwards.
var elementTable = sync.OnceValue(func() *[MaxZ + 1]elementData {
	t, err := parseIsotopes(isotopesTSV)
	if err != nil {
		// The table is compiled into the program and checked by the tests;
		// a failure here is a build defect, not a user error.
		panic("molecule: embedded isotope table: " + err.Error())
	}
	return t
})

// parseIsotopes reads the isotope table (tab-separated, '#' comments, one
// header line).
func parseIsotopes(data []byte) (*[MaxZ + 1]elementData, error) {
	var t [MaxZ + 1]elementData
	sc := bufio.NewScanner(bytes.NewReader(data))
	line := 0
	header := false
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		if !header {
			header = true
			continue
		}
		f := strings.Split(text, "\t")
		if len(f) != 6 {
			return nil, fmt.Errorf("line %d: %d columns, want 6", line, len(f))
		}
		z, err1 := strconv.Atoi(f[0])
		a, err2 := strconv.Atoi(f[2])
		mass, err3 := strconv.ParseFloat(f[3], 64)
		abund, err4 := strconv.ParseFloat(f[4], 64)
		weight, err5 := strconv.ParseFloat(f[5], 64)
		for _, err := range []error{err1, err2, err3, err4, err5} {
			if err != nil {
				return nil, fmt.Errorf("line %d: %w", line, err)
			}
		}
		if z < 1 || z > MaxZ || symbols[z] != f[1] {
			return nil, fmt.Errorf("line %d: element %q with Z %d", line, f[1], z)
		}
		e := &t[z]
		e.isotopes = append(e.isotopes, Isotope{A: a, Mass: mass, Abundance: abund / 100})
		e.standardWeight = weight
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	for z := 1; z <= MaxZ; z++ {
		e := &t[z]
		if len(e.isotopes) == 0 {
			return nil, fmt.Errorf("no isotopes for %s", symbols[z])
		}
		for i, iso := range e.isotopes {
			if iso.Abundance > e.isotopes[e.mostAbundant].Abundance {
				e.mostAbundant = i
			}
		}
	}
	return &t, nil
}

// StandardAtomicWeight returns the CIAAW 2021 (abridged) standard atomic
// weight of element Z in u, or 0 outside H–Kr.
func StandardAtomicWeight(Z int) float64 {
	if Z < 1 || Z > MaxZ {
		return 0
	}
	return elementTable()[Z].standardWeight
}

// MostAbundantMass returns the AME 2020 mass (u) of the most abundant
// isotope of element Z, or 0 outside H–Kr.
func MostAbundantMass(Z int) float64 {
	if Z < 1 || Z > MaxZ {
		return 0
	}
	e := &elementTable()[Z]
	return e.isotopes[e.mostAbundant].Mass
}

// IsotopeMass returns the AME 2020 mass (u) of isotope A of element Z, if
// the table has it.
func IsotopeMass(Z, A int) (float64, bool) {
	if Z < 1 || Z > MaxZ {
		return 0, false
	}
	for _, iso := range elementTable()[Z].isotopes {
		if iso.A == A {
			return iso.Mass, true
		}
	}
	return 0, false
}

// Isotopes returns the tabulated isotopes of element Z in order of mass
// number (a fresh slice the caller may keep), or nil outside H–Kr.
func Isotopes(Z int) []Isotope {
	if Z < 1 || Z > MaxZ {
		return nil
	}
	return append([]Isotope(nil), elementTable()[Z].isotopes...)
}
