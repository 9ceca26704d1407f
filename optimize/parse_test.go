package optimize

import (
	"reflect"
	"strings"
	"testing"
)

func TestParseAtoms(t *testing.T) {
	for _, c := range []struct {
		in   string
		n    int
		want []int
		err  string
	}{
		{"1,2", 3, []int{0, 1}, ""},
		{" 3 1 ", 3, []int{2, 0}, ""},
		{"2,2,1", 3, []int{1, 0}, ""},
		{"1,,2", 3, []int{0, 1}, ""},
		{"", 3, nil, "give atom numbers"},
		{"0", 3, nil, "does not exist"},
		{"4", 3, nil, "numbered 1 to 3"},
		{"1-2", 3, nil, "not an atom number"},
		{"x", 3, nil, "not an atom number"},
	} {
		got, err := ParseAtoms(c.in, c.n)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("ParseAtoms(%q): error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || !reflect.DeepEqual(got, c.want) {
			t.Errorf("ParseAtoms(%q) = %v, %v; want %v", c.in, got, err, c.want)
		}
	}
}

func TestParseHold(t *testing.T) {
	for _, c := range []struct {
		in   string
		kind Kind
		want []int
		err  string
	}{
		{"1-2", Bond, []int{0, 1}, ""},
		{" 2-1-3 ", Angle, []int{1, 0, 2}, ""},
		{"1-2-3-4", Dihedral, []int{0, 1, 2, 3}, ""},
		{"1", 0, nil, "give 2, 3 or 4"},
		{"1-2-3-4-5", 0, nil, "give 2, 3 or 4"},
		{"1-1", 0, nil, "twice"},
		{"1-9", 0, nil, "does not exist"},
		{"1--2", 0, nil, "not an atom number"},
		{"a-b", 0, nil, "not an atom number"},
	} {
		got, err := ParseHold(c.in, 5)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("ParseHold(%q): error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || got.Kind != c.kind || !reflect.DeepEqual(got.Atoms[:got.NumAtoms()], c.want) {
			t.Errorf("ParseHold(%q) = %+v, %v", c.in, got, err)
		}
	}
}

// FuzzParseHold checks that any text either parses into a coordinate of
// distinct atoms within range or gives an error, without panicking.
func FuzzParseHold(f *testing.F) {
	for _, s := range []string{"1-2", "1-2-3", "1-2-3-4", "1", "", "-", "1--2", "9-1", "1-2-3-4-5", "٣-1", "1-2 "} {
		f.Add(s, 4)
	}
	f.Fuzz(func(t *testing.T, s string, n int) {
		if n < 0 || n > 1000 {
			return
		}
		c, err := ParseHold(s, n)
		if err != nil {
			return
		}
		k := c.NumAtoms()
		if k < 2 || k > 4 {
			t.Fatalf("%q: %d atoms", s, k)
		}
		for i := 0; i < k; i++ {
			if c.Atoms[i] < 0 || c.Atoms[i] >= n {
				t.Fatalf("%q: atom %d out of range", s, c.Atoms[i])
			}
			for j := 0; j < i; j++ {
				if c.Atoms[i] == c.Atoms[j] {
					t.Fatalf("%q: atom repeated", s)
				}
			}
		}
	})
}

// FuzzParseAtoms checks that any text either parses into distinct atoms
// within range or gives an error, without panicking.
func FuzzParseAtoms(f *testing.F) {
	for _, s := range []string{"1,2", "1 2", "", ",", "0", "1,1", "x", "99999999999999999999", "+1"} {
		f.Add(s, 3)
	}
	f.Fuzz(func(t *testing.T, s string, n int) {
		if n < 0 || n > 1000 {
			return
		}
		atoms, err := ParseAtoms(s, n)
		if err != nil {
			return
		}
		if len(atoms) == 0 {
			t.Fatalf("%q: no atoms and no error", s)
		}
		seen := map[int]bool{}
		for _, a := range atoms {
			if a < 0 || a >= n || seen[a] {
				t.Fatalf("%q: atoms %v", s, atoms)
			}
			seen[a] = true
		}
	})
}
