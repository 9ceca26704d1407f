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

// RemoveLeftovers removes the temporary files that writes of files named
// prefix… in dir left when the writing process was killed (kill -9 leaves
// no chance to clean up). Call it before writing those files again; it
// must not run while another process writes them.
func RemoveLeftovers(dir, prefix string) {
	old, _ := filepath.Glob(filepath.Join(dir, ".tmp-"+globEscape(prefix)+"*"))
	for _, f := range old {
		os.Remove(f)
	}
}

// globEscape quotes the pattern characters of s for filepath.Glob.
func globEscape(s string) string {
	var b []byte
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '*', '?', '[', '\\':
			b = append(b, '\\')
		}
		b = append(b, s[i])
	}
	return string(b)
}
