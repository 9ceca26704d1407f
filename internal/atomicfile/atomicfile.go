// Package atomicfile writes files so that a reader, or a later run after a
// crash or kill -9, sees either the old file or the whole new one: the data
// goes to a temporary file in the same directory, is synced, and is renamed
// over the target (rename is atomic on POSIX file systems).
package atomicfile

import (
	"os"
	"path/filepath"
)

// Write replaces path by data, atomically, with permissions 0644.
func Write(path string, data []byte) error {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, ".tmp-"+base+"-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	_, werr := f.Write(data)
	if werr == nil {
		werr = f.Sync()
	}
	if cerr := f.Close(); werr == nil {
		werr = cerr
	}
	if werr == nil {
		werr = os.Chmod(tmp, 0o644)
	}
	if werr == nil {
		werr = os.Rename(tmp, path)
	}
	if werr != nil {
		os.Remove(tmp)
		return werr
	}
	return nil
}
