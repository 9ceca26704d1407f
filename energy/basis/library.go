package basis

import (
	"bufio"
	"bytes"
	"embed"
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strings"

	"poise/energy/molecule"
)

// data holds the basis-set library: one JSON file per set and INDEX.tsv
// listing them (see doc.go and the NOTICE file for the sources).
//
//go:embed data/*.json data/INDEX.tsv
var data embed.FS

// Roles of basis sets.
const (
	RoleOrbital = "orbital" // expands molecular orbitals
	RoleJFit    = "jfit"    // auxiliary set for density fitting of the Coulomb term
	RoleJKFit   = "jkfit"   // auxiliary set for density fitting of Coulomb and exchange
)

// Angular conventions of basis sets (the Functions field).
const (
	FunctionsCartesian = "cartesian" // 6 d, 10 f, … functions per shell
	FunctionsSpherical = "spherical" // 5 d, 7 f, … functions per shell
)

// Info describes one basis set of the library without loading it.
type Info struct {
	Name        string   // canonical name, e.g. "6-31G*"
	Description string   // one line
	Role        string   // RoleOrbital, RoleJFit or RoleJKFit
	Functions   string   // FunctionsCartesian or FunctionsSpherical
	Elements    []string // element symbols covered, by atomic number
	file        string
}

// List returns every basis set in the library, in the library's order
// (minimal and Pople sets, then correlation-consistent, Karlsruhe and
// polarization-consistent sets, then fitting sets).
func List() []Info {
	infos, err := readIndex()
	if err != nil {
		// The index is compiled into the program and checked by the
		// tests; failing here is a build defect, not a user error.
		panic("basis: embedded index: " + err.Error())
	}
	return infos
}

// readIndex parses data/INDEX.tsv.
func readIndex() ([]Info, error) {
	raw, err := data.ReadFile("data/INDEX.tsv")
	if err != nil {
		return nil, err
	}
	var infos []Info
	sc := bufio.NewScanner(bytes.NewReader(raw))
	header := false
	line := 0
	for sc.Scan() {
		line++
		text := sc.Text()
		if strings.TrimSpace(text) == "" || strings.HasPrefix(text, "#") {
			continue
		}
		if !header {
			header = true
			continue
		}
		f := strings.Split(text, "\t")
		if len(f) != 6 {
			return nil, fmt.Errorf("INDEX.tsv line %d: %d columns, want 6", line, len(f))
		}
		infos = append(infos, Info{
			Name: f[0], file: f[1], Role: f[2], Functions: f[3],
			Elements: strings.Fields(f[4]), Description: f[5],
		})
	}
	return infos, sc.Err()
}

// UnknownSetError reports a basis-set name the library does not have.
type UnknownSetError struct {
	Name      string   // the name asked for
	Available []string // canonical names of every set in the library
}

func (e *UnknownSetError) Error() string {
	return fmt.Sprintf("unknown basis set %q; available: %s (spellings such as 6-31G(d) for 6-31G*, lower case, and names without dashes are accepted too)",
		e.Name, strings.Join(e.Available, ", "))
}

// normalizeName maps the ways people write a basis-set name to one key:
// lower case without blanks, dashes, underscores or slashes, with the
// polarization shorthands (d) → * and (d,p) → **.
func normalizeName(s string) string {
	s = strings.ToLower(s)
	s = strings.Map(func(r rune) rune {
		switch r {
		case ' ', '\t', '-', '_', '/':
			return -1
		}
		return r
	}, s)
	s = strings.ReplaceAll(s, "(d,p)", "**")
	s = strings.ReplaceAll(s, "(d)", "*")
	return s
}

// extraAliases are further accepted names (normalized) for some sets.
var extraAliases = map[string]string{
	"def2j":         "def2-universal-JFIT",
	"def2jfit":      "def2-universal-JFIT",
	"def2jk":        "def2-universal-JKFIT",
	"def2jkfit":     "def2-universal-JKFIT",
	"def2universal": "def2-universal-JKFIT",
}

// Lookup finds the library entry for a basis-set name, accepting the
// spellings Load accepts.
func Lookup(name string) (Info, error) {
	infos := List()
	key := normalizeName(name)
	if canon, ok := extraAliases[key]; ok {
		key = normalizeName(canon)
	}
	for _, in := range infos {
		if key == normalizeName(in.Name) || key == normalizeName(strings.TrimSuffix(in.file, ".json")) {
			return in, nil
		}
	}
	e := &UnknownSetError{Name: name}
	for _, in := range infos {
		e.Available = append(e.Available, in.Name)
	}
	return Info{}, e
}

