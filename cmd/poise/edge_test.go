package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"poise/energy/molecule"
	"poise/energy/units"
	"poise/settle"
)

// Edge cases through the whole pipeline, as a user meets them on the
// command line: linear and nearly linear molecules, single atoms, ions,
// high multiplicities and diatomics, at HF/STO-3G or HF/3-21G.

// xyzText writes an XYZ file body from element symbols and positions in Å.
func xyzText(comment string, atoms ...any) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d\n%s\n", len(atoms)/4, comment)
	for i := 0; i+3 < len(atoms); i += 4 {
		fmt.Fprintf(&b, "%s %.8f %.8f %.8f\n", atoms[i], atoms[i+1], atoms[i+2], atoms[i+3])
	}
	return b.String()
}

// bent is a–b–c with bonds r1, r2 (Å) and the angle at b (degrees).
func bent(a, b, c string, r1, r2, angleDeg float64) string {
	t := angleDeg * math.Pi / 180
	return xyzText(fmt.Sprintf("%s%s%s at %g°", a, b, c, angleDeg), a, r1, 0.0, 0.0, b, 0.0, 0.0, 0.0, c, r2*math.Cos(t), r2*math.Sin(t), 0.0)
}

// transBentHCCH is acetylene with both H–C–C angles at 180° − bendDeg,
// the hydrogens on opposite sides, one lifted out of the plane.
func transBentHCCH(bendDeg float64) string {
	b := bendDeg * math.Pi / 180
	return xyzText("HCCH bent", "H", -0.6-1.06*math.Cos(b), 1.06*math.Sin(b), 0.0, "C", -0.6, 0.0, 0.0,
		"C", 0.6, 0.0, 0.0, "H", 0.6+1.06*math.Cos(b), -1.06*math.Sin(b), 0.02)
}

// settleJSON runs poise settle --json (no store) on NAME.xyz and returns
// the summary and the output directory.
func settleJSON(t *testing.T, name, xyz string, flags ...string) (*settle.Summary, string) {
	t.Helper()
	in := writeInput(t, name+".xyz", xyz)
	out := filepath.Join(t.TempDir(), "out")
	args := append([]string{"settle", in, "--json", "--no-store", "--threads", "2", "--out", out}, flags...)
	stdout, stderr, code, _ := execCLI(t, false, args...)
	if code != exitOK {
		t.Fatalf("settle %s %v: exit %d\n%s%s", name, flags, code, stdout, stderr)
	}
	var s settle.Summary
	if err := json.Unmarshal([]byte(stdout), &s); err != nil {
		t.Fatalf("settle JSON: %v\n%s", err, stdout)
	}
	return &s, out
}

// maxOffLine is the largest distance (Å) of an atom from the line through
// the first and the last atom.
func maxOffLine(g [][3]float64) float64 {
	a, b := g[0], g[len(g)-1]
	var u [3]float64
	l := 0.0
	for k := range u {
		u[k] = b[k] - a[k]
		l += u[k] * u[k]
	}
	l = math.Sqrt(l)
	worst := 0.0
	for _, p := range g {
		var d [3]float64
		h := 0.0
		for k := range d {
			d[k] = p[k] - a[k]
			h += d[k] * u[k] / l
		}
		off := 0.0
		for k := range d {
			x := d[k] - h*u[k]/l
			off += x * x
		}
		worst = math.Max(worst, math.Sqrt(off))
	}
	return worst
}

// thermoReportJSON is the part of 'poise thermo --json' the tests read.
type thermoReportJSON struct {
	PointGroup     string    `json:"point_group"`
	SymmetryNumber int       `json:"symmetry_number"`
	RotorType      string    `json:"rotor_type"`
	ConstantsCm1   []float64 `json:"rotational_constants_cm1"`
	FrequenciesCm1 []float64 `json:"frequencies_used_cm1"`
	EntropyJPerMol float64   `json:"entropy_j_per_mol_k"`
	CpJPerMolK     float64   `json:"heat_capacity_cp_j_per_mol_k"`
	Components     map[string]struct {
		Entropy float64 `json:"entropy_j_per_mol_k"`
	} `json:"components"`
}

