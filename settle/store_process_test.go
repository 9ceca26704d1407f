package settle

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"testing"
)

// TestMain lets the test binary act as a separate writer process for
// TestStoreConcurrentProcesses.
func TestMain(m *testing.M) {
	if dir := os.Getenv("POISE_STORE_WRITER_DIR"); dir != "" {
		os.Exit(storeWriter(dir, os.Getenv("POISE_STORE_WRITER_KEY"), os.Getenv("POISE_STORE_WRITER_ID")))
	}
	os.Exit(m.Run())
}

// storeWriter puts 40 versions of one entry and reads it back between
// writes; every read must find a whole, valid entry.
func storeWriter(dir, key, id string) int {
	st, err := OpenStore(dir)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	n, _ := strconv.Atoi(id)
	for i := 0; i < 40; i++ {
		r := fakeResult()
		r.Summary.EnergyHartree = -float64(1000*n + i)
		if err := st.Put(key, r); err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
		if _, ok := st.Get(key); !ok {
			fmt.Fprintln(os.Stderr, "a reader found no valid entry")
			return 1
		}
	}
	return 0
}

// Several processes writing one store entry at once (as tasks of a job
// array sharing a store on a shared file system) leave exactly one valid
// entry and no temporary file, and no reader ever sees a partial one.
func TestStoreConcurrentProcesses(t *testing.T) {
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	key := Key(parse(t, planarNH3), hfLevel(t, "sto-3g"), DefaultOptions())
	var procs []*exec.Cmd
	for w := 1; w <= 6; w++ {
		c := exec.Command(exe, "-test.run=^$")
		c.Env = append(os.Environ(), "POISE_STORE_WRITER_DIR="+dir, "POISE_STORE_WRITER_KEY="+key, "POISE_STORE_WRITER_ID="+strconv.Itoa(w))
		c.Stderr = os.Stderr
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		procs = append(procs, c)
	}
	for i, c := range procs {
		if err := c.Wait(); err != nil {
			t.Errorf("writer %d: %v", i+1, err)
		}
	}
	st, _ := OpenStore(dir)
	got, ok := st.Get(key)
	if !ok {
		t.Fatal("no valid entry after concurrent writers")
	}
	if e := -got.Summary.EnergyHartree; e < 1000 || int(e)%1000 >= 40 {
		t.Errorf("entry holds energy %g, written by no writer", got.Summary.EnergyHartree)
	}
	files, _ := filepath.Glob(filepath.Join(dir, key[:2], "*"))
	if len(files) != 1 {
		t.Errorf("%d files for one entry (%v); want one and no temporaries", len(files), files)
	}
}
