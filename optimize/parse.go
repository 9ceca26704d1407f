package optimize

import (
	"fmt"
	"strconv"
	"strings"
)

// ParseAtoms reads a list of atom numbers counted from 1, separated by
// commas or spaces ("1,2", "3 5"), for a molecule of n atoms, and returns
// them counted from 0, in the order given, without repeats.
func ParseAtoms(s string, n int) ([]int, error) {
	fields := strings.FieldsFunc(s, func(r rune) bool { return r == ',' || r == ' ' || r == '\t' })
	if len(fields) == 0 {
		return nil, fmt.Errorf("%q: give atom numbers such as 1,2", clip(s))
	}
	var out []int
	seen := map[int]bool{}
	for _, f := range fields {
		a, err := atomNumber(f, n)
		if err != nil {
			return nil, err
		}
		if !seen[a] {
			seen[a] = true
			out = append(out, a)
		}
	}
	return out, nil
}

// ParseHold reads a coordinate to hold, atom numbers from 1 joined by
// hyphens: "1-2" a bond, "1-2-3" the angle at atom 2, "1-2-3-4" the
// dihedral about the bond 2–3, for a molecule of n atoms.
func ParseHold(s string, n int) (Coordinate, error) {
	parts := strings.Split(strings.TrimSpace(s), "-")
	var c Coordinate
	switch len(parts) {
	case 2:
		c.Kind = Bond
	case 3:
		c.Kind = Angle
	case 4:
		c.Kind = Dihedral
	default:
		return c, fmt.Errorf("%q: give 2, 3 or 4 atom numbers joined by hyphens (1-2 a distance, 1-2-3 an angle, 1-2-3-4 a dihedral)", clip(s))
	}
	for i, p := range parts {
		a, err := atomNumber(p, n)
		if err != nil {
			return c, fmt.Errorf("%q: %w", clip(s), err)
		}
		for j := 0; j < i; j++ {
			if c.Atoms[j] == a {
				return c, fmt.Errorf("%q: atom %d appears twice", clip(s), a+1)
			}
		}
		c.Atoms[i] = a
	}
	return c, nil
}

func atomNumber(f string, n int) (int, error) {
	f = strings.TrimSpace(f)
	a, err := strconv.Atoi(f)
	if err != nil {
		return 0, fmt.Errorf("%q is not an atom number", clip(f))
	}
	if a < 1 || a > n {
		return 0, fmt.Errorf("atom %d does not exist: atoms are numbered 1 to %d", a, n)
	}
	return a - 1, nil
}

// clip shortens text quoted in an error message.
func clip(s string) string {
	r := []rune(s)
	if len(r) <= 40 {
		return s
	}
	return string(r[:40]) + "…"
}