func edgeThermo(t *testing.T, args ...string) *thermoReportJSON {
	t.Helper()
	stdout, stderr, code, _ := execCLI(t, false, append([]string{"thermo", "--json"}, args...)...)
	if code != exitOK {
		t.Fatalf("thermo %v: exit %d\n%s%s", args, code, stdout, stderr)
	}
	var r thermoReportJSON
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatalf("thermo JSON: %v\n%s", err, stdout)
	}
	return &r
}

// linearRotorEntropy is R[1 + ln(kT/(σ h c B))], the high-temperature
// entropy of a linear rigid rotor (D. A. McQuarrie, Statistical Mechanics,
// 1976, ch. 6; from memory), B in cm⁻¹.
func linearRotorEntropy(bCm1 float64, sigma int, tK float64) float64 {
	kT := units.Boltzmann * tK / (units.Planck * units.SpeedOfLight * 100) // cm⁻¹
	return units.GasConstant * (1 + math.Log(kT/(float64(sigma)*bCm1)))
}

// harmonicEntropy is the harmonic-oscillator entropy of modes nuCm1,
// R Σ [x/(eˣ−1) − ln(1−e⁻ˣ)] with x = hcν/kT (McQuarrie ch. 8; from
// memory).
func harmonicEntropy(tK float64, nuCm1 ...float64) float64 {
	kT := units.Boltzmann * tK / (units.Planck * units.SpeedOfLight * 100)
	s := 0.0
	for _, nu := range nuCm1 {
		x := nu / kT
		s += x/math.Expm1(x) - math.Log(-math.Expm1(-x))
	}
	return units.GasConstant * s
}

// TestEdgeLinearSettle takes CO2, acetylene and HCN from bent starts (10°,
// 5°, 1° and 0.01° from linear) through poise settle: the relaxation must
// straighten them (linear bends, internal coordinates near 180°), the
// Hessian give 3N−5 modes with the two components of each bend equal and
// nothing imaginary, and the thermochemistry treat a linear rotor of the
// right symmetry number. CO2 and HCCH are D∞h (σ = 2), HCN is C∞v (σ = 1),
// each with one doubly degenerate bend per bending coordinate (G. Herzberg,
// Molecular Spectra and Molecular Structure II, 1945; from memory).
func TestEdgeLinearSettle(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	for _, c := range []struct {
		name   string
		xyz    string
		group  string
		sigma  int
		nModes int
		pairs  [][2]int // degenerate bend components (indices into the ascending wavenumbers)
	}{
		{"co2-170", bent("O", "C", "O", 1.18, 1.18, 170), "D∞h", 2, 4, [][2]int{{0, 1}}},
		{"co2-179", bent("O", "C", "O", 1.16, 1.16, 179), "D∞h", 2, 4, [][2]int{{0, 1}}},
		{"co2-179.99", bent("O", "C", "O", 1.16, 1.16, 179.99), "D∞h", 2, 4, [][2]int{{0, 1}}},
		{"co2-180-unequal", xyzText("CO2 straight, bonds unequal", "O", -1.25, 0.0, 0.0, "C", 0.0, 0.0, 0.0, "O", 1.10, 0.0, 0.0), "D∞h", 2, 4, [][2]int{{0, 1}}},
		{"hcn-179", bent("H", "C", "N", 1.07, 1.15, 179), "C∞v", 1, 4, [][2]int{{0, 1}}},
		{"hcch-175", transBentHCCH(5), "D∞h", 2, 7, [][2]int{{0, 1}, {2, 3}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			s, out := settleJSON(t, c.name, c.xyz, "--method", "hf", "--basis", "sto-3g")
			if !s.Minimum() || s.ImaginaryCount != 0 {
				t.Fatalf("verdict %q, %d imaginary", s.Verdict, s.ImaginaryCount)
			}
			if off := maxOffLine(s.GeometryAngstrom); off > 1e-4 {
				t.Errorf("settled geometry not linear: an atom %.2e Å off the line", off)
			}
			if s.PointGroup != c.group || s.SymmetryNumber != c.sigma {
				t.Errorf("point group %s σ=%d, want %s σ=%d", s.PointGroup, s.SymmetryNumber, c.group, c.sigma)
			}
			if len(s.FrequenciesCm1) != c.nModes {
				t.Fatalf("%d modes %v, want 3N−5 = %d", len(s.FrequenciesCm1), s.FrequenciesCm1, c.nModes)
			}
			if s.FrequenciesCm1[0] <= 0 {
				t.Errorf("lowest mode %.2f cm⁻¹: imaginary", s.FrequenciesCm1[0])
			}
			for _, p := range c.pairs {
				if d := math.Abs(s.FrequenciesCm1[p[0]] - s.FrequenciesCm1[p[1]]); d > 0.1 {
					t.Errorf("bend components %.3f and %.3f cm⁻¹ differ by %.3f", s.FrequenciesCm1[p[0]], s.FrequenciesCm1[p[1]], d)
				}
			}
			// The rotational entropy of the settled structure is that of
			// a linear rotor with its B and σ.
			r := edgeThermo(t, filepath.Join(out, c.name+".modes.json"))
			if r.RotorType != "linear" || len(r.ConstantsCm1) != 1 || r.PointGroup != c.group {
				t.Fatalf("thermo of the modes file: %s rotor, constants %v, %s", r.RotorType, r.ConstantsCm1, r.PointGroup)
			}
			want := linearRotorEntropy(r.ConstantsCm1[0], c.sigma, 298.15)
			if got := r.Components["rotation"].Entropy; math.Abs(got-want) > 1e-3 {
				t.Errorf("rotational entropy %.4f J/(mol K), want %.4f (linear rotor, B %.5f cm⁻¹, σ %d)", got, want, r.ConstantsCm1[0], c.sigma)
			}
		})
	}
}

