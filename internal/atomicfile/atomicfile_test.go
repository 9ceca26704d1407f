package atomicfile

import (
	"os"
	"path/filepath"
	"testing"
)

func TestWriteReplacesWholeFileAndLeavesNoTemporary(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.json")
	for _, text := range []string{"first version", "second"} {
		if err := Write(p, []byte(text)); err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(p)
		if err != nil || string(got) != text {
			t.Fatalf("read %q, %v; want %q", got, err, text)
		}
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries, want only the file", len(entries))
	}
	if err := Write(filepath.Join(dir, "missing", "x"), nil); err == nil {
		t.Error("writing into a missing directory succeeded")
	}
}

// Leftovers of killed writes of one name prefix are removed; other files,
// finished files and other prefixes stay.
func TestRemoveLeftovers(t *testing.T) {
	dir := t.TempDir()
	files := map[string]bool{ // name: should remain
		".tmp-water.modes.json-123": false,
		".tmp-water-mode-01.xyz-9":  false,
		"water.modes.json":          true,
		".tmp-ethane.modes.json-5":  true,
		".tmp-wat[er].modes.json-1": true,
		"notes.txt":                 true,
	}
	for name := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	RemoveLeftovers(dir, "water")
	for name, keep := range files {
		_, err := os.Stat(filepath.Join(dir, name))
		if got := err == nil; got != keep {
			t.Errorf("%s: present %v, want %v", name, got, keep)
		}
	}
}
