package molecule

import (
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
)

// FuzzParseXYZ checks that no input makes ParseXYZ panic, that every failure
// is an *InputError, and that a success has as many atoms as the count line
// says, all with finite coordinates and supported elements. The seed corpus
// is in testdata/fuzz/FuzzParseXYZ.
func FuzzParseXYZ(f *testing.F) {
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := ParseXYZ("fuzz.xyz", data)
		if err != nil {
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("error %T is not *InputError: %v", err, err)
			}
			if m != nil {
				t.Fatal("molecule returned with an error")
			}
			return
		}
		n, err2 := countLine(data)
		if err2 != nil || n != len(m.Atoms) {
			t.Fatalf("%d atoms parsed, count line says %d (%v)", len(m.Atoms), n, err2)
		}
		for i, a := range m.Atoms {
			if a.Z < 1 || a.Z > MaxZ || a.Symbol != Symbol(a.Z) || a.Mass <= 0 {
				t.Fatalf("atom %d: %+v", i, a)
			}
			for _, x := range a.Position {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("atom %d: non-finite position %v", i, a.Position)
				}
			}
		}
		if e := m.NuclearRepulsion(); math.IsNaN(e) || math.IsInf(e, 0) {
			t.Fatalf("nuclear repulsion %g", e)
		}
	})
}

// countLine reads the atom count independently of ParseXYZ.
func countLine(data []byte) (int, error) {
	if len(data) >= 3 && string(data[:3]) == "\xef\xbb\xbf" {
		data = data[3:]
	}
	end := len(data)
	for i, c := range data {
		if c == '\n' {
			end = i
			break
		}
	}
	return strconv.Atoi(strings.TrimSpace(string(data[:end])))
}
