package dispersion

import (
	"bufio"
	"bytes"
	_ "embed"
	"fmt"
	"math"
	"strconv"
	"strings"
	"sync"

	"poise/energy/units"
)

// MaxZ is the highest atomic number with D3 data in poise (krypton).
const MaxZ = 36

// maxRef is the largest number of reference systems of one element (H–Kr).
const maxRef = 5

// countSteepness is k1 of the coordination-number counting function and
// weightSteepness k3 of the Gaussian reference weights (Grimme et al. 2010,
// Eqs. 15 and 17).
const (
	countSteepness  = 16.0
	weightSteepness = 4.0
	// radiusScale turns the covalent radius of Pyykkö & Atsumi into the
	// D3 counting radius (Grimme et al. 2010).
	radiusScale = 4.0 / 3.0
	// CNCutoffBohr is the distance beyond which atoms do not count towards
	// a coordination number (the common choice; see doc.go).
	CNCutoffBohr = 40.0
)

var (
	//go:embed data/elements.tsv
	elementsTSV []byte
	//go:embed data/reference_cn.tsv
	referenceCNTSV []byte
	//go:embed data/c6.tsv
	c6TSV []byte
	//go:embed data/damping_bj.tsv
	dampingTSV []byte
)

// tables is the parsed D3 data. It is built once and never changed.
type tables struct {
	rcov  [MaxZ + 1]float64         // 4/3 × covalent radius, bohr
	q     [MaxZ + 1]float64         // sqrt(0.5 ⟨r⁴⟩/⟨r²⟩ sqrt Z)
	nref  [MaxZ + 1]int             // number of reference systems
	refCN [MaxZ + 1][maxRef]float64 // reference coordination numbers
	// c6 holds C6ref(a of Zi, b of Zj) at ((Zi·(MaxZ+1)+Zj)·maxRef+a)·maxRef+b,
	// both orders of (Zi, Zj) filled.
	c6     []float64
	params []Params // rows of damping_bj.tsv in file order
}

// c6Index is the offset of the maxRef×maxRef block of the element pair.
func c6Index(zi, zj int) int { return (zi*(MaxZ+1) + zj) * maxRef * maxRef }

// loadTables parses the embedded data once.
var loadTables = sync.OnceValues(func() (*tables, error) {
	return parseTables(elementsTSV, referenceCNTSV, c6TSV, dampingTSV)
})

// parseTables builds the tables from the four TSV files.
func parseTables(elements, referenceCN, c6, damping []byte) (*tables, error) {
	t := &tables{}
	if err := t.parseElements(elements); err != nil {
		return nil, err
	}
	if err := t.parseReferenceCN(referenceCN); err != nil {
		return nil, err
	}
	if err := t.parseC6(c6); err != nil {
		return nil, err
	}
	if err := t.parseDamping(damping); err != nil {
		return nil, err
	}
	return t, nil
}