// Load reads a basis set of the library by name. Names are matched without
// regard to case, dashes or blanks ("def2svp", "STO-3G", "sto3g"), and the
// parenthesized polarization notation is accepted ("6-31G(d,p)" is
// 6-31G**). An unknown name gives an *UnknownSetError listing the sets.
//
// Every call parses the set afresh (a few milliseconds for the largest) and
// returns a Set the caller owns; there is no shared cache.
func Load(name string) (*Set, error) {
	info, err := Lookup(name)
	if err != nil {
		return nil, err
	}
	raw, err := data.ReadFile("data/" + info.file)
	if err != nil {
		return nil, fmt.Errorf("basis set %s: %w", info.Name, err)
	}
	s, err := parseSet(raw)
	if err != nil {
		return nil, fmt.Errorf("basis set %s (embedded %s): %w", info.Name, info.file, err)
	}
	return s, nil
}

// JSON layout of a basis-set file.
type setJSON struct {
	Name        string                 `json:"name"`
	Description string                 `json:"description"`
	Role        string                 `json:"role"`
	Functions   string                 `json:"functions"`
	Elements    map[string]elementJSON `json:"elements"`
}

type elementJSON struct {
	Z          int         `json:"Z"`
	Shells     []shellJSON `json:"shells"`
	References []Reference `json:"references"`
}

type shellJSON struct {
	L            int       `json:"l"`
	Pure         *bool     `json:"pure"`
	Exponents    []float64 `json:"exponents"`
	Coefficients []float64 `json:"coefficients"`
}

// Reference is the literature for part of an element's basis.
type Reference struct {
	What  string   `json:"what"`  // which part, e.g. "polarization functions"
	Cites []string `json:"cites"` // "Authors Journal volume pages (year), doi:..."
}

// maxL is the highest angular momentum the library may contain.
const maxL = 6

// parseSet decodes and checks one basis-set file.
func parseSet(raw []byte) (*Set, error) {
	var js setJSON
	if err := json.Unmarshal(raw, &js); err != nil {
		return nil, err
	}
	if js.Functions != FunctionsCartesian && js.Functions != FunctionsSpherical {
		return nil, fmt.Errorf("functions %q is neither %s nor %s", js.Functions, FunctionsCartesian, FunctionsSpherical)
	}
	switch js.Role {
	case RoleOrbital, RoleJFit, RoleJKFit:
	default:
		return nil, fmt.Errorf("unknown role %q", js.Role)
	}
	s := &Set{
		Name: js.Name, Description: js.Description, Role: js.Role, Functions: js.Functions,
		elements: make(map[int]*element, len(js.Elements)),
	}
	pure := js.Functions == FunctionsSpherical
	for sym, ej := range js.Elements {
		z, ok := molecule.ElementBySymbol(sym)
		if !ok || z != ej.Z || molecule.Symbol(z) != sym {
			return nil, fmt.Errorf("element %q with Z %d", sym, ej.Z)
		}
		if len(ej.Shells) == 0 {
			return nil, fmt.Errorf("%s: no shells", sym)
		}
		el := &element{references: ej.References}
		for i, sh := range ej.Shells {
			if sh.L < 0 || sh.L > maxL {
				return nil, fmt.Errorf("%s shell %d: angular momentum %d", sym, i+1, sh.L)
			}
			if len(sh.Exponents) == 0 || len(sh.Exponents) != len(sh.Coefficients) {
				return nil, fmt.Errorf("%s shell %d: %d exponents, %d coefficients", sym, i+1, len(sh.Exponents), len(sh.Coefficients))
			}
			for k, a := range sh.Exponents {
				if !(a > 0) || math.IsInf(a, 0) || math.IsNaN(sh.Coefficients[k]) || math.IsInf(sh.Coefficients[k], 0) {
					return nil, fmt.Errorf("%s shell %d: primitive %d: exponent %g coefficient %g", sym, i+1, k+1, a, sh.Coefficients[k])
				}
			}
			if sh.L >= 2 && sh.Pure != nil && *sh.Pure != pure {
				return nil, fmt.Errorf("%s shell %d: pure=%v in a %s set", sym, i+1, *sh.Pure, js.Functions)
			}
			el.shells = append(el.shells, Shell{
				L:            sh.L,
				Pure:         pure && sh.L >= 2,
				Exponents:    sh.Exponents,
				Coefficients: sh.Coefficients,
			})
		}
		s.elements[z] = el
	}
	return s, nil
}

// setsWith returns the names of the library's sets of the given role that
// cover element Z, in library order.
func setsWith(role string, Z int) []string {
	sym := molecule.Symbol(Z)
	var names []string
	for _, in := range List() {
		if in.Role != role {
			continue
		}
		for _, e := range in.Elements {
			if e == sym {
				names = append(names, in.Name)
				break
			}
		}
	}
	return names
}

// sortedZ returns the keys of m in increasing order.
func sortedZ(m map[int]*element) []int {
	zs := make([]int, 0, len(m))
	for z := range m {
		zs = append(zs, z)
	}
	sort.Ints(zs)
	return zs
}
