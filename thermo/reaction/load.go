package reaction

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"poise/energy/molecule"
)

// Composition is what a species is made of: element counts and charge.
type Composition struct {
	Elements map[string]int // element symbol → count
	Charge   int
}

// CompositionOf counts the elements of m and takes its charge.
func CompositionOf(m *molecule.Molecule) Composition {
	c := Composition{Elements: map[string]int{}, Charge: m.Charge}
	for _, a := range m.Atoms {
		s := a.Symbol
		if s == "" {
			s = molecule.Symbol(a.Z)
		}
		c.Elements[s]++
	}
	return c
}

func (c Composition) equal(d Composition) bool {
	if c.Charge != d.Charge || len(c.Elements) != len(d.Elements) {
		return false
	}
	for k, v := range c.Elements {
		if d.Elements[k] != v {
			return false
		}
	}
	return true
}

// balanceTolerance absorbs rounding of decimal coefficients (0.1 + 0.2).
const balanceTolerance = 1e-9

// CheckBalance returns an error naming every element and the charge that
// the reaction does not balance, e.g. "H: 4 on the left, 6 on the right".
func CheckBalance(r Reaction, comp map[string]Composition) error {
	left, right := map[string]float64{}, map[string]float64{}
	var qLeft, qRight float64
	add := func(ts []Term, side map[string]float64, q *float64) error {
		for _, t := range ts {
			c, ok := comp[t.Species]
			if !ok {
				return fmt.Errorf("%s: unknown species %q", r.describe(), t.Species)
			}
			for e, n := range c.Elements {
				side[e] += t.Coefficient * float64(n)
			}
			*q += t.Coefficient * float64(c.Charge)
		}
		return nil
	}
	if err := add(r.Reactants, left, &qLeft); err != nil {
		return err
	}
	if err := add(r.Products, right, &qRight); err != nil {
		return err
	}
	elems := map[string]bool{}
	for e := range left {
		elems[e] = true
	}
	for e := range right {
		elems[e] = true
	}
	names := make([]string, 0, len(elems))
	for e := range elems {
		names = append(names, e)
	}
	sort.Strings(names)
	var bad []string
	num := func(x float64) string { return fmt.Sprintf("%.6g", x) }
	for _, e := range names {
		if math.Abs(left[e]-right[e]) > balanceTolerance*math.Max(1, math.Abs(left[e])) {
			bad = append(bad, fmt.Sprintf("%s: %s on the left, %s on the right", e, num(left[e]), num(right[e])))
		}
	}
	if math.Abs(qLeft-qRight) > balanceTolerance*math.Max(1, math.Abs(qLeft)) {
		bad = append(bad, fmt.Sprintf("charge: %s on the left, %s on the right", num(qLeft), num(qRight)))
	}
	if len(bad) > 0 {
		return fmt.Errorf("%s (%s) is not balanced: %s", r.describe(), r, strings.Join(bad, "; "))
	}
	return nil
}

// System is a reaction file with every structure read and checked.
type System struct {
	*File
	// Molecules holds, per species name, one molecule per conformer (in
	// the order of the files), with charge and multiplicity set.
	Molecules map[string][]*molecule.Molecule
}

// Load reads the reaction file at path, every XYZ file it names, and checks
// charges and multiplicities, that conformers of a species have the same
// elements, and that every reaction balances elements and charge. Nothing
// is computed; every mistake is an *[Error] (or, for a broken XYZ file, an
// error wrapping *molecule.InputError).
func Load(path string) (*System, error) {
	f, err := ParseFile(path)
	if err != nil {
		return nil, err
	}
	return LoadParsed(f)
}

// LoadParsed does the work of [Load] for a parsed file.
func LoadParsed(f *File) (*System, error) {
	sys := &System{File: f, Molecules: map[string][]*molecule.Molecule{}}
	comp := map[string]Composition{}
	for _, sp := range f.Species {
		var first Composition
		for i, p := range sp.Paths {
			m, err := molecule.ReadXYZFile(p)
			if err != nil {
				return nil, &Error{File: f.Name, Line: sp.Line, Msg: fmt.Sprintf("species %q: %v", sp.Name, err)}
			}
			if err := m.SetSpin(sp.Charge, sp.Multiplicity); err != nil {
				return nil, &Error{File: f.Name, Line: sp.Line, Msg: fmt.Sprintf("species %q: %s: %v", sp.Name, p, err)}
			}
			c := CompositionOf(m)
			if i == 0 {
				first = c
			} else if !c.equal(first) {
				return nil, &Error{File: f.Name, Line: sp.Line, Msg: fmt.Sprintf("species %q: conformer %s is %s but %s is %s; conformers must have the same atoms",
					sp.Name, sp.Files[i], m.Formula(), sp.Files[0], sys.Molecules[sp.Name][0].Formula())}
			}
			sys.Molecules[sp.Name] = append(sys.Molecules[sp.Name], m)
		}
		comp[sp.Name] = first
	}
	for _, r := range f.Reactions {
		if err := CheckBalance(r, comp); err != nil {
			return nil, &Error{File: f.Name, Line: r.Line, Msg: err.Error()}
		}
	}
	return sys, nil
}