// An atom's standard entropy at 298.15 K and 1 bar is translational plus
// R ln g of its ground level, whatever the method. Handbook values in
// J/(mol K), rounded to 0.01 here: He 126.153, Ar 154.846, N 153.301
// (CODATA Key Values for Thermodynamics, J. D. Cox, D. D. Wagman,
// V. A. Medvedev, 1989; from memory), Mn 173.71 (NIST-JANAF tables, 4th
// ed., 1998; from memory), Cr 174.31 (NIST-JANAF; from memory). N (⁴S),
// Mn (⁶S) and Cr (⁷S) have no low-lying levels: g = 2S+1. The handbook
// uses the natural-abundance mass, poise the most abundant isotope:
// (3/2) R ln(m/m_nat) moves S by at most 0.014 (Cr).
var atomEntropies = []struct {
	element      string
	multiplicity int
	basis        string
	entropy      float64
}{
	{"He", 1, "sto-3g", 126.153},
	{"Ar", 1, "sto-3g", 154.846},
	{"N", 4, "sto-3g", 153.301},
	{"Mn", 6, "sto-3g", 173.71},
	{"Cr", 7, "3-21g", 174.31},
}

// TestEdgeAtomSettle settles single atoms, closed and open shell: no
// relaxation steps, no vibrations, verdict minimum, point group Kh, and the
// handbook entropy; Cp = 5R/2 for a monatomic ideal gas.
func TestEdgeAtomSettle(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF")
	}
	for _, c := range atomEntropies {
		t.Run(c.element, func(t *testing.T) {
			xyz := xyzText(c.element, c.element, 0.0, 0.0, 0.0)
			s, _ := settleJSON(t, c.element, xyz, "--method", "hf", "--basis", c.basis, "--multiplicity", fmt.Sprint(c.multiplicity))
			if !s.Minimum() || len(s.FrequenciesCm1) != 0 || s.RelaxSteps != 0 {
				t.Fatalf("verdict %q, frequencies %v, %d steps", s.Verdict, s.FrequenciesCm1, s.RelaxSteps)
			}
			if s.PointGroup != "Kh" || s.SymmetryNumber != 1 || s.Multiplicity != c.multiplicity || s.ZPEHartree != 0 {
				t.Errorf("point group %s σ=%d, multiplicity %d, ZPE %g", s.PointGroup, s.SymmetryNumber, s.Multiplicity, s.ZPEHartree)
			}
			if math.Abs(s.EntropyJPerMolK-c.entropy) > 0.02 {
				t.Errorf("S = %.3f J/(mol K), handbook %.3f", s.EntropyJPerMolK, c.entropy)
			}
			if cp := 2.5 * units.GasConstant; math.Abs(s.CpJPerMolK-cp) > 1e-9 {
				t.Errorf("Cp = %.6f, want 5R/2 = %.6f", s.CpJPerMolK, cp)
			}
		})
	}
}

