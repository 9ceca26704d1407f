package freq

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"poise/energy/molecule"
)

// maxMassSpecs bounds the number of entries of a mass specification.
const maxMassSpecs = 10000

// ApplyMasses returns the masses (u) of the atoms with atomic numbers z:
// base (nil: the most abundant isotopes) changed by two specifications,
// both comma-separated lists ATOM=VALUE with atoms numbered from 1:
//
//	isotopes  "2=2,3=2"     mass numbers (here deuterium at atoms 2 and 3)
//	masses    "2=2.0141"    masses in u
//
// An atom may appear once across both. The note describes the changes
// ("2H at atoms 2, 3"), empty when there are none.
func ApplyMasses(base []float64, z []int, isotopes, masses string) ([]float64, string, error) {
	out := make([]float64, len(z))
	if base != nil {
		if len(base) != len(z) {
			return nil, "", fmt.Errorf("%d masses for %d atoms", len(base), len(z))
		}
		copy(out, base)
	} else {
		for i, zz := range z {
			out[i] = molecule.MostAbundantMass(zz)
			if out[i] == 0 {
				return nil, "", fmt.Errorf("atom %d: no mass for atomic number %d", i+1, zz)
			}
		}
	}
	seen := map[int]string{}
	labels := map[string][]int{}
	var order []string
	note := func(label string, atom int) {
		if _, ok := labels[label]; !ok {
			order = append(order, label)
		}
		labels[label] = append(labels[label], atom)
	}
	parse := func(spec, flag string, set func(atom int, value string) (string, error)) error {
		spec = strings.TrimSpace(spec)
		if spec == "" {
			return nil
		}
		fields := strings.Split(spec, ",")
		if len(fields) > maxMassSpecs {
			return fmt.Errorf("%s: more than %d entries", flag, maxMassSpecs)
		}
		for _, f := range fields {
			f = strings.TrimSpace(f)
			k, v, ok := strings.Cut(f, "=")
			if !ok {
				return fmt.Errorf("%s: %q is not ATOM=VALUE (e.g. 2=2 for deuterium at atom 2)", flag, clipSpec(f))
			}
			atom, err := strconv.Atoi(strings.TrimSpace(k))
			if err != nil || atom < 1 || atom > len(z) {
				return fmt.Errorf("%s: atom %q: give an atom number from 1 to %d", flag, clipSpec(strings.TrimSpace(k)), len(z))
			}
			if prev, dup := seen[atom]; dup {
				return fmt.Errorf("%s: atom %d already has a mass (from %s)", flag, atom, prev)
			}
			seen[atom] = flag
			label, err := set(atom-1, strings.TrimSpace(v))
			if err != nil {
				return fmt.Errorf("%s: atom %d: %w", flag, atom, err)
			}
			note(label, atom)
		}
		return nil
	}
	err := parse(isotopes, "--isotope", func(i int, v string) (string, error) {
		a, err := strconv.Atoi(v)
		if err != nil {
			return "", fmt.Errorf("mass number %q is not a whole number", clipSpec(v))
		}
		m, ok := molecule.IsotopeMass(z[i], a)
		if !ok {
			var have []string
			for _, iso := range molecule.Isotopes(z[i]) {
				have = append(have, strconv.Itoa(iso.A))
			}
			return "", fmt.Errorf("no isotope %d%s in the table (have %s)", a, molecule.Symbol(z[i]), strings.Join(have, ", "))
		}
		out[i] = m
		return fmt.Sprintf("%d%s", a, molecule.Symbol(z[i])), nil
	})
	if err != nil {
		return nil, "", err
	}
	err = parse(masses, "--mass", func(i int, v string) (string, error) {
		m, err := strconv.ParseFloat(v, 64)
		if err != nil || !(m > 0) || math.IsInf(m, 0) || m > 1000 {
			return "", fmt.Errorf("mass %q: give a positive mass in u (at most 1000)", clipSpec(v))
		}
		out[i] = m
		return fmt.Sprintf("%s of %g u", molecule.Symbol(z[i]), m), nil
	})
	if err != nil {
		return nil, "", err
	}
	var parts []string
	for _, l := range order {
		at := labels[l]
		sort.Ints(at)
		s := make([]string, len(at))
		for i, a := range at {
			s[i] = strconv.Itoa(a)
		}
		word := "atom"
		if len(at) > 1 {
			word = "atoms"
		}
		parts = append(parts, fmt.Sprintf("%s at %s %s", l, word, strings.Join(s, ", ")))
	}
	return out, strings.Join(parts, "; "), nil
}

func clipSpec(s string) string {
	r := []rune(s)
	if len(r) > 20 {
		return string(r[:20]) + "…"
	}
	return s
}
