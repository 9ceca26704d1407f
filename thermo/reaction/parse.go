package reaction

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Error is a mistake in a reaction file, at a line (0: the whole file).
type Error struct {
	File string
	Line int
	Msg  string
}

func (e *Error) Error() string {
	switch {
	case e.File != "" && e.Line > 0:
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	case e.File != "":
		return e.File + ": " + e.Msg
	case e.Line > 0:
		return fmt.Sprintf("line %d: %s", e.Line, e.Msg)
	}
	return e.Msg
}

// Species is a declared species.
type Species struct {
	Name string
	// Files are the XYZ files as written in the reaction file, one per
	// conformer.
	Files []string
	// Paths are Files resolved against the reaction file's directory.
	Paths        []string
	Charge       int
	Multiplicity int // 2S+1; 0 for the default
	Line         int
}

// Term is a stoichiometric coefficient and a species.
type Term struct {
	Coefficient float64 // positive
	Species     string
}

// Reaction is a declared reaction.
type Reaction struct {
	// Name is the label, or "reaction N" for the N-th reaction without one.
	Name      string
	Labeled   bool
	Reactants []Term
	Products  []Term
	Line      int
}

// describe names the reaction in messages.
func (r Reaction) describe() string {
	if r.Labeled {
		return fmt.Sprintf("reaction %q", r.Name)
	}
	return r.Name
}

// Nu returns the signed stoichiometric coefficients: negative for
// reactants, positive for products (summed if a species is on both sides).
func (r Reaction) Nu() map[string]float64 {
	nu := map[string]float64{}
	for _, t := range r.Reactants {
		nu[t.Species] -= t.Coefficient
	}
	for _, t := range r.Products {
		nu[t.Species] += t.Coefficient
	}
	return nu
}

// String writes the reaction in the file's syntax.
func (r Reaction) String() string {
	side := func(ts []Term) string {
		s := make([]string, len(ts))
		for i, t := range ts {
			if t.Coefficient == 1 {
				s[i] = t.Species
			} else {
				s[i] = strconv.FormatFloat(t.Coefficient, 'g', -1, 64) + " " + t.Species
			}
		}
		return strings.Join(s, " + ")
	}
	return side(r.Reactants) + " -> " + side(r.Products)
}

// File is a parsed reaction file.
type File struct {
	Name      string // as given to Parse
	Species   []Species
	Reactions []Reaction
}

// Lookup returns the species called name.
func (f *File) Lookup(name string) (*Species, bool) {
	for i := range f.Species {
		if f.Species[i].Name == name {
			return &f.Species[i], true
		}
	}
	return nil, false
}

// Limits that keep a hostile file from exhausting memory.
const (
	maxFileBytes   = 1 << 20
	maxCoefficient = 1000
	maxNameLength  = 64
)

// ParseFile reads and parses the reaction file at path.
func ParseFile(path string) (*File, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		msg := err.Error()
		if pe, ok := err.(*os.PathError); ok {
			msg = "cannot read: " + pe.Err.Error()
		}
		return nil, &Error{File: path, Msg: msg}
	}
	return Parse(path, data)
}

