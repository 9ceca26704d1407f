package settle

import (
	"testing"

	"poise/energy/basis"
	"poise/energy/dispersion"
	"poise/energy/xc"
)

// TestKeyFit: without density fitting the store keys are those written
// before fitting existed (the golden keys below were computed by the code
// of commit 24dba60, which had no fitting), so existing stores stay valid;
// with fitting, and with another fitting set, the key differs. The labels
// follow the same rule.
func TestKeyFit(t *testing.T) {
	mol := parse(t, planarNH3)
	base := DefaultOptions()
	base.ProgramVersion = "1"

	hf := hfLevel(t, "sto-3g")
	dft := hfLevel(t, "6-31g*")
	b3, err := xc.Lookup("b3lyp")
	if err != nil {
		t.Fatal(err)
	}
	dft.Method = b3
	p, err := dispersion.ParamsFor("b3lyp")
	if err != nil {
		t.Fatal(err)
	}
	dft.Dispersion = &p
	pre := hfLevel(t, "sto-3g")
	withPre := base
	withPre.Prerelax = &pre

	jk, err := basis.Load("def2-universal-jkfit")
	if err != nil {
		t.Fatal(err)
	}
	j, err := basis.Load("def2-universal-jfit")
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name   string
		lvl    Level
		opts   Options
		golden string
		label  string
	}{
		{"hf", hf, base, "6c236cfd0eb2f0ac0923a5df6e3e599cfb67a84e2c0efe5d7a3e3c9043a2505c", "HF/STO-3G"},
		{"b3lyp-d3 with prerelax", dft, withPre, "2058ccf160184c68d03807d345f9ed6383fe6d120d173bc1444ee574c998a8ff", "B3LYP-D3(BJ)/6-31G*"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			k0 := Key(mol, tc.lvl, tc.opts)
			if k0 != tc.golden {
				t.Errorf("key without fitting %s, before fitting existed %s", k0, tc.golden)
			}
			if got := tc.lvl.Label(); got != tc.label {
				t.Errorf("label without fitting %q, want %q", got, tc.label)
			}
			fitJK := tc.lvl
			fitJK.Fit = jk
			fitJ := tc.lvl
			fitJ.Fit = j
			kJK, kJ := Key(mol, fitJK, tc.opts), Key(mol, fitJ, tc.opts)
			if kJK == k0 || kJ == k0 || kJK == kJ {
				t.Errorf("keys: exact %s, JKFIT %s, JFIT %s: fit settings must not share a key", k0, kJK, kJ)
			}
			if got, want := fitJK.Label(), tc.label+" (RI-JK: def2-universal-JKFIT)"; got != want {
				t.Errorf("label with JKFIT %q, want %q", got, want)
			}
			if got, want := fitJ.Label(), tc.label+" (RI-J: def2-universal-JFIT)"; got != want {
				t.Errorf("label with JFIT %q, want %q", got, want)
			}
			// A fitted prerelax level changes the key too.
			o := tc.opts
			pf := hfLevel(t, "sto-3g")
			pf.Fit = jk
			o.Prerelax = &pf
			if Key(mol, tc.lvl, o) == Key(mol, tc.lvl, withPre) {
				t.Error("a fitted prerelax level gives the key of an exact one")
			}
		})
	}
}
