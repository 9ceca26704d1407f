package thermo

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const waterModes = `{
  "symbols": ["O", "H", "H"],
  "geometry_angstrom": [[0, 0, 0.1173], [0, 0.7572, -0.4692], [0, -0.7572, -0.4692]],
  "frequencies_cm1": [1595, 3657, 3756],
  "multiplicity": 1,
  "energy_hartree": -76.02,
  "normal_modes": "ignored"
}`

func TestReadModes(t *testing.T) {
	m, err := ReadModes(strings.NewReader(waterModes))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Symbols) != 3 || m.GeometryAngstrom[1][1] != 0.7572 || m.FrequenciesCm1[2] != 3756 ||
		m.Multiplicity != 1 || m.EnergyHartree == nil || *m.EnergyHartree != -76.02 || m.MassesU != nil {
		t.Fatalf("read %+v", m)
	}
	bad := map[string]string{
		"not JSON":              `{"symbols": [`,
		"no symbols":            `{"geometry_angstrom": [], "frequencies_cm1": []}`,
		"row count":             `{"symbols": ["H", "H"], "geometry_angstrom": [[0,0,0]], "frequencies_cm1": [4401]}`,
		"row length":            `{"symbols": ["H", "H"], "geometry_angstrom": [[0,0,0], [0,0]], "frequencies_cm1": [4401]}`,
		"mass count":            `{"symbols": ["H", "H"], "geometry_angstrom": [[0,0,0], [0,0,0.74]], "masses_u": [1], "frequencies_cm1": [4401]}`,
		"negative mass":         `{"symbols": ["H", "H"], "geometry_angstrom": [[0,0,0], [0,0,0.74]], "masses_u": [1, -1], "frequencies_cm1": [4401]}`,
		"descending":            `{"symbols": ["O", "H", "H"], "geometry_angstrom": [[0,0,0],[0,1,0],[1,0,0]], "frequencies_cm1": [3657, 1595, 3756]}`,
		"negative multiplicity": `{"symbols": ["H"], "geometry_angstrom": [[0,0,0]], "multiplicity": -2}`,
		"empty symbol":          `{"symbols": [" "], "geometry_angstrom": [[0,0,0]]}`,
		"string frequency":      `{"symbols": ["H"], "geometry_angstrom": [[0,0,0]], "frequencies_cm1": ["1"]}`,
		"trailing data":         `{"symbols": ["H"], "geometry_angstrom": [[0,0,0]]} {}`,
		"huge number":           `{"symbols": ["H"], "geometry_angstrom": [[1e999,0,0]]}`,
	}
	for name, doc := range bad {
		if _, err := ReadModes(strings.NewReader(doc)); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// FuzzReadModes checks that the reader never panics and that what it
// accepts satisfies its contract.
func FuzzReadModes(f *testing.F) {
	f.Add([]byte(waterModes))
	f.Add([]byte(`{"symbols":["Ar"],"geometry_angstrom":[[0,0,0]],"frequencies_cm1":[]}`))
	f.Add([]byte(`{"symbols":["N","O"],"geometry_angstrom":[[0,0,0],[0,0,1.15]],"masses_u":[14.003,15.995],"frequencies_cm1":[1904.2],"multiplicity":2}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := ReadModes(strings.NewReader(string(data)))
		if err != nil {
			return
		}
		if len(m.Symbols) == 0 || len(m.GeometryAngstrom) != len(m.Symbols) {
			t.Fatalf("accepted %d symbols, %d rows", len(m.Symbols), len(m.GeometryAngstrom))
		}
		for _, row := range m.GeometryAngstrom {
			if len(row) != 3 {
				t.Fatalf("accepted a row of %d", len(row))
			}
		}
		if m.MassesU != nil && len(m.MassesU) != len(m.Symbols) {
			t.Fatal("accepted a mass count mismatch")
		}
		for i, x := range m.FrequenciesCm1 {
			if math.IsNaN(x) || (i > 0 && x < m.FrequenciesCm1[i-1]) {
				t.Fatal("accepted bad frequencies")
			}
		}
		if m.Multiplicity < 0 {
			t.Fatal("accepted a negative multiplicity")
		}
	})
}

// TestFuzzSeedsCommitted makes sure the committed corpus exists.
func TestFuzzSeedsCommitted(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("testdata", "fuzz", "FuzzReadModes", "*"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no committed seeds: %v", err)
	}
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil || !strings.HasPrefix(string(b), "go test fuzz v1") {
			t.Errorf("%s is not a fuzz corpus file", f)
		}
	}
}
