package thermo

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
)

// maxModesBytes bounds the size of a modes file read into memory.
const maxModesBytes = 64 << 20

// Modes is the part of a modes JSON file that thermochemistry reads (see
// the package documentation for the contract). Other keys are ignored.
type Modes struct {
	Symbols          []string    `json:"symbols"`
	GeometryAngstrom [][]float64 `json:"geometry_angstrom"`
	MassesU          []float64   `json:"masses_u,omitempty"`
	FrequenciesCm1   []float64   `json:"frequencies_cm1"`
	Multiplicity     int         `json:"multiplicity,omitempty"`
	EnergyHartree    *float64    `json:"energy_hartree,omitempty"`
}

// ModesError is a defect of a modes file; the message says what to change.
type ModesError struct {
	Msg string
}

func (e *ModesError) Error() string { return "modes file: " + e.Msg }

func modesErr(format string, a ...any) error { return &ModesError{Msg: fmt.Sprintf(format, a...)} }

// ReadModesFile reads and checks a modes JSON file.
func ReadModesFile(path string) (*Modes, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m, err := ReadModes(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return m, nil
}

// ReadModes reads and checks a modes JSON document: symbols and geometry
// of equal length with three finite coordinates per atom, optional masses
// (positive, one per atom), finite frequencies in ascending order, a
// multiplicity ≥ 1 if given and a finite energy if given.
func ReadModes(r io.Reader) (*Modes, error) {
	data, err := io.ReadAll(io.LimitReader(r, maxModesBytes+1))
	if err != nil {
		return nil, err
	}
	if len(data) > maxModesBytes {
		return nil, modesErr("larger than %d MiB", maxModesBytes>>20)
	}
	var m Modes
	dec := json.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&m); err != nil {
		return nil, modesErr("not valid JSON of the expected shape: %v", err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, modesErr("extra data after the JSON object")
	}
	if err := m.check(); err != nil {
		return nil, err
	}
	return &m, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func (m *Modes) check() error {
	if len(m.Symbols) == 0 {
		return modesErr(`"symbols" is missing or empty: list one element symbol per atom`)
	}
	for i, s := range m.Symbols {
		if strings.TrimSpace(s) == "" {
			return modesErr(`"symbols"[%d] is empty`, i)
		}
	}
	if len(m.GeometryAngstrom) != len(m.Symbols) {
		return modesErr(`"geometry_angstrom" has %d rows for %d symbols: give one [x, y, z] in Å per atom`, len(m.GeometryAngstrom), len(m.Symbols))
	}
	for i, row := range m.GeometryAngstrom {
		if len(row) != 3 {
			return modesErr(`"geometry_angstrom"[%d] has %d numbers: want [x, y, z]`, i, len(row))
		}
		for _, x := range row {
			if !finite(x) {
				return modesErr(`"geometry_angstrom"[%d] is not finite`, i)
			}
		}
	}
	if m.MassesU != nil {
		if len(m.MassesU) != len(m.Symbols) {
			return modesErr(`"masses_u" has %d entries for %d atoms: give one mass in u per atom or leave it out`, len(m.MassesU), len(m.Symbols))
		}
		for i, x := range m.MassesU {
			if !(x > 0) || !finite(x) {
				return modesErr(`"masses_u"[%d] = %g: masses must be positive`, i, x)
			}
		}
	}
	for i, x := range m.FrequenciesCm1 {
		if !finite(x) {
			return modesErr(`"frequencies_cm1"[%d] is not finite`, i)
		}
		if i > 0 && x < m.FrequenciesCm1[i-1] {
			return modesErr(`"frequencies_cm1" must be in ascending order (entry %d, %g, follows %g)`, i, x, m.FrequenciesCm1[i-1])
		}
	}
	if m.Multiplicity < 0 {
		return modesErr(`"multiplicity" %d: it must be 2S+1 ≥ 1`, m.Multiplicity)
	}
	if m.EnergyHartree != nil && !finite(*m.EnergyHartree) {
		return modesErr(`"energy_hartree" is not finite`)
	}
	return nil
}