// TestEdgeAtomCommands runs relax, modes and thermo on one atom as a user
// would: relax says there is nothing to do, modes finds no vibrations and
// writes a modes file that thermo reads, and thermo takes --xyz with an
// empty --frequencies. Oxygen's ³P ground term is split by spin–orbit
// coupling into J = 2, 1, 0 at 0, 158.265 and 226.977 cm⁻¹ (NIST Atomic
// Spectra Database; from memory); with those levels S°(O, 298.15 K) is
// 161.059 J/(mol K) (CODATA Key Values, 1989; from memory).
func TestEdgeAtomCommands(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF")
	}
	ar := writeInput(t, "ar.xyz", xyzText("argon", "Ar", 0.0, 0.0, 0.0))
	level := []string{"--method", "hf", "--basis", "sto-3g", "--threads", "2"}

	stdout, stderr, code, _ := execCLI(t, false, append([]string{"relax", ar, "--out", t.TempDir()}, level...)...)
	if code != exitOK || !strings.Contains(stdout, "a single atom: nothing to relax") {
		t.Errorf("relax one atom: exit %d\n%s%s", code, stdout, stderr)
	}

	stdout, stderr, code, _ = execCLI(t, false, append([]string{"settle", ar, "--no-store", "--out", t.TempDir()}, level...)...)
	if code != exitOK || !strings.Contains(stdout, "minimum confirmed") || !strings.Contains(stdout, "a single atom: no vibrations") {
		t.Errorf("settle one atom: exit %d\n%s%s", code, stdout, stderr)
	}

	out := t.TempDir()
	stdout, stderr, code, _ = execCLI(t, false, append([]string{"modes", ar, "--json", "--out", out}, level...)...)
	if code != exitOK {
		t.Fatalf("modes one atom: exit %d\n%s%s", code, stdout, stderr)
	}
	var mf struct {
		Frequencies []float64 `json:"frequencies_cm1"`
		Imaginary   int       `json:"imaginary_count"`
	}
	if err := json.Unmarshal([]byte(stdout), &mf); err != nil || len(mf.Frequencies) != 0 || mf.Imaginary != 0 {
		t.Fatalf("modes JSON of one atom: %v, frequencies %v", err, mf.Frequencies)
	}

	fromModes := edgeThermo(t, filepath.Join(out, "ar.modes.json"))
	byHand := edgeThermo(t, "--xyz", ar, "--frequencies", "")
	for _, r := range []*thermoReportJSON{fromModes, byHand} {
		if r.RotorType != "atom" || r.PointGroup != "Kh" || math.Abs(r.EntropyJPerMol-154.846) > 0.02 {
			t.Errorf("thermo of argon: %s, %s, S %.3f J/(mol K) (handbook 154.846)", r.RotorType, r.PointGroup, r.EntropyJPerMol)
		}
	}

	o := writeInput(t, "o.xyz", xyzText("oxygen atom", "O", 0.0, 0.0, 0.0))
	r := edgeThermo(t, "--xyz", o, "--frequencies", "", "--electronic-levels", "0:5,158.265:3,226.977:1")
	if math.Abs(r.EntropyJPerMol-161.059) > 0.02 {
		t.Errorf("O(³P) S = %.3f J/(mol K), handbook 161.059", r.EntropyJPerMol)
	}
}

// TestEdgeCO2HandbookEntropy checks the method-independent part of CO2's
// entropy: translation and rotation at the experimental geometry against
// the handbook S° minus the vibrational part from experimental
// wavenumbers. S°(CO2, 298.15 K) = 213.785 J/(mol K) (CODATA Key Values,
// 1989; from memory); r(C=O) = 1.1600 Å, ν2 = 667.4 cm⁻¹ (twice), ν1 ≈
// 1333 cm⁻¹ (the centre of the 1285/1388 Fermi dyad), ν3 = 2349.1 cm⁻¹
// (G. Herzberg, Molecular Spectra and Molecular Structure II, 1945; from
// memory). The handbook's anharmonic and centrifugal terms are worth a few
// hundredths of J/(mol K) at 298 K.
func TestEdgeCO2HandbookEntropy(t *testing.T) {
	// Bent by 1° as a hand-built file might be: still linear within the
	// symmetry tolerance, D∞h.
	co2 := writeInput(t, "co2.xyz", bent("O", "C", "O", 1.16, 1.16, 179))
	nu := []float64{667.4, 667.4, 1333, 2349.1}
	r := edgeThermo(t, "--xyz", co2, "--frequencies", "667.4,667.4,1333,2349.1")
	if r.PointGroup != "D∞h" || r.SymmetryNumber != 2 || r.RotorType != "linear" {
		t.Fatalf("CO2 bent by 1°: %s σ=%d %s, want D∞h σ=2 linear", r.PointGroup, r.SymmetryNumber, r.RotorType)
	}
	want := 213.785 - harmonicEntropy(298.15, nu...)
	got := r.Components["translation"].Entropy + r.Components["rotation"].Entropy
	if math.Abs(got-want) > 0.1 {
		t.Errorf("S_trans + S_rot = %.3f J/(mol K), handbook minus vibrations %.3f", got, want)
	}
}