// tsvRows calls fn with the fields of every data line: lines starting with
// '#', blank lines and the header line (its first field equals header) are
// skipped. Each row must have exactly n fields.
func tsvRows(name string, data []byte, header string, n int, fn func(line int, f []string) error) error {
	sc := bufio.NewScanner(bytes.NewReader(data))
	line := 0
	for sc.Scan() {
		line++
		s := strings.TrimRight(sc.Text(), "\r")
		if strings.TrimSpace(s) == "" || strings.HasPrefix(s, "#") {
			continue
		}
		f := strings.Split(s, "\t")
		if f[0] == header {
			continue
		}
		if len(f) != n {
			return fmt.Errorf("%s:%d: %d fields, want %d", name, line, len(f), n)
		}
		if err := fn(line, f); err != nil {
			return fmt.Errorf("%s:%d: %w", name, line, err)
		}
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	return nil
}

func atoi(s string, lo, hi int, what string) (int, error) {
	v, err := strconv.Atoi(strings.TrimSpace(s))
	if err != nil || v < lo || v > hi {
		return 0, fmt.Errorf("%s %q: want an integer from %d to %d", what, s, lo, hi)
	}
	return v, nil
}

func atof(s string, lo, hi float64, what string) (float64, error) {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || math.IsNaN(v) || v < lo || v > hi {
		return 0, fmt.Errorf("%s %q: want a number from %g to %g", what, s, lo, hi)
	}
	return v, nil
}

func (t *tables) parseElements(data []byte) error {
	err := tsvRows("elements.tsv", data, "Z", 5, func(_ int, f []string) error {
		z, err := atoi(f[0], 1, MaxZ, "Z")
		if err != nil {
			return err
		}
		if t.nref[z] != 0 {
			return fmt.Errorf("Z %d listed twice", z)
		}
		rc, err := atof(f[2], 0.1, 5, "covalent radius")
		if err != nil {
			return err
		}
		r4r2, err := atof(f[3], 0.1, 1000, "r4/r2")
		if err != nil {
			return err
		}
		n, err := atoi(f[4], 1, maxRef, "number of references")
		if err != nil {
			return err
		}
		t.rcov[z] = radiusScale * rc * units.AngstromBohr
		t.q[z] = math.Sqrt(0.5 * r4r2 * math.Sqrt(float64(z)))
		t.nref[z] = n
		return nil
	})
	if err != nil {
		return err
	}
	for z := 1; z <= MaxZ; z++ {
		if t.nref[z] == 0 {
			return fmt.Errorf("elements.tsv: no row for Z %d", z)
		}
	}
	return nil
}

func (t *tables) parseReferenceCN(data []byte) error {
	var seen [MaxZ + 1][maxRef]bool
	err := tsvRows("reference_cn.tsv", data, "Z", 3, func(_ int, f []string) error {
		z, err := atoi(f[0], 1, MaxZ, "Z")
		if err != nil {
			return err
		}
		r, err := atoi(f[1], 1, t.nref[z], fmt.Sprintf("reference of Z %d", z))
		if err != nil {
			return err
		}
		cn, err := atof(f[2], 0, 20, "coordination number")
		if err != nil {
			return err
		}
		if seen[z][r-1] {
			return fmt.Errorf("Z %d reference %d listed twice", z, r)
		}
		seen[z][r-1] = true
		t.refCN[z][r-1] = cn
		return nil
	})
	if err != nil {
		return err
	}
	for z := 1; z <= MaxZ; z++ {
		for r := 0; r < t.nref[z]; r++ {
			if !seen[z][r] {
				return fmt.Errorf("reference_cn.tsv: no row for Z %d reference %d", z, r+1)
			}
		}
	}
	return nil
}

func (t *tables) parseC6(data []byte) error {
	t.c6 = make([]float64, c6Index(MaxZ+1, 0))
	seen := make([]bool, len(t.c6))
	err := tsvRows("c6.tsv", data, "Zi", 5, func(_ int, f []string) error {
		zi, err := atoi(f[0], 1, MaxZ, "Zi")
		if err != nil {
			return err
		}
		zj, err := atoi(f[1], zi, MaxZ, "Zj")
		if err != nil {
			return err
		}
		a, err := atoi(f[2], 1, t.nref[zi], fmt.Sprintf("reference of Z %d", zi))
		if err != nil {
			return err
		}
		b, err := atoi(f[3], 1, t.nref[zj], fmt.Sprintf("reference of Z %d", zj))
		if err != nil {
			return err
		}
		c, err := atof(f[4], 0.1, 1e5, "C6")
		if err != nil {
			return err
		}
		for _, k := range [2]int{c6Index(zi, zj) + (a-1)*maxRef + b - 1, c6Index(zj, zi) + (b-1)*maxRef + a - 1} {
			if seen[k] && t.c6[k] != c {
				return fmt.Errorf("C6 of Z %d ref %d with Z %d ref %d given twice with different values", zi, a, zj, b)
			}
			seen[k] = true
			t.c6[k] = c
		}
		return nil
	})
	if err != nil {
		return err
	}
	for zi := 1; zi <= MaxZ; zi++ {
		for zj := zi; zj <= MaxZ; zj++ {
			for a := 0; a < t.nref[zi]; a++ {
				for b := 0; b < t.nref[zj]; b++ {
					if !seen[c6Index(zi, zj)+a*maxRef+b] {
						return fmt.Errorf("c6.tsv: no C6 for Z %d ref %d with Z %d ref %d", zi, a+1, zj, b+1)
					}
				}
			}
		}
	}
	return nil
}

func (t *tables) parseDamping(data []byte) error {
	err := tsvRows("damping_bj.tsv", data, "functional", 5, func(_ int, f []string) error {
		name := strings.ToLower(strings.TrimSpace(f[0]))
		if name == "" {
			return fmt.Errorf("empty functional name")
		}
		for _, p := range t.params {
			if p.Functional == name {
				return fmt.Errorf("functional %q listed twice", name)
			}
		}
		var v [4]float64
		for k, what := range [4]string{"s6", "a1", "s8", "a2"} {
			x, err := atof(f[k+1], 0, 10, what)
			if err != nil {
				return err
			}
			v[k] = x
		}
		t.params = append(t.params, Params{Functional: name, S6: v[0], A1: v[1], S8: v[2], A2Bohr: v[3]})
		return nil
	})
	if err != nil {
		return err
	}
	if len(t.params) == 0 {
		return fmt.Errorf("damping_bj.tsv: no parameters")
	}
	return nil
}
