package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"poise/energy/molecule"
	"poise/freq"
	"poise/thermo"
)

const modesWaterXYZ = "../../testdata/molecules/water.xyz"

// runModesCmd runs poise with args; it returns standard output, standard
// error and the exit status reportError would give.
func runModesCmd(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	out, errOut, code, _ := execCLI(t, false, args...)
	return out, errOut, code
}

// waterModesRun computes water at HF/STO-3G into a temporary directory
// and returns the directory and the modes file.
func waterModesRun(t *testing.T, extra ...string) (string, *freq.File, string, string) {
	t.Helper()
	dir := t.TempDir()
	args := append([]string{"modes", modesWaterXYZ, "--method", "hf", "--basis", "sto-3g", "--threads", "2", "--out", dir}, extra...)
	out, errOut, code := runModesCmd(t, args...)
	if code != exitOK {
		t.Fatalf("exit %d\n%s\n%s", code, out, errOut)
	}
	f, err := freq.ReadFile(filepath.Join(dir, "water.modes.json"))
	if err != nil {
		t.Fatal(err)
	}
	return dir, f, out, errOut
}

// The modes command writes the JSON contract (keys read by thermo and the
// data to redo the analysis), one animation per mode, the IR pictures,
// and warns that the experimental water geometry is no HF/STO-3G
// stationary point.
func TestModesWater(t *testing.T) {
	dir, f, out, errOut := waterModesRun(t, "--detail")
	if len(f.FrequenciesCm1) != 3 || len(f.IRIntensities) != 3 || len(f.ReducedMassesU) != 3 || len(f.ForceConstants) != 3 {
		t.Fatalf("3N−6 = 3 modes expected: %v", f.FrequenciesCm1)
	}
	for i := 1; i < 3; i++ {
		if f.FrequenciesCm1[i] < f.FrequenciesCm1[i-1] {
			t.Errorf("frequencies not ascending: %v", f.FrequenciesCm1)
		}
	}
	if len(f.HessianAU) != 9 || len(f.DipoleDerivAU) != 9 || f.EnergyHartree == nil || f.Level == nil || f.StepBohr != freq.DefaultStepBohr {
		t.Errorf("the file lacks the data to redo the analysis")
	}
	if f.Stationary || !strings.Contains(errOut, "not at a stationary point") {
		t.Errorf("no warning for a non-stationary geometry (gradient norm %.2e)\n%s", f.GradientNormAU, errOut)
	}
	zpe := 0.0
	for _, w := range f.FrequenciesCm1 {
		zpe += 0.5 * w / 219474.6313632 // cm⁻¹ per Eh (CODATA 2018)
	}
	if math.Abs(zpe-f.ZPEHartree) > 1e-12 {
		t.Errorf("zero_point_energy_hartree %.10f, from the frequencies %.10f", f.ZPEHartree, zpe)
	}
	for _, name := range []string{"water-mode-01.xyz", "water-mode-02.xyz", "water-mode-03.xyz", "water-ir.svg", "water-ir.png"} {
		st, err := os.Stat(filepath.Join(dir, name))
		if err != nil || st.Size() == 0 {
			t.Errorf("%s missing or empty", name)
		}
	}
	anim, err := os.ReadFile(filepath.Join(dir, "water-mode-03.xyz"))
	if err != nil {
		t.Fatal(err)
	}
	if n := strings.Count(string(anim), "\n3\n") + 1; n != animationFrames {
		t.Errorf("animation has %d frames, want %d", n, animationFrames)
	}
	for _, s := range []string{"scaled", "IR km/mol", "μ (u)", "k (mdyn/Å)", "O–H stretch", "H–O–H bend", "zero-point"} {
		if !strings.Contains(out, s) {
			t.Errorf("table lacks %q:\n%s", s, out)
		}
	}
	// thermo reads the file as it is.
	if _, err := thermo.ReadModesFile(filepath.Join(dir, "water.modes.json")); err != nil {
		t.Errorf("thermo cannot read the modes file: %v", err)
	}
	tout, terr, code := runModesCmd(t, "thermo", filepath.Join(dir, "water.modes.json"), "--json")
	if code != exitOK {
		t.Errorf("poise thermo on the modes file: exit %d: %s", code, terr)
	}
	var th map[string]any
	if err := json.Unmarshal([]byte(tout), &th); err != nil {
		t.Fatalf("thermo JSON: %v", err)
	}
	if z, _ := th["zero_point_energy_hartree"].(float64); math.Abs(z-f.ZPEHartree) > 1e-9 {
		t.Errorf("thermo's zero-point energy %.9f, modes' %.9f", z, f.ZPEHartree)
	}
}