// TestEdgeIons settles OH⁻ and NH4⁺ (--charge): a minimum, C∞v and Td
// (σ = 1 and 12), 3N−5 and 3N−6 modes, and the IR selection rules of Td,
// which the charged molecule's dipole (origin-dependent) must not spoil:
// the three T2 components are active and degenerate, the E pair and A1
// inactive (Herzberg II, 1945; from memory).
func TestEdgeIons(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	level := []string{"--method", "hf", "--basis", "3-21g"}
	s, _ := settleJSON(t, "oh", xyzText("hydroxide", "O", 0.0, 0.0, 0.0, "H", 0.97, 0.0, 0.0), append(level, "--charge", "-1")...)
	if !s.Minimum() || s.Charge != -1 || s.PointGroup != "C∞v" || s.SymmetryNumber != 1 || len(s.FrequenciesCm1) != 1 {
		t.Errorf("OH⁻: verdict %q, charge %d, %s σ=%d, modes %v", s.Verdict, s.Charge, s.PointGroup, s.SymmetryNumber, s.FrequenciesCm1)
	}
	a := 1.03 / math.Sqrt(3)
	nh4 := xyzText("ammonium", "N", 0.0, 0.0, 0.0, "H", a, a, a, "H", -a, -a, a, "H", -a, a, -a, "H", a, -a, -a)
	s, out := settleJSON(t, "nh4", nh4, append(level, "--charge", "1")...)
	if !s.Minimum() || s.Charge != 1 || s.PointGroup != "Td" || s.SymmetryNumber != 12 || len(s.FrequenciesCm1) != 9 {
		t.Fatalf("NH4⁺: verdict %q, charge %d, %s σ=%d, modes %v", s.Verdict, s.Charge, s.PointGroup, s.SymmetryNumber, s.FrequenciesCm1)
	}
	data, err := os.ReadFile(filepath.Join(out, "nh4.modes.json"))
	if err != nil {
		t.Fatal(err)
	}
	var mf struct {
		Frequencies []float64 `json:"frequencies_cm1"`
		IR          []float64 `json:"ir_intensities_km_per_mol"`
	}
	if err := json.Unmarshal(data, &mf); err != nil || len(mf.IR) != 9 {
		t.Fatalf("NH4⁺ modes file: %v, %d intensities", err, len(mf.IR))
	}
	// Ascending: T2 bend (3), E bend (2), A1 stretch, T2 stretch (3).
	for _, g := range [][]int{{0, 1, 2}, {3, 4}, {6, 7, 8}} {
		for _, k := range g[1:] {
			if d := math.Abs(mf.Frequencies[k] - mf.Frequencies[g[0]]); d > 0.1 {
				t.Errorf("modes %d and %d differ by %.3f cm⁻¹", g[0]+1, k+1, d)
			}
		}
	}
	for k, ir := range mf.IR {
		active := k <= 2 || k >= 6
		if active && ir < 10 || !active && ir > 1e-3 {
			t.Errorf("mode %d (%.1f cm⁻¹): IR %.3g km/mol, active %v", k+1, mf.Frequencies[k], ir, active)
		}
	}
}

