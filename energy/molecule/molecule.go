package molecule

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"poise/energy/units"
)

// Atom is one nucleus of a molecule.
type Atom struct {
	Z        int        // atomic number
	Symbol   string     // element symbol, capitalized as usual ("Cl")
	Position [3]float64 // bohr
	Mass     float64    // u; the most abundant isotope unless set otherwise
}

// Molecule is a set of nuclei with a total charge and a spin multiplicity.
type Molecule struct {
	Atoms        []Atom
	Charge       int
	Multiplicity int    // 2S+1
	Comment      string // the XYZ comment line
}

// NumElectrons is the number of electrons: the sum of the nuclear charges
// minus the total charge.
func (m *Molecule) NumElectrons() int {
	n := 0
	for i := range m.Atoms {
		n += m.Atoms[i].Z
	}
	return n - m.Charge
}

// multiplicity returns the multiplicity in effect: the one set, or the
// default (1 for an even electron count, 2 for an odd one) while unset.
func (m *Molecule) multiplicity() int {
	if m.Multiplicity > 0 {
		return m.Multiplicity
	}
	if m.NumElectrons()%2 != 0 {
		return 2
	}
	return 1
}

// NumAlpha is the number of spin-up electrons, (N + 2S)/2. It uses the
// default multiplicity while none is set; SetSpin validates the pair.
func (m *Molecule) NumAlpha() int {
	return (m.NumElectrons() + m.multiplicity() - 1) / 2
}

// NumBeta is the number of spin-down electrons, (N − 2S)/2.
func (m *Molecule) NumBeta() int {
	return (m.NumElectrons() - m.multiplicity() + 1) / 2
}

// SetSpin sets the total charge and the spin multiplicity 2S+1 after
// checking that they fit the nuclei. Multiplicity 0 chooses the default: 1
// (singlet) for an even electron count, 2 (doublet) for an odd one.
//
// A charge that removes every electron (a bare proton, H⁺) is accepted with
// multiplicity 1: it is a valid nuclear configuration, and whether a
// calculation can do anything with it is for the calculation to say. A
// charge that would leave a negative number of electrons is an error.
//
// Errors are *InputError values with an empty File.
func (m *Molecule) SetSpin(charge, multiplicity int) error {
	nuclear := 0
	for i := range m.Atoms {
		nuclear += m.Atoms[i].Z
	}
	n := nuclear - charge
	if n < 0 {
		return &InputError{Msg: fmt.Sprintf("charge %+d is larger than the total nuclear charge %d: it would leave %d electrons", charge, nuclear, n)}
	}
	if multiplicity < 0 {
		return &InputError{Msg: fmt.Sprintf("multiplicity %d is invalid: the multiplicity 2S+1 is at least 1 (0 chooses the default)", multiplicity)}
	}
	if multiplicity == 0 {
		multiplicity = 1
		if n%2 != 0 {
			multiplicity = 2
		}
	}
	if (multiplicity-1)%2 != n%2 {
		if n%2 == 0 {
			return &InputError{Msg: fmt.Sprintf("%d electrons cannot have multiplicity %d: an even electron count needs an odd multiplicity (1, 3, 5, …)", n, multiplicity)}
		}
		return &InputError{Msg: fmt.Sprintf("%d electrons cannot have multiplicity %d: an odd electron count needs an even multiplicity (2, 4, 6, …)", n, multiplicity)}
	}
	if multiplicity-1 > n {
		return &InputError{Msg: fmt.Sprintf("multiplicity %d needs %d unpaired electrons, but there are only %d electrons", multiplicity, multiplicity-1, n)}
	}
	m.Charge = charge
	m.Multiplicity = multiplicity
	return nil
}

// NuclearRepulsion is the Coulomb repulsion energy of the nuclei, Σ ZᵢZⱼ/rᵢⱼ,
// in hartree (positions in bohr).
func (m *Molecule) NuclearRepulsion() float64 {
	e := 0.0
	for i := 1; i < len(m.Atoms); i++ {
		a := &m.Atoms[i]
		for j := 0; j < i; j++ {
			b := &m.Atoms[j]
			dx := a.Position[0] - b.Position[0]
			dy := a.Position[1] - b.Position[1]
			dz := a.Position[2] - b.Position[2]
			e += float64(a.Z*b.Z) / math.Sqrt(dx*dx+dy*dy+dz*dz)
		}
	}
	return e
}

// Formula returns the empirical formula in Hill order: C first, then H,
// then the other elements alphabetically; without carbon, all elements
// alphabetically ("CH4O", "H2O", "ClH"). Counts of one are omitted.
func (m *Molecule) Formula() string {
	count := map[string]int{}
	for i := range m.Atoms {
		s := m.Atoms[i].Symbol
		if s == "" {
			s = Symbol(m.Atoms[i].Z)
		}
		count[s]++
	}
	var order []string
	if count["C"] > 0 {
		order = append(order, "C")
		if count["H"] > 0 {
			order = append(order, "H")
		}
	}
	var rest []string
	for s := range count {
		if len(order) > 0 && (s == "C" || s == "H") {
			continue
		}
		rest = append(rest, s)
	}
	sort.Strings(rest)
	order = append(order, rest...)
	var b strings.Builder
	for _, s := range order {
		b.WriteString(s)
		if count[s] > 1 {
			b.WriteString(strconv.Itoa(count[s]))
		}
	}
	return b.String()
}

// Clone returns a deep copy of m.
func (m *Molecule) Clone() *Molecule {
	c := *m
	c.Atoms = append([]Atom(nil), m.Atoms...)
	return &c
}

// PositionsAngstrom returns the atom positions converted to ångström.
func (m *Molecule) PositionsAngstrom() [][3]float64 {
	p := make([][3]float64, len(m.Atoms))
	for i := range m.Atoms {
		for k := 0; k < 3; k++ {
			p[i][k] = m.Atoms[i].Position[k] * units.BohrAngstrom
		}
	}
	return p
}
