package freq

import (
	"bytes"
	"strings"
	"testing"
)

// FuzzRead: the modes-file reader never panics, and what it accepts can
// be analyzed (Analyze returns a result or an error, never panics).
func FuzzRead(f *testing.F) {
	f.Add([]byte(`{"format":"poise-modes","format_version":1,"symbols":["H","H"],"geometry_angstrom":[[0,0,0],[0,0,0.74]],` +
		`"masses_u":[1.007825,1.007825],"hessian_hartree_per_bohr2":[[0,0,0,0,0,0],[0,0,0,0,0,0],[0,0,0.37,0,0,-0.37],[0,0,0,0,0,0],[0,0,0,0,0,0],[0,0,-0.37,0,0,0.37]]}`))
	f.Add([]byte(`{"format":"poise-modes","format_version":1,"symbols":["O"],"geometry_angstrom":[[0,0,0]],"masses_u":[16],` +
		`"hessian_hartree_per_bohr2":[[1,0,0],[0,1,0],[0,0,1]],"dipole_derivatives_au":[[1,0,0],[0,1,0],[0,0,1]]}`))
	f.Add([]byte(`{"format":"poise-modes","format_version":2}`))
	f.Add([]byte(`{"format":"poise-modes","format_version":1,"symbols":["Xx"]}`))
	f.Add([]byte(`[]`))
	f.Add([]byte(`{"format":"poise-modes"} {}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Read(bytes.NewReader(data))
		if err != nil {
			if m != nil {
				t.Fatal("file and error both returned")
			}
			return
		}
		_, _ = Analyze(m.System(nil))
	})
}

// FuzzApplyMasses: the --isotope and --mass parser never panics, and on
// success returns one positive mass per atom.
func FuzzApplyMasses(f *testing.F) {
	f.Add("2=2,3=2", "")
	f.Add("", "2=2.0141")
	f.Add("1=18", "3=2.5")
	f.Add("2=2,2=3", "")
	f.Add("0=1", "")
	f.Add(" 3 = 2 ", "1=1e400")
	f.Add("2", "=")
	f.Fuzz(func(t *testing.T, iso, mass string) {
		z := []int{8, 1, 1}
		m, _, err := ApplyMasses(nil, z, iso, mass)
		if err != nil {
			if strings.TrimSpace(err.Error()) == "" {
				t.Fatal("empty error message")
			}
			return
		}
		if len(m) != len(z) {
			t.Fatalf("%d masses for %d atoms", len(m), len(z))
		}
		for _, v := range m {
			if !(v > 0) {
				t.Fatalf("mass %g", v)
			}
		}
	})
}
