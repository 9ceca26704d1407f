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
