package basis

import (
	"fmt"
	"strconv"
	"strings"

	"poise/energy/molecule"
)

// Set is one basis set loaded from the library: shells for each element it
// covers. A Set is not modified after Load and may be shared between
// goroutines; the shells it hands out are copies.
type Set struct {
	Name        string // canonical name, e.g. "6-31G*"
	Description string
	Role        string // RoleOrbital, RoleJFit or RoleJKFit
	Functions   string // FunctionsCartesian or FunctionsSpherical: the set's own convention

	elements map[int]*element
}

// element is the basis of one element of a set.
type element struct {
	shells     []Shell // Center zero, Atom 0, Pure from the set's convention
	references []Reference
}

// Convention chooses between Cartesian and spherical functions for shells
// with l ≥ 2.
type Convention int

const (
	// Default uses the set's own convention (its Functions field).
	Default Convention = iota
	// Cartesian forces (l+1)(l+2)/2 functions per shell.
	Cartesian
	// Spherical forces 2l+1 functions per shell.
	Spherical
)

// String names the convention.
func (c Convention) String() string {
	switch c {
	case Default:
		return "default"
	case Cartesian:
		return FunctionsCartesian
	case Spherical:
		return FunctionsSpherical
	}
	return "Convention(" + strconv.Itoa(int(c)) + ")"
}

// ParseConvention reads "default" (or ""), "cartesian" or "spherical"
// (also "pure"), ignoring case.
func ParseConvention(s string) (Convention, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "default":
		return Default, nil
	case "cartesian", "cart", "6d":
		return Cartesian, nil
	case "spherical", "pure", "5d":
		return Spherical, nil
	}
	return Default, fmt.Errorf("unknown function convention %q: use default, cartesian or spherical", s)
}

// Has reports whether the set covers element Z.
func (s *Set) Has(Z int) bool {
	_, ok := s.elements[Z]
	return ok
}

// Elements returns the atomic numbers the set covers, in increasing order.
func (s *Set) Elements() []int { return sortedZ(s.elements) }

// ElementShells returns the shells of element Z (centered at the origin,
// Atom 0, Pure from the set's convention) and the literature they come
// from. The slices are copies the caller owns.
func (s *Set) ElementShells(Z int) (shells []Shell, references []Reference, ok bool) {
	el, ok := s.elements[Z]
	if !ok {
		return nil, nil, false
	}
	shells = copyShells(el.shells)
	references = make([]Reference, len(el.references))
	for i, r := range el.references {
		references[i] = Reference{What: r.What, Cites: append([]string(nil), r.Cites...)}
	}
	return shells, references, true
}

// copyShells deep-copies shells, with all exponents and coefficients in one
// backing array.
func copyShells(src []Shell) []Shell {
	n := 0
	for i := range src {
		n += 2 * len(src[i].Exponents)
	}
	buf := make([]float64, n)
	out := make([]Shell, len(src))
	for i, sh := range src {
		k := len(sh.Exponents)
		e := buf[:k:k]
		c := buf[k : 2*k : 2*k]
		buf = buf[2*k:]
		copy(e, sh.Exponents)
		copy(c, sh.Coefficients)
		sh.Exponents, sh.Coefficients = e, c
		out[i] = sh
	}
	return out
}

// MissingElementError reports an element of a molecule that a basis set
// does not cover.
type MissingElementError struct {
	Set          string   // the basis set's name
	Element      string   // element symbol
	Alternatives []string // sets of the same role in the library that cover the element
}

func (e *MissingElementError) Error() string {
	msg := fmt.Sprintf("basis set %s has no functions for %s", e.Set, e.Element)
	if len(e.Alternatives) == 0 {
		return msg + "; no basis set of its kind in the library covers it"
	}
	return msg + "; basis sets that cover " + e.Element + ": " + strings.Join(e.Alternatives, ", ")
}

// Shells places the set's shells on every atom of m, in atom order: Center
// is the atom's position (bohr), Atom its index. Shells with l ≥ 2 are
// spherical or Cartesian as conv says, by default as the set is published;
// s and p shells are never marked Pure. An element the set lacks gives a
// *MissingElementError.
func (s *Set) Shells(m *molecule.Molecule, conv Convention) ([]Shell, error) {
	var pure bool
	switch conv {
	case Default:
		pure = s.Functions == FunctionsSpherical
	case Cartesian:
		pure = false
	case Spherical:
		pure = true
	default:
		return nil, fmt.Errorf("basis: unknown convention %d", int(conv))
	}
	n := 0
	for i := range m.Atoms {
		el, ok := s.elements[m.Atoms[i].Z]
		if !ok {
			sym := molecule.Symbol(m.Atoms[i].Z)
			if sym == "" {
				sym = "Z=" + strconv.Itoa(m.Atoms[i].Z)
			}
			return nil, &MissingElementError{Set: s.Name, Element: sym, Alternatives: setsWith(s.Role, m.Atoms[i].Z)}
		}
		n += len(el.shells)
	}
	out := make([]Shell, 0, n)
	for i := range m.Atoms {
		for _, sh := range copyShells(s.elements[m.Atoms[i].Z].shells) {
			sh.Center = m.Atoms[i].Position
			sh.Atom = i
			sh.Pure = pure && sh.L >= 2
			out = append(out, sh)
		}
	}
	return out, nil
}

// NumFunctions is the total number of basis functions of shells.
func NumFunctions(shells []Shell) int {
	n := 0
	for i := range shells {
		n += shells[i].NumFunctions()
	}
	return n
}

// angularLetters are the spectroscopic letters of l = 0, 1, 2, … (j is
// skipped by convention).
const angularLetters = "spdfghiklmnoqrtuvwxyz"

// AngularLetter returns the letter of angular momentum l ("s", "p", "d", …).
func AngularLetter(l int) string {
	if l >= 0 && l < len(angularLetters) {
		return angularLetters[l : l+1]
	}
	return "l" + strconv.Itoa(l)
}

// Composition summarizes shells by angular momentum in the usual notation,
// counting contracted shells: "3s2p1d".
func Composition(shells []Shell) string {
	var count []int
	for i := range shells {
		l := shells[i].L
		if l < 0 {
			continue
		}
		for len(count) <= l {
			count = append(count, 0)
		}
		count[l]++
	}
	var b strings.Builder
	for l, c := range count {
		if c > 0 {
			b.WriteString(strconv.Itoa(c))
			b.WriteString(AngularLetter(l))
		}
	}
	return b.String()
}
