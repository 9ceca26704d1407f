package freq

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"

	"poise/internal/atomicfile"
)

// The work directory of a Hessian holds one small JSON file per finished
// point, so that an interrupted calculation resumes without recomputing
// them:
//
//	manifest.json        what the points belong to (storeManifest)
//	reference.json       the undisplaced point
//	disp-0007-p1.json    coordinate 7 (from 0) displaced by +1 step
//	disp-0007-m2.json    coordinate 7 displaced by −2 steps (four-point formula)
//	disp-0007-p1.state   the electronic state of a saved point that a point of
//	                     the same coordinate still to compute starts from
//	                     (removed when the coordinate is done)
//
// Every file is written to a temporary name in the same directory and
// renamed into place, so a killed run leaves either a whole file or none.

const (
	storeFormat    = "poise-hessian-work"
	storeVersion   = 1
	manifestName   = "manifest.json"
	referenceName  = "reference.json"
	displacePrefix = "disp-"
	stateSuffix    = ".state"
)

// ErrStaleWorkDir means that a work directory holds the points of another
// calculation (another geometry, step, formula or level of theory).
var ErrStaleWorkDir = errors.New("work directory belongs to another calculation")

// storeManifest identifies the calculation a work directory belongs to.
type storeManifest struct {
	Format     string    `json:"format"`
	Version    int       `json:"version"`
	Tag        string    `json:"tag"`
	NumAtoms   int       `json:"num_atoms"`
	CoordsBohr []float64 `json:"coordinates_bohr"`
	StepBohr   float64   `json:"step_bohr"`
	FourPoint  bool      `json:"four_point"`
	Dipole     bool      `json:"dipole"`
}

func (m *storeManifest) equal(o *storeManifest) bool {
	if m.Format != o.Format || m.Version != o.Version || m.Tag != o.Tag || m.NumAtoms != o.NumAtoms ||
		m.StepBohr != o.StepBohr || m.FourPoint != o.FourPoint || m.Dipole != o.Dipole || len(m.CoordsBohr) != len(o.CoordsBohr) {
		return false
	}
	for i := range m.CoordsBohr {
		if m.CoordsBohr[i] != o.CoordsBohr[i] {
			return false
		}
	}
	return true
}

// storedPoint is one finished point (the reference or a displacement).
type storedPoint struct {
	Coordinate    int        `json:"coordinate"` // from 0; −1 for the reference
	Steps         int        `json:"steps"`      // signed multiple of the step; 0 for the reference
	StepBohr      float64    `json:"step_bohr"`
	EnergyHartree float64    `json:"energy_hartree"`
	Gradient      []float64  `json:"gradient_hartree_per_bohr"`
	DipoleAU      [3]float64 `json:"dipole_au"`
	SCFIterations int        `json:"scf_iterations"`
	GapHartree    float64    `json:"homo_lumo_gap_hartree,omitempty"`
}

func (p *storedPoint) valid(n int, step float64, coord, steps int) bool {
	if p.Coordinate != coord || p.Steps != steps || p.StepBohr != step || len(p.Gradient) != n || !finite(p.EnergyHartree) {
		return false
	}
	for _, g := range p.Gradient {
		if !finite(g) {
			return false
		}
	}
	for _, d := range p.DipoleAU {
		if !finite(d) {
			return false
		}
	}
	return true
}

// store is a work directory (or nothing, when dir is empty).
type store struct {
	dir string
}

