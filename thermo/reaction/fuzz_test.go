package reaction

import (
	"errors"
	"math"
	"testing"
)

// FuzzParse checks that no input makes Parse panic, that every failure is
// an *Error, and that a success is consistent: at least one reaction,
// unique species, every term a declared species with a positive finite
// coefficient, and a String form that parses back to the same reaction.
// The seed corpus is in testdata/fuzz/FuzzParse.
func FuzzParse(f *testing.F) {
	f.Fuzz(func(t *testing.T, data []byte) {
		file, err := Parse("fuzz.reaction", data)
		if err != nil {
			var re *Error
			if !errors.As(err, &re) {
				t.Fatalf("error %T is not *Error: %v", err, err)
			}
			if file != nil {
				t.Fatal("file returned with an error")
			}
			return
		}
		if len(file.Reactions) == 0 {
			t.Fatal("success without a reaction")
		}
		seen := map[string]bool{}
		decl := ""
		for _, s := range file.Species {
			if seen[s.Name] || len(s.Files) == 0 || len(s.Files) != len(s.Paths) || s.Multiplicity < 0 {
				t.Fatalf("bad species %+v", s)
			}
			seen[s.Name] = true
			decl += "species " + s.Name + " x.xyz\n"
		}
		for _, r := range file.Reactions {
			if len(r.Reactants) == 0 || len(r.Products) == 0 {
				t.Fatalf("empty side: %+v", r)
			}
			for _, tm := range append(append([]Term(nil), r.Reactants...), r.Products...) {
				if !seen[tm.Species] || !(tm.Coefficient > 0) || math.IsInf(tm.Coefficient, 0) {
					t.Fatalf("bad term %+v", tm)
				}
			}
			back, err := Parse("back.reaction", []byte(decl+"reaction "+r.String()+"\n"))
			if err != nil {
				t.Fatalf("%q does not parse back: %v", r.String(), err)
			}
			if got := back.Reactions[0].String(); got != r.String() {
				t.Fatalf("round trip %q → %q", r.String(), got)
			}
		}
	})
}
