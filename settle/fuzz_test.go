package settle

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzStoreEntry feeds arbitrary bytes to the store as an entry: Get must
// never panic, and accepts only complete results under their own key.
func FuzzStoreEntry(f *testing.F) {
	const key = "0123456789abcdef0123456789abcdef0123456789abcdef0123456789abcdef"
	f.Add([]byte(`{"format":"poise-settle-store 1","key":"` + key + `","result":{"summary":{"verdict":"minimum","imaginary_count":0,"imaginary_wavenumbers_cm1":[],"symbols":["N"],"geometry_angstrom":[[0,0,0]],"masses_u":[14]},"modes":{"symbols":["N"]}}}`))
	f.Add([]byte(`{"format":"poise-settle-store 1","key":"` + key + `","result":null}`))
	f.Add([]byte(`[]`))
	f.Fuzz(func(t *testing.T, data []byte) {
		st, err := OpenStore(t.TempDir())
		if err != nil {
			t.Fatal(err)
		}
		p := st.path(key)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		r, ok := st.Get(key)
		if ok && (r == nil || !r.valid()) {
			t.Fatal("Get accepted an incomplete result")
		}
	})
}
