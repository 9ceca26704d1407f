package molecule

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"poise/energy/units"
)

// InputError is a mistake in what the user gave: a malformed XYZ file, an
// impossible charge and multiplicity. Its message names the file and line
// where there is one.
type InputError struct {
	File string // file name as given; "" when the mistake is not in a file
	Line int    // 1-based line number; 0 when the mistake is not on one line
	Msg  string
}

// Error formats the error as "file:line: msg", "file: msg" or "msg".
func (e *InputError) Error() string {
	switch {
	case e.File == "":
		return e.Msg
	case e.Line <= 0:
		return e.File + ": " + e.Msg
	default:
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	}
}

// MinDistanceAngstrom is the smallest distance ParseXYZ accepts between two
// atoms. Real bonds are longer than 0.7 Å (H₂: 0.74 Å); closer atoms are
// almost always a duplicated line or coordinates in the wrong unit.
const MinDistanceAngstrom = 0.5

// maxCoordinateAngstrom bounds the magnitude of a coordinate: beyond it the
// input is certainly not a molecule, and later arithmetic could overflow.
const maxCoordinateAngstrom = 1e6

// ReadXYZFile reads and parses the XYZ file at path. A file that cannot be
// read is also reported as an *InputError.
func ReadXYZFile(path string) (*Molecule, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		msg := err.Error()
		var pe *os.PathError
		if errors.As(err, &pe) {
			msg = "cannot read: " + pe.Err.Error()
		}
		return nil, &InputError{File: path, Msg: msg}
	}
	return ParseXYZ(path, data)
}

// ParseXYZ parses a standard XYZ file: a line with the number of atoms, a
// comment line, then one line per atom "Symbol x y z" with coordinates in
// ångström. Symbols are case-insensitive and may be atomic numbers; extra
// columns after z and blank lines at the end are ignored. name is used in
// error messages. Positions are stored in bohr, masses are those of the most
// abundant isotopes, Charge and Multiplicity are left 0 (unset).
//
// Every mistake in the file is returned as an *InputError with the line
// where it was found.
func ParseXYZ(name string, data []byte) (*Molecule, error) {
	fail := func(line int, format string, args ...any) error {
		return &InputError{File: name, Line: line, Msg: fmt.Sprintf(format, args...)}
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf")) // UTF-8 byte-order mark
	lines := strings.Split(string(data), "\n")
	for i := range lines {
		lines[i] = strings.TrimSuffix(lines[i], "\r")
	}
	// Drop trailing blank lines.
	for len(lines) > 0 && strings.TrimSpace(lines[len(lines)-1]) == "" {
		lines = lines[:len(lines)-1]
	}
	if len(lines) == 0 {
		return nil, fail(0, "empty file: expected the number of atoms on the first line, a comment line, then one line per atom")
	}

	countText := strings.TrimSpace(lines[0])
	n, err := strconv.Atoi(countText)
	if err != nil || n < 1 {
		return nil, fail(1, "the first line must be the number of atoms (a positive integer), found %q", clip(countText))
	}
	found := 0 // non-blank lines after the comment line
	for _, l := range lines[min(2, len(lines)):] {
		if strings.TrimSpace(l) != "" {
			found++
		}
	}
	if len(lines)-2 < n {
		hint := ""
		if len(lines)-2 == n-1 {
			hint = " (the second line is a comment line, even when blank)"
		}
		return nil, fail(len(lines), "the first line says %s but %s the comment line%s", atoms(n), atomLines(found), hint)
	}

	m := &Molecule{
		Atoms:   make([]Atom, 0, n),
		Comment: strings.TrimSpace(lines[1]),
	}
	for i := 0; i < n; i++ {
		lineNo := i + 3
		atomNo := i + 1
		f := strings.Fields(lines[i+2])
		if len(f) == 0 {
			return nil, fail(lineNo, "blank line where atom %d of %d was expected", atomNo, n)
		}
		z, err := parseElement(f[0])
		if err != nil {
			return nil, fail(lineNo, "atom %d: %v", atomNo, err)
		}
		if len(f) < 4 {
			return nil, fail(lineNo, "atom %d has %d of its 3 coordinates: expected \"symbol x y z\" (ångström)", atomNo, len(f)-1)
		}
		var pos [3]float64
		for k := 0; k < 3; k++ {
			v, err := parseCoordinate(f[k+1])
			axis := "xyz"[k : k+1]
			if err != nil {
				return nil, fail(lineNo, "atom %d: %s coordinate %q is not a number", atomNo, axis, clip(f[k+1]))
			}
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fail(lineNo, "atom %d: %s coordinate %q is not finite", atomNo, axis, clip(f[k+1]))
			}
			if math.Abs(v) > maxCoordinateAngstrom {
				return nil, fail(lineNo, "atom %d: %s coordinate %s Å is implausibly large (more than %g Å from the origin)", atomNo, axis, f[k+1], maxCoordinateAngstrom)
			}
			pos[k] = v * units.AngstromBohr
		}
		m.Atoms = append(m.Atoms, Atom{Z: z, Symbol: symbols[z], Position: pos, Mass: MostAbundantMass(z)})
	}
	if extra := 2 + n; extra < len(lines) { // 0-based index of the first line past the atoms
		if _, err := strconv.Atoi(strings.TrimSpace(lines[extra])); err == nil {
			return nil, fail(extra+1, "the file holds more than one structure (after %d atoms a new atom count follows); give one structure", n)
		}
		return nil, fail(extra+1, "the first line says %s but %s the comment line", atoms(n), atomLines(found))
	}
	if i, j, d, ok := closestClash(m); ok {
		return nil, fail(j+3, "atoms %d (%s) and %d (%s) are %.3g Å apart, closer than %.1f Å: is an atom duplicated, or are the coordinates in nanometres rather than ångström?",
			i+1, m.Atoms[i].Symbol, j+1, m.Atoms[j].Symbol, d, MinDistanceAngstrom)
	}
	return m, nil
}