// TestEdgeDiatomics settles H2, N2, HF and triplet O2: linear, one mode,
// D∞h or C∞v. For H2 at HF/STO-3G the minimum is at R = 1.346 bohr with
// E = −1.117 Eh (A. Szabo, N. S. Ostlund, Modern Quantum Chemistry, 1982,
// sec. 3.5; from memory). Triplet O2 carries R ln 3 of electronic entropy.
func TestEdgeDiatomics(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	for _, c := range []struct {
		name, a, b   string
		r            float64
		multiplicity int
		group        string
	}{
		{"h2", "H", "H", 0.75, 1, "D∞h"},
		{"n2", "N", "N", 1.10, 1, "D∞h"},
		{"hf", "H", "F", 0.92, 1, "C∞v"},
		{"o2", "O", "O", 1.22, 3, "D∞h"},
	} {
		t.Run(c.name, func(t *testing.T) {
			s, out := settleJSON(t, c.name, xyzText(c.name, c.a, 0.0, 0.0, 0.0, c.b, c.r, 0.0, 0.0),
				"--method", "hf", "--basis", "sto-3g", "--multiplicity", fmt.Sprint(c.multiplicity))
			if !s.Minimum() || len(s.FrequenciesCm1) != 1 || s.FrequenciesCm1[0] <= 0 || s.PointGroup != c.group {
				t.Fatalf("verdict %q, modes %v, %s", s.Verdict, s.FrequenciesCm1, s.PointGroup)
			}
			if c.name == "h2" {
				g := s.GeometryAngstrom
				r := math.Hypot(math.Hypot(g[1][0]-g[0][0], g[1][1]-g[0][1]), g[1][2]-g[0][2]) * units.AngstromBohr
				if math.Abs(r-1.346) > 0.002 || math.Abs(s.EnergyHartree+1.117) > 1e-3 {
					t.Errorf("H2: R = %.4f bohr, E = %.6f Eh; published 1.346 bohr, −1.117 Eh", r, s.EnergyHartree)
				}
			}
			if c.multiplicity > 1 {
				r := edgeThermo(t, filepath.Join(out, c.name+".modes.json"))
				if want := units.GasConstant * math.Log(float64(c.multiplicity)); math.Abs(r.Components["electronic"].Entropy-want) > 1e-9 {
					t.Errorf("electronic entropy %.6f, want R ln %d = %.6f", r.Components["electronic"].Entropy, c.multiplicity, want)
				}
			}
		})
	}
}

// TestEdgeUsageErrors: charges and multiplicities the electrons cannot
// have, a held angle at 180° and too few frequencies for a straight
// molecule exit 2 with a message that says what to change; a modes file of
// a molecule bent by 1° (3N−6 frequencies, as 'poise modes' writes for an
// unrelaxed start) is linear within the symmetry tolerance, and thermo
// treats it as the bent molecule it was computed for (C2v, σ = 2), with a
// warning.
func TestEdgeUsageErrors(t *testing.T) {
	n := writeInput(t, "n.xyz", xyzText("nitrogen atom", "N", 0.0, 0.0, 0.0))
	he := writeInput(t, "he.xyz", xyzText("helium", "He", 0.0, 0.0, 0.0))
	co2 := writeInput(t, "co2.xyz", xyzText("linear CO2", "O", -1.16, 0.0, 0.0, "C", 0.0, 0.0, 0.0, "O", 1.16, 0.0, 0.0))
	level := []string{"--method", "hf", "--basis", "sto-3g"}
	// A modes file written by hand in the layout 'poise modes' writes:
	// CO2 bent by 1°, with the 3N−6 frequencies of a bent molecule.
	t1 := 179 * math.Pi / 180
	modes := writeInput(t, "co2.modes.json", fmt.Sprintf(`{"symbols": ["O", "C", "O"],
"geometry_angstrom": [[1.16, 0, 0], [0, 0, 0], [%.8f, %.8f, 0]],
"frequencies_cm1": [667, 1333, 2349], "multiplicity": 1}`, 1.16*math.Cos(t1), 1.16*math.Sin(t1)))
	for _, c := range []struct {
		args []string
		want string
	}{
		{append([]string{"settle", n, "--multiplicity", "3", "--no-store"}, level...), "7 electrons cannot have multiplicity 3"},
		{append([]string{"relax", n, "--multiplicity", "10"}, level...), "multiplicity 10 needs 9 unpaired electrons"},
		{append([]string{"modes", n, "--multiplicity", "-2"}, level...), "multiplicity -2 is invalid"},
		{append([]string{"settle", he, "--charge", "3", "--no-store"}, level...), "larger than the total nuclear charge"},
		{append([]string{"relax", co2, "--hold", "1-2-3"}, level...), "too close to linear"},
		{[]string{"thermo", "--xyz", co2, "--frequencies", "667,1333,2349"}, "give the 4 vibrational wavenumbers (3N−5)"},
		{[]string{"thermo", "--xyz", he, "--frequencies", "100"}, "an atom has no vibrations, give none"},
	} {
		stdout, stderr, code, _ := execCLI(t, false, c.args...)
		if code != exitUsage || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, want %d with %q\n%s%s", c.args[:2], code, exitUsage, c.want, stdout, stderr)
		}
	}
	stdout, stderr, code, _ := execCLI(t, false, "thermo", modes)
	if code != exitOK || !strings.Contains(stdout, "point group C2v  σ = 2") || !strings.Contains(stderr, "treated as bent") {
		t.Errorf("thermo of a modes file bent by 1°: exit %d\n%s%s", code, stdout, stderr)
	}
}

