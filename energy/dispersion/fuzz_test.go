package dispersion

import (
	"strings"
	"testing"
)

// FuzzParseTables feeds malformed data tables to the parser: it must return
// an error or consistent tables, never panic. Seeds: the embedded tables
// and the committed corpus in testdata/fuzz/FuzzParseTables (truncated
// files, bad numbers, duplicates, missing rows).
func FuzzParseTables(f *testing.F) {
	f.Add(elementsTSV, referenceCNTSV, c6TSV, dampingTSV)
	f.Fuzz(func(t *testing.T, elements, referenceCN, c6, damping []byte) {
		tb, err := parseTables(elements, referenceCN, c6, damping)
		if err != nil {
			return
		}
		for z := 1; z <= MaxZ; z++ {
			if tb.nref[z] < 1 || tb.nref[z] > maxRef || !(tb.rcov[z] > 0) || !(tb.q[z] > 0) {
				t.Fatalf("Z %d: inconsistent tables after a successful parse", z)
			}
		}
		if len(tb.params) == 0 {
			t.Fatal("no parameters after a successful parse")
		}
	})
}

// TestParseTablesErrors: each kind of damage to the data is reported with
// the file and what is wrong.
func TestParseTablesErrors(t *testing.T) {
	el, rc, c6, dm := string(elementsTSV), string(referenceCNTSV), string(c6TSV), string(dampingTSV)
	cases := []struct {
		name               string
		elements, refs, c6 string
		damping, msg       string
	}{
		{"intact", el, rc, c6, dm, ""},
		{"bad radius", strings.Replace(el, "0.32", "0.3x2", 1), rc, c6, dm, "elements.tsv:4: covalent radius"},
		{"missing element", strings.Replace(el, "36\tKr", "#", 1), rc, c6, dm, "no row for Z 36"},
		{"reference out of range", el, strings.Replace(rc, "1\t2\t0.0000", "1\t3\t0.0000", 1), c6, dm, "reference of Z 1"},
		{"missing reference", el, strings.Replace(rc, "1\t2\t0.0000", "#", 1), c6, dm, "no row for Z 1 reference 2"},
		{"missing C6", el, rc, strings.Replace(c6, "36\t36\t1\t1", "#", 1), dm, "no C6 for Z 36 ref 1 with Z 36 ref 1"},
		{"conflicting C6", el, rc, strings.Replace(c6, "1\t1\t2\t1\t4.7379", "1\t1\t2\t1\t4.7380", 1), dm, "different values"},
		{"duplicate functional", el, rc, c6, dm + "B3LYP\t1\t0.4\t2\t4.4\n", `"b3lyp" listed twice`},
		{"no functionals", el, rc, c6, "", "no parameters"},
	}
	for _, c := range cases {
		_, err := parseTables([]byte(c.elements), []byte(c.refs), []byte(c.c6), []byte(c.damping))
		switch {
		case c.msg == "" && err != nil:
			t.Errorf("%s: %v", c.name, err)
		case c.msg != "" && (err == nil || !strings.Contains(err.Error(), c.msg)):
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.msg)
		}
	}
}