func atoms(n int) string {
	if n == 1 {
		return "1 atom"
	}
	return strconv.Itoa(n) + " atoms"
}

func atomLines(n int) string {
	if n == 1 {
		return "1 atom line follows"
	}
	return strconv.Itoa(n) + " atom lines follow"
}

// parseElement reads an element symbol or atomic number.
func parseElement(s string) (int, error) {
	if z, err := strconv.Atoi(s); err == nil {
		if z >= 1 && z <= MaxZ {
			return z, nil
		}
		return 0, fmt.Errorf("atomic number %d is not supported: %s", z, supportedElements)
	}
	if z, ok := ElementBySymbol(s); ok {
		return z, nil
	}
	if z := lookupSymbol(s); z > 0 {
		return 0, fmt.Errorf("element %s (Z %d) is not supported: %s", symbols[z], z, supportedElements)
	}
	return 0, fmt.Errorf("unknown element %q: %s", clip(s), supportedElements)
}

// parseCoordinate parses a decimal number; a Fortran exponent letter D
// ("1.5D-01") is accepted too.
func parseCoordinate(s string) (float64, error) {
	v, err := strconv.ParseFloat(s, 64)
	if err == nil || isRangeErr(err) {
		return v, nil // out of range: ±Inf or 0, judged by the caller
	}
	if strings.ContainsAny(s, "dD") && !strings.ContainsAny(s, "xX") {
		t := strings.NewReplacer("d", "e", "D", "e").Replace(s)
		if v, err2 := strconv.ParseFloat(t, 64); err2 == nil || isRangeErr(err2) {
			return v, nil
		}
	}
	return 0, err
}

func isRangeErr(err error) bool {
	ne, ok := err.(*strconv.NumError)
	return ok && ne.Err == strconv.ErrRange
}

// closestClash finds the pair of atoms closer than MinDistanceAngstrom that
// comes first in file order (smallest second index, then smallest first
// index). It sweeps atoms sorted by x, so typical molecules cost O(n log n).
func closestClash(m *Molecule) (i, j int, distanceAngstrom float64, ok bool) {
	n := len(m.Atoms)
	if n < 2 {
		return 0, 0, 0, false
	}
	limit := MinDistanceAngstrom * units.AngstromBohr
	idx := make([]int, n)
	for k := range idx {
		idx[k] = k
	}
	sort.SliceStable(idx, func(a, b int) bool {
		return m.Atoms[idx[a]].Position[0] < m.Atoms[idx[b]].Position[0]
	})
	bi, bj := -1, -1
	var bd float64
	for a := 0; a < n; a++ {
		pa := m.Atoms[idx[a]].Position
		for b := a + 1; b < n; b++ {
			pb := m.Atoms[idx[b]].Position
			if pb[0]-pa[0] >= limit {
				break
			}
			dx, dy, dz := pb[0]-pa[0], pb[1]-pa[1], pb[2]-pa[2]
			d2 := dx*dx + dy*dy + dz*dz
			if d2 >= limit*limit {
				continue
			}
			p, q := idx[a], idx[b]
			if p > q {
				p, q = q, p
			}
			if bj < 0 || q < bj || (q == bj && p < bi) {
				bi, bj, bd = p, q, math.Sqrt(d2)
			}
		}
	}
	if bj < 0 {
		return 0, 0, 0, false
	}
	return bi, bj, bd * units.BohrAngstrom, true
}

// clip shortens text quoted in an error message.
func clip(s string) string {
	const max = 40
	if len(s) <= max {
		return s
	}
	r := []rune(s)
	if len(r) <= max {
		return s
	}
	return string(r[:max]) + "…"
}

// WriteXYZ writes m as an XYZ file in ångström with eight decimals. Line
// breaks in comment are replaced by spaces so the file stays valid.
func WriteXYZ(w io.Writer, m *Molecule, comment string) error {
	bw := bufio.NewWriter(w)
	comment = strings.NewReplacer("\r\n", " ", "\n", " ", "\r", " ").Replace(comment)
	fmt.Fprintf(bw, "%d\n%s\n", len(m.Atoms), comment)
	for i, p := range m.PositionsAngstrom() {
		sym := m.Atoms[i].Symbol
		if sym == "" {
			sym = Symbol(m.Atoms[i].Z)
		}
		fmt.Fprintf(bw, "%-2s %16.8f %16.8f %16.8f\n", sym, p[0], p[1], p[2])
	}
	return bw.Flush()
}