// Parse parses a reaction file; name is used in error messages and its
// directory resolves relative XYZ paths. It checks the syntax, duplicated
// and unknown species; it does not read the XYZ files (see [Load]).
func Parse(name string, data []byte) (*File, error) {
	fail := func(line int, format string, args ...any) error {
		return &Error{File: name, Line: line, Msg: fmt.Sprintf(format, args...)}
	}
	if len(data) > maxFileBytes {
		return nil, fail(0, "file larger than %d bytes; a reaction file is a few lines", maxFileBytes)
	}
	if !utf8.Valid(data) {
		return nil, fail(0, "not UTF-8 text")
	}
	dir := filepath.Dir(name)
	f := &File{Name: name}
	text := strings.TrimPrefix(string(data), "\ufeff")
	for i, raw := range strings.Split(text, "\n") {
		line := i + 1
		s := raw
		if k := strings.IndexByte(s, '#'); k >= 0 {
			s = s[:k]
		}
		s = strings.TrimSpace(s)
		if s == "" {
			continue
		}
		fields := strings.Fields(s)
		switch strings.ToLower(fields[0]) {
		case "species":
			sp, err := parseSpecies(fields[1:], dir)
			if err != nil {
				return nil, fail(line, "%v", err)
			}
			sp.Line = line
			if prev, ok := f.Lookup(sp.Name); ok {
				return nil, fail(line, "species %q declared twice (first at line %d)", sp.Name, prev.Line)
			}
			f.Species = append(f.Species, sp)
		case "reaction":
			rest := strings.TrimSpace(s[len(fields[0]):])
			r, err := parseReaction(rest, len(f.Reactions)+1)
			if err != nil {
				return nil, fail(line, "%v", err)
			}
			r.Line = line
			for _, q := range f.Reactions {
				if q.Name == r.Name {
					return nil, fail(line, "%s declared twice (first at line %d)", r.describe(), q.Line)
				}
			}
			f.Reactions = append(f.Reactions, r)
		default:
			return nil, fail(line, "%q: a line starts with species or reaction", clip(fields[0]))
		}
	}
	if len(f.Reactions) == 0 {
		return nil, fail(0, "no reaction: add a line such as 'reaction ethylene + hydrogen -> ethane'")
	}
	for _, r := range f.Reactions {
		for _, t := range append(append([]Term(nil), r.Reactants...), r.Products...) {
			if _, ok := f.Lookup(t.Species); !ok {
				return nil, fail(r.Line, "%s: unknown species %q; declare it with 'species %s FILE.xyz'", r.describe(), t.Species, t.Species)
			}
		}
	}
	return f, nil
}

func clip(s string) string {
	if utf8.RuneCountInString(s) > 40 {
		r := []rune(s)
		return string(r[:40]) + "…"
	}
	return s
}

// checkName reports whether s is a valid species name.
func checkName(s string) error {
	if s == "" {
		return fmt.Errorf("missing species name")
	}
	if utf8.RuneCountInString(s) > maxNameLength {
		return fmt.Errorf("species name %q longer than %d characters", clip(s), maxNameLength)
	}
	first, _ := utf8.DecodeRuneInString(s)
	if !unicode.IsLetter(first) {
		return fmt.Errorf("species name %q must start with a letter", clip(s))
	}
	for _, c := range s {
		if unicode.IsLetter(c) || unicode.IsDigit(c) || strings.ContainsRune("_-.+()'", c) {
			continue
		}
		return fmt.Errorf("species name %q: character %q not allowed (letters, digits and _ - . + ( ) ' are)", clip(s), c)
	}
	if strings.Contains(s, "->") {
		return fmt.Errorf("species name %q must not contain ->", clip(s))
	}
	if strings.HasSuffix(s, ":") {
		return fmt.Errorf("species name %q must not end with a colon", clip(s))
	}
	return nil
}

func parseSpecies(fields []string, dir string) (Species, error) {
	var sp Species
	if len(fields) == 0 {
		return sp, fmt.Errorf("species needs a name and an XYZ file: species NAME FILE.xyz [charge Q] [multiplicity M]")
	}
	sp.Name = fields[0]
	if err := checkName(sp.Name); err != nil {
		return sp, err
	}
	seenCharge, seenMult := false, false
	for i := 1; i < len(fields); i++ {
		w := fields[i]
		switch strings.ToLower(w) {
		case "charge", "multiplicity":
			key := strings.ToLower(w)
			if i+1 >= len(fields) {
				return sp, fmt.Errorf("species %q: %s needs a whole number after it", sp.Name, key)
			}
			v, err := strconv.Atoi(fields[i+1])
			if err != nil || v < -100 || v > 100 {
				return sp, fmt.Errorf("species %q: %s %q is not a whole number from -100 to 100", sp.Name, key, clip(fields[i+1]))
			}
			i++
			if key == "charge" {
				if seenCharge {
					return sp, fmt.Errorf("species %q: charge given twice", sp.Name)
				}
				seenCharge, sp.Charge = true, v
			} else {
				if seenMult {
					return sp, fmt.Errorf("species %q: multiplicity given twice", sp.Name)
				}
				if v < 1 {
					return sp, fmt.Errorf("species %q: multiplicity %d: it is 2S+1, at least 1", sp.Name, v)
				}
				seenMult, sp.Multiplicity = true, v
			}
		default:
			if seenCharge || seenMult {
				return sp, fmt.Errorf("species %q: file %q after charge or multiplicity; list the files first", sp.Name, clip(w))
			}
			for _, prev := range sp.Files {
				if prev == w {
					return sp, fmt.Errorf("species %q: file %q listed twice", sp.Name, clip(w))
				}
			}
			sp.Files = append(sp.Files, w)
			p := w
			if !filepath.IsAbs(p) {
				p = filepath.Join(dir, p)
			}
			sp.Paths = append(sp.Paths, p)
		}
	}
	if len(sp.Files) == 0 {
		return sp, fmt.Errorf("species %q has no XYZ file: species NAME FILE.xyz [FILE2.xyz ...] [charge Q] [multiplicity M]", sp.Name)
	}
	return sp, nil
}

