package settle

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"poise/energy/molecule"
	"poise/internal/atomicfile"
)

// storeFormat names the layout of store entries; a change of layout
// changes every key.
const storeFormat = "poise-settle-store 1"

// maxEntryBytes bounds the size of a store entry read into memory.
const maxEntryBytes = 256 << 20

// Key is the SHA-256 (hex) of everything that changes the numbers of a
// Run: the geometry (bohr, %.10f), elements and masses, charge,
// multiplicity, the level of theory (method, basis and its angular
// convention, dispersion, grid level, SCF thresholds), the prerelax and
// single-point levels, the finite-difference step, relaxation and noise
// thresholds, cycles, temperature, pressure and the program version.
// Threads and memory do not change the numbers and are left out.
func Key(mol *molecule.Molecule, lvl Level, opts Options) string {
	opts = opts.withDefaults(lvl)
	var b strings.Builder
	fmt.Fprintf(&b, "%s\nversion=%s\ncharge=%d multiplicity=%d\n", storeFormat, opts.ProgramVersion, mol.Charge, mol.Multiplicity)
	for _, a := range mol.Atoms {
		fmt.Fprintf(&b, "%d %.10f %.10f %.10f %.10f\n", a.Z, a.Mass, a.Position[0], a.Position[1], a.Position[2])
	}
	fmt.Fprintf(&b, "level %s\n", lvl.tag())
	if opts.Prerelax != nil {
		fmt.Fprintf(&b, "prerelax %s\n", opts.Prerelax.tag())
	}
	if opts.EnergyAt != nil {
		fmt.Fprintf(&b, "energy-at %s\n", opts.EnergyAt.tag())
	}
	if opts.NoSymmetry {
		fmt.Fprintf(&b, "nosymmetry\n")
	}
	fmt.Fprintf(&b, "step=%g maxsteps=%d cycles=%d threshold=%g criteria=strict T=%g p=%g\n",
		opts.StepBohr, opts.MaxSteps, opts.MaxCycles, opts.ThresholdCm1, opts.TemperatureK, opts.PressurePa)
	sum := sha256.Sum256([]byte(b.String()))
	return hex.EncodeToString(sum[:])
}

// Store keeps finished Results on disk, one JSON file per key, written
// atomically (temporary file and rename), so that concurrent writers of
// one entry leave one valid entry. It holds no state besides its
// directory and is safe for concurrent use.
type Store struct {
	dir string
}

// DefaultStoreDir is $XDG_CACHE_HOME/poise, or ~/.cache/poise.
func DefaultStoreDir() (string, error) {
	if d := os.Getenv("XDG_CACHE_HOME"); d != "" {
		return filepath.Join(d, "poise"), nil
	}
	home, err := os.UserHomeDir()
	if err != nil {
		return "", fmt.Errorf("no results store directory: %w", err)
	}
	return filepath.Join(home, ".cache", "poise"), nil
}

// OpenStore opens (creating it if needed) the store in dir.
func OpenStore(dir string) (*Store, error) {
	if dir == "" {
		return nil, errors.New("settle: empty store directory")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("settle: results store: %w", err)
	}
	return &Store{dir: dir}, nil
}

// Dir is the store's directory.
func (s *Store) Dir() string { return s.dir }

func validKey(key string) bool {
	if len(key) != 64 {
		return false
	}
	_, err := hex.DecodeString(key)
	return err == nil
}

// path is the file of an entry: DIR/ab/abcdef….json.
func (s *Store) path(key string) string {
	return filepath.Join(s.dir, key[:2], key+".json")
}

// entry is the stored form of a Result.
type entry struct {
	Format string  `json:"format"`
	Key    string  `json:"key"`
	Result *Result `json:"result"`
}

// Get returns the Result stored under key. A missing, unreadable or
// corrupt entry is reported as absent (and recomputed by Run).
func (s *Store) Get(key string) (*Result, bool) {
	if !validKey(key) {
		return nil, false
	}
	f, err := os.Open(s.path(key))
	if err != nil {
		return nil, false
	}
	defer f.Close()
	var e entry
	dec := json.NewDecoder(io.LimitReader(f, maxEntryBytes))
	if err := dec.Decode(&e); err != nil {
		return nil, false
	}
	if e.Format != storeFormat || e.Key != key || e.Result == nil || !e.Result.valid() {
		return nil, false
	}
	return e.Result, true
}

// Put stores r under key, atomically.
func (s *Store) Put(key string, r *Result) error {
	if !validKey(key) {
		return fmt.Errorf("settle: store key %q is not a SHA-256 hex digest", key)
	}
	if r == nil || !r.valid() {
		return errors.New("settle: incomplete result not stored")
	}
	data, err := json.Marshal(entry{Format: storeFormat, Key: key, Result: r})
	if err != nil {
		return err
	}
	p := s.path(key)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		return err
	}
	return atomicfile.Write(p, data)
}

// valid checks that a Result read back is complete.
func (r *Result) valid() bool {
	s := r.Summary
	if s == nil || r.Modes == nil {
		return false
	}
	n := len(s.Symbols)
	if n == 0 || len(s.GeometryAngstrom) != n || len(s.MassesU) != n || len(r.Modes.Symbols) != n {
		return false
	}
	if s.Verdict != VerdictMinimum && s.Verdict != VerdictNotMinimum {
		return false
	}
	return s.ImaginaryCount == len(s.ImaginaryCm1)
}