// A second run reuses every saved displaced point; deleting some makes
// only those be computed again.
func TestModesResume(t *testing.T) {
	dir, f1, _, _ := waterModesRun(t)
	work := filepath.Join(dir, "displacements")
	args := []string{"modes", modesWaterXYZ, "--method", "hf", "--basis", "sto-3g", "--threads", "2", "--out", dir}
	if _, e, code := runModesCmd(t, args...); code != exitOK {
		t.Fatal(e)
	}
	f2, err := freq.ReadFile(filepath.Join(dir, "water.modes.json"))
	if err != nil {
		t.Fatal(err)
	}
	// Water in the yz plane (C2v): 5 displaced points (one hydrogen: +x,
	// ±y, ±z; the other by symmetry, the oxygen by translation).
	if c := f2.Computation; c == nil || c.Computed != 0 || c.Reused != 5 || c.Gradients != 0 {
		t.Errorf("second run: %+v, want 0 computed, 5 reused, 0 evaluations", f2.Computation)
	}
	for _, name := range []string{"disp-0004-p1.json", "disp-0005-m1.json"} {
		if err := os.Remove(filepath.Join(work, name)); err != nil {
			t.Fatal(err)
		}
	}
	if _, e, code := runModesCmd(t, args...); code != exitOK {
		t.Fatal(e)
	}
	f3, err := freq.ReadFile(filepath.Join(dir, "water.modes.json"))
	if err != nil {
		t.Fatal(err)
	}
	// The two points, one reference energy to restore the warm start and
	// the +h point of coordinate 5 again, for the state its −h point
	// starts from.
	if c := f3.Computation; c.Computed != 2 || c.Reused != 3 || c.Gradients != 4 {
		t.Errorf("third run: %+v, want 2 computed, 3 reused, 4 evaluations", c)
	}
	for i := range f1.FrequenciesCm1 {
		if d := math.Abs(f3.FrequenciesCm1[i] - f1.FrequenciesCm1[i]); d > 1e-3 {
			t.Errorf("mode %d: %.4f after resuming, %.4f at first", i+1, f3.FrequenciesCm1[i], f1.FrequenciesCm1[i])
		}
	}
}

// --from redoes the analysis from the file alone: the same frequencies
// without changes; with --isotope the masses of deuterium (AME 2020 via
// package molecule) and lower wavenumbers, readable by thermo.
func TestModesFromIsotopes(t *testing.T) {
	dir, f, _, _ := waterModesRun(t)
	src := filepath.Join(dir, "water.modes.json")
	out, e, code := runModesCmd(t, "modes", "--from", src, "--json")
	if code != exitOK {
		t.Fatal(e)
	}
	var same freq.File
	if err := json.Unmarshal([]byte(out), &same); err != nil {
		t.Fatal(err)
	}
	for i := range f.FrequenciesCm1 {
		if math.Abs(same.FrequenciesCm1[i]-f.FrequenciesCm1[i]) > 1e-8 {
			t.Errorf("--from: mode %d %.10f, original %.10f", i+1, same.FrequenciesCm1[i], f.FrequenciesCm1[i])
		}
	}
	d2o := filepath.Join(t.TempDir(), "d2o")
	if _, e, code := runModesCmd(t, "modes", "--from", src, "--isotope", "2=2,3=2", "--out", d2o); code != exitOK {
		t.Fatal(e)
	}
	g, err := freq.ReadFile(filepath.Join(d2o, "water.modes.json"))
	if err != nil {
		t.Fatal(err)
	}
	dmass, _ := molecule.IsotopeMass(1, 2)
	if g.MassesU[1] != dmass || g.MassesU[2] != dmass || g.MassesU[0] != f.MassesU[0] || !strings.Contains(g.MassNote, "2H") {
		t.Errorf("masses %v (note %q), want deuterium %.6f at atoms 2 and 3", g.MassesU, g.MassNote, dmass)
	}
	for i := range g.FrequenciesCm1 {
		if !(g.FrequenciesCm1[i] < f.FrequenciesCm1[i]) || !(g.IRIntensities[i] > 0) {
			t.Errorf("D2O mode %d: %.1f cm⁻¹ (H2O %.1f), %.2f km/mol", i+1, g.FrequenciesCm1[i], f.FrequenciesCm1[i], g.IRIntensities[i])
		}
	}
	if _, err := thermo.ReadModesFile(filepath.Join(d2o, "water.modes.json")); err != nil {
		t.Error(err)
	}
	// --mass gives the same as --isotope with the same mass.
	out, e, code = runModesCmd(t, "modes", "--from", src, "--mass", "2=2.01410177812,3=2.01410177812", "--json")
	if code != exitOK {
		t.Fatal(e)
	}
	var m freq.File
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatal(err)
	}
	for i := range m.FrequenciesCm1 {
		if math.Abs(m.FrequenciesCm1[i]-g.FrequenciesCm1[i]) > 1e-6 {
			t.Errorf("--mass mode %d: %.6f, --isotope %.6f", i+1, m.FrequenciesCm1[i], g.FrequenciesCm1[i])
		}
	}
}