func parseReaction(s string, index int) (Reaction, error) {
	r := Reaction{Name: fmt.Sprintf("reaction %d", index)}
	if before, after, ok := strings.Cut(s, ":"); ok {
		label := strings.TrimSpace(before)
		if label == "" {
			return r, fmt.Errorf("empty reaction label before the colon")
		}
		if strings.Contains(label, "->") {
			return r, fmt.Errorf("a colon after the arrow: the label goes first, as in 'reaction combustion: a + b -> c'")
		}
		if utf8.RuneCountInString(label) > maxNameLength {
			return r, fmt.Errorf("reaction label %q longer than %d characters", clip(label), maxNameLength)
		}
		r.Name, r.Labeled = strings.Join(strings.Fields(label), " "), true
		s = after
	}
	sides := strings.Split(s, "->")
	if len(sides) != 2 {
		return r, fmt.Errorf("a reaction needs exactly one ->, as in 'reaction ethylene + hydrogen -> ethane'")
	}
	var err error
	if r.Reactants, err = parseSide(sides[0], "left"); err != nil {
		return r, err
	}
	if r.Products, err = parseSide(sides[1], "right"); err != nil {
		return r, err
	}
	return r, nil
}

func parseSide(s, which string) ([]Term, error) {
	fields := strings.Fields(s)
	if len(fields) == 0 {
		return nil, fmt.Errorf("nothing on the %s of ->", which)
	}
	var terms []Term
	var cur []string
	flush := func() error {
		var t Term
		switch len(cur) {
		case 0:
			return fmt.Errorf("a + with no species on the %s of ->", which)
		case 1:
			t = Term{Coefficient: 1, Species: cur[0]}
		case 2:
			c, err := parseCoefficient(cur[0])
			if err != nil {
				return err
			}
			t = Term{Coefficient: c, Species: cur[1]}
		default:
			return fmt.Errorf("%q: a term is an optional coefficient and one species name; separate terms with ' + '", clip(strings.Join(cur, " ")))
		}
		if err := checkName(t.Species); err != nil {
			return err
		}
		for _, p := range terms {
			if p.Species == t.Species {
				return fmt.Errorf("species %q appears twice on the %s of ->; write one term with the total coefficient", t.Species, which)
			}
		}
		terms = append(terms, t)
		cur = cur[:0]
		return nil
	}
	for _, w := range fields {
		if w == "+" {
			if err := flush(); err != nil {
				return nil, err
			}
			continue
		}
		cur = append(cur, w)
	}
	if err := flush(); err != nil {
		return nil, err
	}
	return terms, nil
}

// parseCoefficient reads a positive number: 2, 0.5 or 1/2.
func parseCoefficient(s string) (float64, error) {
	bad := fmt.Errorf("coefficient %q: give a positive number such as 2, 0.5 or 1/2", clip(s))
	var v float64
	if p, q, ok := strings.Cut(s, "/"); ok {
		a, err1 := strconv.Atoi(p)
		b, err2 := strconv.Atoi(q)
		if err1 != nil || err2 != nil || a <= 0 || b <= 0 {
			return 0, bad
		}
		v = float64(a) / float64(b)
	} else {
		if c, _ := utf8.DecodeRuneInString(s); !unicode.IsDigit(c) && c != '.' {
			return 0, bad
		}
		var err error
		v, err = strconv.ParseFloat(s, 64)
		if err != nil {
			return 0, bad
		}
	}
	if !(v > 0) || math.IsInf(v, 0) || v > maxCoefficient {
		return 0, fmt.Errorf("coefficient %q: give a positive number up to %d", clip(s), maxCoefficient)
	}
	return v, nil
}
