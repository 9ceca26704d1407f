package molecule

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