func displacementName(coord, steps int) string {
	sign := "p"
	if steps < 0 {
		sign = "m"
	}
	return fmt.Sprintf("%s%04d-%s%d.json", displacePrefix, coord, sign, abs(steps))
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// openStore prepares dir for the calculation described by want. An
// existing manifest must match; with discard set, a directory of another
// calculation is emptied of its points instead (the number removed is
// returned).
func openStore(dir string, want *storeManifest, discard bool) (*store, int, error) {
	if dir == "" {
		return &store{}, 0, nil
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, 0, fmt.Errorf("freq: work directory: %w", err)
	}
	s := &store{dir: dir}
	data, err := os.ReadFile(filepath.Join(dir, manifestName))
	removed := 0
	switch {
	case err == nil:
		var have storeManifest
		if json.Unmarshal(data, &have) == nil && have.equal(want) {
			return s, 0, nil
		}
		if !discard {
			return nil, 0, fmt.Errorf("freq: %s: %w (remove it or choose another directory)", dir, ErrStaleWorkDir)
		}
		if removed, err = s.clear(); err != nil {
			return nil, 0, err
		}
	case errors.Is(err, os.ErrNotExist):
		// A directory without a manifest may still hold points of an
		// interrupted first write; they cannot be trusted.
		if removed, err = s.clear(); err != nil {
			return nil, 0, err
		}
	default:
		return nil, 0, fmt.Errorf("freq: work directory: %w", err)
	}
	buf, err := json.MarshalIndent(want, "", " ")
	if err != nil {
		return nil, 0, err
	}
	if err := WriteFileAtomic(filepath.Join(dir, manifestName), buf); err != nil {
		return nil, 0, fmt.Errorf("freq: work directory: %w", err)
	}
	return s, removed, nil
}

// clear removes the points (and the manifest) this package wrote, and
// nothing else.
func (s *store) clear() (int, error) {
	entries, err := os.ReadDir(s.dir)
	if err != nil {
		return 0, fmt.Errorf("freq: work directory: %w", err)
	}
	n := 0
	for _, e := range entries {
		name := e.Name()
		ours := name == manifestName || name == referenceName ||
			(strings.HasPrefix(name, displacePrefix) && (strings.HasSuffix(name, ".json") || strings.HasSuffix(name, stateSuffix))) ||
			strings.HasPrefix(name, ".tmp-")
		if !ours || e.IsDir() {
			continue
		}
		if err := os.Remove(filepath.Join(s.dir, name)); err != nil {
			return n, fmt.Errorf("freq: work directory: %w", err)
		}
		if name != manifestName && !strings.HasPrefix(name, ".tmp-") && !strings.HasSuffix(name, stateSuffix) {
			n++
		}
	}
	return n, nil
}

// removeTemporaries removes the temporary files a killed write left.
func (s *store) removeTemporaries() {
	if s.dir == "" {
		return
	}
	old, _ := filepath.Glob(filepath.Join(s.dir, ".tmp-*"))
	for _, f := range old {
		os.Remove(f)
	}
}

// load reads a stored point; ok is false when it is missing or unusable.
func (s *store) load(name string, n int, step float64, coord, steps int) (storedPoint, bool) {
	var p storedPoint
	if s.dir == "" {
		return p, false
	}
	data, err := os.ReadFile(filepath.Join(s.dir, name))
	if err != nil {
		return p, false
	}
	if json.Unmarshal(data, &p) != nil || !p.valid(n, step, coord, steps) {
		return storedPoint{}, false
	}
	return p, true
}

// save writes a point atomically.
func (s *store) save(name string, p *storedPoint) error {
	if s.dir == "" {
		return nil
	}
	data, err := json.Marshal(p)
	if err != nil {
		return err
	}
	if err := WriteFileAtomic(filepath.Join(s.dir, name), data); err != nil {
		return fmt.Errorf("freq: saving %s: %w", name, err)
	}
	return nil
}

// stateName is the name of the state file of the point file name.
func stateName(name string) string { return strings.TrimSuffix(name, ".json") + stateSuffix }

// saveState writes the electronic state of the point saved as name.
func (s *store) saveState(name string, state []byte) error {
	if s.dir == "" {
		return nil
	}
	if err := WriteFileAtomic(filepath.Join(s.dir, stateName(name)), state); err != nil {
		return fmt.Errorf("freq: saving the state of %s: %w", name, err)
	}
	return nil
}

// loadState reads the state of the point saved as name (nil if there is
// none).
func (s *store) loadState(name string) []byte {
	if s.dir == "" {
		return nil
	}
	b, err := os.ReadFile(filepath.Join(s.dir, stateName(name)))
	if err != nil {
		return nil
	}
	return b
}

// removeState removes the state file of the point saved as name, if any.
func (s *store) removeState(name string) {
	if s.dir != "" {
		os.Remove(filepath.Join(s.dir, stateName(name)))
	}
}

// WriteFileAtomic writes data to path atomically (temporary file and
// rename), so that readers and a later run after a crash see either the old
// file or the whole new one.
func WriteFileAtomic(path string, data []byte) error { return atomicfile.Write(path, data) }

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