// Scale factors: auto takes the built-in HF/STO-3G factor; a number is
// used for both; the output says which factor fed which number.
func TestModesScale(t *testing.T) {
	dir, f, out, _ := waterModesRun(t)
	src := filepath.Join(dir, "water.modes.json")
	want, _ := freq.LookupScale("hf", "STO-3G")
	if f.Scaling == nil || f.Scaling.Frequency != want.Frequency {
		t.Fatalf("scaling %+v, want the built-in %g", f.Scaling, want.Frequency)
	}
	for i, w := range f.FrequenciesCm1 {
		if math.Abs(f.ScaledFrequenciesCm1[i]-want.Frequency*w) > 1e-9 {
			t.Errorf("scaled mode %d: %g", i+1, f.ScaledFrequenciesCm1[i])
		}
	}
	if !strings.Contains(out, "scaled wavenumbers") || !strings.Contains(out, "scaled zero-point energy") {
		t.Errorf("the output does not say which factor fed which number:\n%s", out)
	}
	o, e, code := runModesCmd(t, "modes", "--from", src, "--scale", "0.96", "--json")
	if code != exitOK {
		t.Fatal(e)
	}
	var g freq.File
	if err := json.Unmarshal([]byte(o), &g); err != nil {
		t.Fatal(err)
	}
	if g.Scaling.Frequency != 0.96 || g.Scaling.ZPE != 0.96 || math.Abs(g.ScaledZPEHartree-0.96*g.ZPEHartree) > 1e-12 {
		t.Errorf("--scale 0.96: %+v", g.Scaling)
	}
}

// User mistakes exit with status 2 and say what to change.
func TestModesUsageErrors(t *testing.T) {
	dir, _, _, _ := waterModesRun(t)
	src := filepath.Join(dir, "water.modes.json")
	bad := filepath.Join(t.TempDir(), "bad.json")
	if err := os.WriteFile(bad, []byte(`{"format":"poise-modes","format_version":1,"symbols":["O"]}`), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"modes"}, "give a structure"},
		{[]string{"modes", "--from", src, "--isotope", "2=3x"}, "mass number"},
		{[]string{"modes", "--from", src, "--isotope", "9=2"}, "atom number from 1 to 3"},
		{[]string{"modes", "--from", src, "--isotope", "2=7"}, "no isotope 7H"},
		{[]string{"modes", "--from", src, "--isotope", "2=2", "--mass", "2=2.0"}, "already has a mass"},
		{[]string{"modes", "--from", src, "--mass", "1=-3"}, "positive mass"},
		{[]string{"modes", "--from", src, "--scale", "fast"}, "--scale"},
		{[]string{"modes", "--from", src, "--method", "hf"}, "does not apply with --from"},
		{[]string{"modes", "--from", src, "--out", dir}, "would overwrite"},
		{[]string{"modes", "--from", bad}, "geometry_angstrom"},
		{[]string{"modes", "--from", filepath.Join(dir, "missing.json")}, "missing.json"},
		{[]string{"modes", modesWaterXYZ, "--step", "0.5"}, "--step"},
		{[]string{"modes", modesWaterXYZ, "--from", src}, "not both"},
	} {
		_, e, code := runModesCmd(t, c.args...)
		if code != exitUsage || !strings.Contains(e, c.want) {
			t.Errorf("%v: exit %d, message %q; want exit 2 mentioning %q", c.args, code, e, c.want)
		}
	}
}