// TestEdgeAtomNote: settle's note on a free atom names the ground-state
// multiplicity when the default (1 or 2) is not it, and the spin–orbit
// levels when the ground term has L > 0. Ground terms N ⁴S, O ³P, Mn ⁶S,
// Cr ⁷S, Ne ¹S (NIST Atomic Spectra Database; from memory).
func TestEdgeAtomNote(t *testing.T) {
	for _, c := range []struct {
		xyz                  string
		charge, multiplicity int
		want                 string // "" for no note
	}{
		{xyzText("N", "N", 0.0, 0.0, 0.0), 0, 0, "--multiplicity 4"},
		{xyzText("N", "N", 0.0, 0.0, 0.0), 0, 4, ""},
		{xyzText("O", "O", 0.0, 0.0, 0.0), 0, 0, "--multiplicity 3"},
		{xyzText("O", "O", 0.0, 0.0, 0.0), 0, 3, "spin–orbit"},
		{xyzText("Mn", "Mn", 0.0, 0.0, 0.0), 0, 6, ""},
		{xyzText("Cr", "Cr", 0.0, 0.0, 0.0), 0, 0, "--multiplicity 7"},
		{xyzText("Ne", "Ne", 0.0, 0.0, 0.0), 0, 0, ""},
		{xyzText("O-", "O", 0.0, 0.0, 0.0), -1, 0, ""},
		{xyzText("H2", "H", 0.0, 0.0, 0.0, "H", 0.74, 0.0, 0.0), 0, 0, ""},
	} {
		mol, err := molecule.ParseXYZ("atom.xyz", []byte(c.xyz))
		if err != nil {
			t.Fatal(err)
		}
		if err := mol.SetSpin(c.charge, c.multiplicity); err != nil {
			t.Fatal(err)
		}
		got := atomNote(mol)
		if (c.want == "") != (got == "") || !strings.Contains(got, c.want) {
			t.Errorf("%s charge %d multiplicity %d: note %q, want %q", mol.Formula(), c.charge, mol.Multiplicity, got, c.want)
		}
	}
}

// TestEdgeNearLinearDFT relaxes HCN bent by 1° with B3LYP/3-21G (coarse
// grid 1, whose orientation is fixed once per relaxation): the linear
// bends must take it to the straight minimum, HCN being linear (Herzberg
// II, 1945; from memory), within the report criterion's 0.001 Å step.
func TestEdgeNearLinearDFT(t *testing.T) {
	if testing.Short() {
		t.Skip("DFT relaxation")
	}
	in := writeInput(t, "hcn.xyz", bent("H", "C", "N", 1.07, 1.15, 179))
	stdout, stderr, code, _ := execCLI(t, false, "relax", in, "--method", "b3lyp", "--basis", "3-21g", "--grid", "1",
		"--threads", "2", "--json", "--out", t.TempDir())
	if code != exitOK {
		t.Fatalf("exit %d\n%s%s", code, stdout, stderr)
	}
	var rep struct {
		Converged bool         `json:"converged"`
		Geometry  [][3]float64 `json:"geometry_angstrom"`
	}
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil || !rep.Converged {
		t.Fatalf("relax JSON: %v, converged %v", err, rep.Converged)
	}
	if off := maxOffLine(rep.Geometry); off > 1e-3 {
		t.Errorf("C is %.2e Å off the H–N line", off)
	}
}
