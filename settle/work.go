package settle

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"

	"poise/internal/atomicfile"
	"poise/optimize"
)

// A settle run with Options.WorkDir keeps what it has finished there, so
// that a run stopped at any moment (interrupt, kill -9, time limit of a
// batch job) continues where it stopped when started again with the same
// inputs:
//
//	key                   the store key of the run the directory belongs to
//	relax-prerelax.json   each relaxation: its last accepted geometry while it runs,
//	relax-0.json, …       the whole outcome once finished (workStage)
//	hessian-0/, …         the finished displaced points of each Hessian (package freq)
//
// Every file is written atomically. A directory of another run (another
// key) is emptied first. The caller removes the directory once the result
// is safe elsewhere (RemoveWork).

const (
	workKeyName  = "key"
	workFormat   = "poise-settle-work 1"
	workMaxBytes = 64 << 20
)

// workStage is the checkpoint of one relaxation.
type workStage struct {
	Format        string                    `json:"format"`
	Stage         string                    `json:"stage"`
	Done          bool                      `json:"done"`
	CoordsBohr    []float64                 `json:"coordinates_bohr"`
	EnergyHartree float64                   `json:"energy_hartree"`
	Steps         int                       `json:"steps"`
	Evaluations   int                       `json:"evaluations"`
	Trajectory    string                    `json:"trajectory_xyz"`
	Hessian       *optimize.InternalHessian `json:"internal_hessian,omitempty"`
}

// work is a run's work directory ("" keeps nothing).
type work struct {
	dir string
}

// openWork prepares dir for the run with the given key: an existing
// directory of the same key is kept (resumed), one of another key is
// emptied of the files this package writes.
func openWork(dir, key string) (*work, bool, error) {
	if dir == "" {
		return &work{}, false, nil
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, false, fmt.Errorf("settle: work directory: %w", err)
	}
	w := &work{dir: dir}
	if have, err := os.ReadFile(filepath.Join(dir, workKeyName)); err == nil && strings.TrimSpace(string(have)) == key {
		return w, true, nil
	}
	if err := w.clear(); err != nil {
		return nil, false, err
	}
	if err := atomicfile.Write(filepath.Join(dir, workKeyName), []byte(key+"\n")); err != nil {
		return nil, false, fmt.Errorf("settle: work directory: %w", err)
	}
	return w, false, nil
}

// clear removes what this package wrote in the directory, and nothing else.
func (w *work) clear() error {
	entries, err := os.ReadDir(w.dir)
	if err != nil {
		return fmt.Errorf("settle: work directory: %w", err)
	}
	for _, e := range entries {
		n := e.Name()
		ours := n == workKeyName || strings.HasPrefix(n, ".tmp-") ||
			(strings.HasPrefix(n, "relax-") && strings.HasSuffix(n, ".json")) ||
			(e.IsDir() && strings.HasPrefix(n, "hessian-"))
		if !ours {
			continue
		}
		if err := os.RemoveAll(filepath.Join(w.dir, n)); err != nil {
			return fmt.Errorf("settle: work directory: %w", err)
		}
	}
	return nil
}

// RemoveWork removes a work directory's files (after a finished run whose
// result is stored), and the directory itself when nothing else is in it.
func RemoveWork(dir string) error {
	if dir == "" {
		return nil
	}
	if _, err := os.Stat(dir); os.IsNotExist(err) {
		return nil
	}
	w := &work{dir: dir}
	if err := w.clear(); err != nil {
		return err
	}
	os.Remove(dir) // only if empty
	return nil
}

func (w *work) stagePath(stage string) string { return filepath.Join(w.dir, "relax-"+stage+".json") }

// hessianDir is the freq work directory of the Hessian of a cycle.
func (w *work) hessianDir(cycle int) string {
	if w.dir == "" {
		return ""
	}
	return filepath.Join(w.dir, fmt.Sprintf("hessian-%d", cycle))
}

// load reads a relaxation checkpoint (ok false when there is none usable).
func (w *work) load(stage string, n int) (workStage, bool) {
	var s workStage
	if w.dir == "" {
		return s, false
	}
	f, err := os.Open(w.stagePath(stage))
	if err != nil {
		return s, false
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil || st.Size() > workMaxBytes {
		return s, false
	}
	if json.NewDecoder(f).Decode(&s) != nil || s.Format != workFormat || s.Stage != stage || len(s.CoordsBohr) != n {
		return workStage{}, false
	}
	for _, v := range s.CoordsBohr {
		if !finite(v) {
			return workStage{}, false
		}
	}
	return s, true
}

// save writes a relaxation checkpoint atomically.
func (w *work) save(s *workStage) error {
	if w.dir == "" {
		return nil
	}
	s.Format = workFormat
	data, err := json.Marshal(s)
	if err != nil {
		return err
	}
	if err := atomicfile.Write(w.stagePath(s.Stage), data); err != nil {
		return fmt.Errorf("settle: saving the relaxation state: %w", err)
	}
	return nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
