package dispersion

import (
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"poise/energy/molecule"
	"poise/energy/units"
)

// readXYZ reads an XYZ file (ångström) and returns atomic numbers and
// positions in bohr.
func readXYZ(t testing.TB, path string) ([]int, [][3]float64) {
	t.Helper()
	m, err := molecule.ReadXYZFile(path)
	if err != nil {
		t.Fatal(err)
	}
	z := make([]int, len(m.Atoms))
	pos := make([][3]float64, len(m.Atoms))
	for i, a := range m.Atoms {
		z[i], pos[i] = a.Z, a.Position
	}
	return z, pos
}

func mustParams(t testing.TB, name string) Params {
	t.Helper()
	p, err := ParamsFor(name)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func mustCompute(t testing.TB, z []int, pos [][3]float64, p Params, grad bool) Result {
	t.Helper()
	r, err := Compute(z, pos, p, grad)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// TestValidationCase compares with the published validation data of the
// simple-dftd3 library, version 0.4.2 (testdata/case-16-atoms.json, copied
// from the project's shared D3 data): two-body D3(BJ) energy and gradient of
// a 16-atom structure with the olyp parameters. Tolerances are those of
// issue 12: 1e-7 Eh and 1e-7 Eh/bohr per component.
func TestValidationCase(t *testing.T) {
	z, pos := readXYZ(t, "testdata/case-16-atoms.xyz")
	data, err := os.ReadFile("testdata/case-16-atoms.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Energy   float64      `json:"energy_hartree"`
		Gradient [][3]float64 `json:"gradient_hartree_per_bohr"`
	}
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Gradient) != len(z) {
		t.Fatalf("reference gradient has %d rows for %d atoms", len(ref.Gradient), len(z))
	}
	// The issue quotes the energy as −0.073515758 Eh.
	if math.Abs(ref.Energy-(-0.073515758)) > 1e-9 {
		t.Fatalf("reference file energy %.10f differs from the issue's −0.073515758", ref.Energy)
	}
	r := mustCompute(t, z, pos, mustParams(t, "olyp"), true)
	if d := math.Abs(r.EnergyHartree - ref.Energy); d > 1e-7 {
		t.Errorf("energy %.10f Eh, published %.10f Eh (|Δ| %.1e > 1e-7)", r.EnergyHartree, ref.Energy, d)
	}
	for i := range z {
		for k := 0; k < 3; k++ {
			if d := math.Abs(r.Gradient[i][k] - ref.Gradient[i][k]); d > 1e-7 {
				t.Errorf("atom %d %c: gradient %.10f, published %.10f", i+1, "xyz"[k], r.Gradient[i][k], ref.Gradient[i][k])
			}
		}
	}
	// Energy-only and energy+gradient paths give the same energy.
	if e := mustCompute(t, z, pos, mustParams(t, "olyp"), false).EnergyHartree; e != r.EnergyHartree {
		t.Errorf("energy without gradient %.17g, with gradient %.17g", e, r.EnergyHartree)
	}
}

// numericGradient is the central-difference gradient of the energy.
func numericGradient(t *testing.T, z []int, pos [][3]float64, p Params, h float64) [][3]float64 {
	g := make([][3]float64, len(z))
	q := append([][3]float64(nil), pos...)
	for i := range z {
		for k := 0; k < 3; k++ {
			x := q[i][k]
			q[i][k] = x + h
			ep := mustCompute(t, z, q, p, false).EnergyHartree
			q[i][k] = x - h
			em := mustCompute(t, z, q, p, false).EnergyHartree
			q[i][k] = x
			g[i][k] = (ep - em) / (2 * h)
		}
	}
	return g
}

// TestGradientFiniteDifference checks the analytic gradient against central
// differences of the energy (the definition of the derivative) to 1e-9
// Eh/bohr (issue 12). The compressed structure puts the coordination
// numbers between references, where the chain-rule terms are largest.
func TestGradientFiniteDifference(t *testing.T) {
	z, pos := readXYZ(t, "testdata/case-16-atoms.xyz")
	compressed := make([][3]float64, len(pos))
	for i := range pos {
		for k := 0; k < 3; k++ {
			compressed[i][k] = 0.85 * pos[i][k]
		}
	}
	bz, bpos := readXYZ(t, "../../testdata/molecules/benzene.xyz")
	dz, dpos := dimer(bz, bpos, [3]float64{1.0, 0.5, 6.5})
	cases := []struct {
		name, functional string
		z                []int
		pos              [][3]float64
	}{
		{"validation case, olyp", "olyp", z, pos},
		{"validation case compressed, b3lyp", "b3lyp", z, compressed},
		{"validation case, hf", "hf", z, pos},
		{"benzene dimer 3.4 Å, pbe0", "pbe0", dz, dpos},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := mustParams(t, c.functional)
			an := mustCompute(t, c.z, c.pos, p, true).Gradient
			num := numericGradient(t, c.z, c.pos, p, 1e-4)
			for i := range an {
				for k := 0; k < 3; k++ {
					if d := math.Abs(an[i][k] - num[i][k]); d > 1e-9 {
						t.Errorf("atom %d %c: analytic %.12f, central difference %.12f (|Δ| %.1e)", i+1, "xyz"[k], an[i][k], num[i][k], d)
					}
				}
			}
		})
	}
}

// dimer returns two copies of a molecule, the second shifted by shiftBohr.
func dimer(z []int, pos [][3]float64, shiftBohr [3]float64) ([]int, [][3]float64) {
	zz := append(append([]int(nil), z...), z...)
	pp := append([][3]float64(nil), pos...)
	for _, p := range pos {
		pp = append(pp, [3]float64{p[0] + shiftBohr[0], p[1] + shiftBohr[1], p[2] + shiftBohr[2]})
	}
	return zz, pp
}

// randomRotation returns a uniformly random rotation matrix (from a random
// unit quaternion).
func randomRotation(rng *rand.Rand) [3][3]float64 {
	var q [4]float64
	n := 0.0
	for k := range q {
		q[k] = rng.NormFloat64()
		n += q[k] * q[k]
	}
	n = math.Sqrt(n)
	w, x, y, z := q[0]/n, q[1]/n, q[2]/n, q[3]/n
	return [3][3]float64{
		{1 - 2*(y*y+z*z), 2 * (x*y - w*z), 2 * (x*z + w*y)},
		{2 * (x*y + w*z), 1 - 2*(x*x+z*z), 2 * (y*z - w*x)},
		{2 * (x*z - w*y), 2 * (y*z + w*x), 1 - 2*(x*x+y*y)},
	}
}

func rotate(r [3][3]float64, v [3]float64) [3]float64 {
	var o [3]float64
	for a := 0; a < 3; a++ {
		o[a] = r[a][0]*v[0] + r[a][1]*v[1] + r[a][2]*v[2]
	}
	return o
}

// TestInvariance checks that energy, coordination numbers and C6 do not
// change under translation, rotation and reordering of the atoms, and that
// the gradient transforms with them (a property of any energy that depends
// only on interatomic distances). Tolerances allow for round-off only.
func TestInvariance(t *testing.T) {
	z, pos := readXYZ(t, "testdata/case-16-atoms.xyz")
	p := mustParams(t, "b3lyp")
	ref := mustCompute(t, z, pos, p, true)
	rng := rand.New(rand.NewPCG(12, 3))
	n := len(z)
	for trial := 0; trial < 5; trial++ {
		rot := randomRotation(rng)
		shift := [3]float64{rng.NormFloat64() * 20, rng.NormFloat64() * 20, rng.NormFloat64() * 20}
		perm := rng.Perm(n)
		z2 := make([]int, n)
		pos2 := make([][3]float64, n)
		for k, i := range perm {
			z2[k] = z[i]
			r := rotate(rot, pos[i])
			pos2[k] = [3]float64{r[0] + shift[0], r[1] + shift[1], r[2] + shift[2]}
		}
		got := mustCompute(t, z2, pos2, p, true)
		if d := math.Abs(got.EnergyHartree - ref.EnergyHartree); d > 1e-13 {
			t.Errorf("trial %d: energy %.15f, reference orientation %.15f", trial, got.EnergyHartree, ref.EnergyHartree)
		}
		for k, i := range perm {
			if d := math.Abs(got.CN[k] - ref.CN[i]); d > 1e-12 {
				t.Errorf("trial %d atom %d: CN %.14f, want %.14f", trial, i+1, got.CN[k], ref.CN[i])
			}
			if d := math.Abs(got.C6[k] - ref.C6[i]); d > 1e-10 {
				t.Errorf("trial %d atom %d: C6 %.12f, want %.12f", trial, i+1, got.C6[k], ref.C6[i])
			}
			want := rotate(rot, ref.Gradient[i])
			for c := 0; c < 3; c++ {
				if d := math.Abs(got.Gradient[k][c] - want[c]); d > 1e-13 {
					t.Errorf("trial %d atom %d %c: gradient %.15f, rotated reference %.15f", trial, i+1, "xyz"[c], got.Gradient[k][c], want[c])
				}
			}
		}
	}
}

// TestGradientSumsToZero: the gradient of a translation-invariant energy
// has zero net force and zero net torque (Newton's third law).
func TestGradientSumsToZero(t *testing.T) {
	z, pos := readXYZ(t, "testdata/case-16-atoms.xyz")
	g := mustCompute(t, z, pos, mustParams(t, "pbe"), true).Gradient
	var f, tq [3]float64
	for i := range g {
		for k := 0; k < 3; k++ {
			f[k] += g[i][k]
		}
		tq[0] += pos[i][1]*g[i][2] - pos[i][2]*g[i][1]
		tq[1] += pos[i][2]*g[i][0] - pos[i][0]*g[i][2]
		tq[2] += pos[i][0]*g[i][1] - pos[i][1]*g[i][0]
	}
	for k := 0; k < 3; k++ {
		if math.Abs(f[k]) > 1e-14 || math.Abs(tq[k]) > 1e-13 {
			t.Errorf("net force %v, net torque %v", f, tq)
			break
		}
	}
}

// TestBenzeneDimerFallOff: the dispersion interaction of two molecules
// falls off as R⁻⁶ (London). Issue 12 asks for a log–log slope between
// −6.3 and −5.7 for two benzene molecules 10–20 Å apart; checked for the
// stacked (face-to-face) dimer as local slopes between distances 1 Å apart.
// Other orientations deviate more at 10–20 Å because the atom-pair sum
// feels the size of the rings (in plane the local slope reaches −7.6 at
// 10–12 Å); for them R⁻⁶ is checked at 40–60 Å, where that correction and
// the C8 term are below 0.1 in the slope.
func TestBenzeneDimerFallOff(t *testing.T) {
	z, pos := readXYZ(t, "../../testdata/molecules/benzene.xyz")
	p := mustParams(t, "b3lyp")
	mono := mustCompute(t, z, pos, p, false).EnergyHartree
	identity := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	rng := rand.New(rand.NewPCG(6, 6))
	cases := []struct {
		name           string
		rot            [3][3]float64
		dir            [3]float64
		from, to, step float64 // Å
		lo, hi         float64
	}{
		{"stacked", identity, [3]float64{0, 0, 1}, 10, 20, 1, -6.3, -5.7},
		{"stacked far", identity, [3]float64{0, 0, 1}, 40, 60, 5, -6.1, -5.9},
		{"in plane far", identity, [3]float64{1, 0, 0}, 40, 60, 5, -6.1, -5.9},
		{"random 1 far", randomRotation(rng), [3]float64{0.6, 0, 0.8}, 40, 60, 5, -6.1, -5.9},
		{"random 2 far", randomRotation(rng), [3]float64{0, 0.8, -0.6}, 40, 60, 5, -6.1, -5.9},
	}
	for _, c := range cases {
		var prevE, prevR float64
		for ra := c.from; ra <= c.to; ra += c.step {
			r := ra * units.AngstromBohr
			zz := append(append([]int(nil), z...), z...)
			pp := append([][3]float64(nil), pos...)
			for _, v := range pos {
				w := rotate(c.rot, v)
				pp = append(pp, [3]float64{w[0] + r*c.dir[0], w[1] + r*c.dir[1], w[2] + r*c.dir[2]})
			}
			e := mustCompute(t, zz, pp, p, false).EnergyHartree - 2*mono
			if e >= 0 {
				t.Fatalf("%s, %g Å: interaction %.3e Eh is not attractive", c.name, ra, e)
			}
			if prevR > 0 {
				slope := math.Log(e/prevE) / math.Log(ra/prevR)
				if slope < c.lo || slope > c.hi {
					t.Errorf("%s, %g–%g Å: log–log slope %.3f outside [%g, %g]", c.name, prevR, ra, slope, c.lo, c.hi)
				}
			}
			prevE, prevR = e, ra
		}
	}
}

// TestBenzeneMolecularC6: far apart, the interaction of two molecules is
// −C6/R⁶ with C6 = Σ_ij C6_ij summed over their atoms. The dipole
// oscillator strength distribution value for benzene is 1723 Eh·bohr⁶
// (A. Kumar, W. J. Meath, Mol. Phys. 75, 311 (1992); from memory); D3 is
// reported to reproduce molecular C6 with a mean error near 5 % (Grimme et
// al. 2010, from memory), so 10 % is asked here. Only the C6 term is kept
// (s8 = 0, no damping) and R = 300 bohr, where the geometric correction to
// R⁻⁶ is below 0.2 %.
func TestBenzeneMolecularC6(t *testing.T) {
	z, pos := readXYZ(t, "../../testdata/molecules/benzene.xyz")
	p := Params{Functional: "c6 only", S6: 1}
	mono := mustCompute(t, z, pos, p, false).EnergyHartree
	const r = 300.0
	zz, pp := dimer(z, pos, [3]float64{0, 0, r})
	e := mustCompute(t, zz, pp, p, false).EnergyHartree - 2*mono
	c6 := -e * math.Pow(r, 6)
	if math.Abs(c6-1723)/1723 > 0.10 {
		t.Errorf("molecular C6 of benzene %.1f Eh·bohr⁶, reference 1723 (±10 %%)", c6)
	}
}

// TestParamsFor checks the parameter lookup against the published values:
// Grimme, Ehrlich, Goerigk, J. Comput. Chem. 32, 1456 (2011), Table 2
// (hf, blyp, b3lyp, pbe, pbe0; a2 in bohr), and Goerigk & Grimme, Phys.
// Chem. Chem. Phys. 13, 6670 (2011) for olyp — as tabulated in
// damping_bj.tsv; b3lyp5 takes the b3lyp row (issue 12).
func TestParamsFor(t *testing.T) {
	cases := []struct {
		in, name       string
		s6, a1, s8, a2 float64
	}{
		{"hf", "hf", 1, 0.3385, 0.9171, 2.8830},
		{"BLYP", "blyp", 1, 0.4298, 2.6996, 4.2359},
		{"B3LYP", "b3lyp", 1, 0.3981, 1.9889, 4.4211},
		{" b3lyp5 ", "b3lyp5", 1, 0.3981, 1.9889, 4.4211},
		{"pbe", "pbe", 1, 0.4289, 0.7875, 4.4407},
		{"PBE0", "pbe0", 1, 0.4145, 1.2177, 4.8593},
		{"olyp", "olyp", 1, 0.5299, 2.6205, 2.8065},
	}
	for _, c := range cases {
		p, err := ParamsFor(c.in)
		if err != nil {
			t.Errorf("%q: %v", c.in, err)
			continue
		}
		want := Params{Functional: c.name, S6: c.s6, A1: c.a1, S8: c.s8, A2Bohr: c.a2}
		if p != want {
			t.Errorf("%q: %+v, want %+v", c.in, p, want)
		}
	}
	for _, bad := range []string{"", "m06-2x", "b3lyp-d3", "svwn"} {
		_, err := ParamsFor(bad)
		if !errors.Is(err, ErrNoParams) {
			t.Errorf("%q: error %v does not wrap ErrNoParams", bad, err)
			continue
		}
		for _, name := range []string{"hf", "blyp", "b3lyp", "b3lyp5", "pbe", "pbe0", "olyp"} {
			if !strings.Contains(err.Error(), name) {
				t.Errorf("%q: error %q does not list %s", bad, err, name)
			}
		}
	}
	if got, want := strings.Join(Functionals(), " "), "hf blyp b3lyp b3lyp5 pbe pbe0 olyp"; got != want {
		t.Errorf("Functionals() = %s, want %s", got, want)
	}
}

// TestComputeErrors: malformed input is an error, never a panic.
func TestComputeErrors(t *testing.T) {
	p := mustParams(t, "b3lyp")
	nan := math.NaN()
	cases := []struct {
		name string
		z    []int
		pos  [][3]float64
		p    Params
		msg  string
	}{
		{"length mismatch", []int{1, 1}, [][3]float64{{0, 0, 0}}, p, "positions"},
		{"rubidium", []int{37, 1}, [][3]float64{{0, 0, 0}, {0, 0, 3}}, p, "Z 37"},
		{"zero Z", []int{0}, [][3]float64{{0, 0, 0}}, p, "Z 0"},
		{"coincident", []int{1, 1}, [][3]float64{{0, 0, 0}, {0, 0, 0}}, p, "coincide"},
		{"NaN coordinate", []int{1, 1}, [][3]float64{{0, 0, 0}, {nan, 0, 0}}, p, "non-finite"},
		{"NaN parameter", []int{1, 1}, [][3]float64{{0, 0, 0}, {1.4, 0, 0}}, Params{S6: 1, A1: nan}, "not finite"},
	}
	for _, c := range cases {
		_, err := Compute(c.z, c.pos, c.p, true)
		if err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: error %v, want one mentioning %q", c.name, err, c.msg)
		}
	}
	// Zero and one atom: no pairs, zero energy.
	for _, z := range [][]int{{}, {6}} {
		r, err := Compute(z, make([][3]float64, len(z)), p, true)
		if err != nil || r.EnergyHartree != 0 || len(r.Gradient) != len(z) {
			t.Errorf("%d atoms: %+v, %v", len(z), r, err)
		}
	}
}

// TestFreeAtomReferences: an isolated atom has coordination number 0, and
// its C6 is the Gaussian-weighted average of the reference C6 at CN 0
// (the model of Grimme et al. 2010, Eq. 16–17, written out directly).
func TestFreeAtomReferences(t *testing.T) {
	tb, err := loadTables()
	if err != nil {
		t.Fatal(err)
	}
	for zi := 1; zi <= MaxZ; zi++ {
		r := mustCompute(t, []int{zi}, [][3]float64{{0, 0, 0}}, mustParams(t, "pbe"), false)
		if r.CN[0] != 0 {
			t.Errorf("Z %d: CN %g", zi, r.CN[0])
		}
		var want, norm float64
		for a := 0; a < tb.nref[zi]; a++ {
			wa := math.Exp(-4 * tb.refCN[zi][a] * tb.refCN[zi][a])
			norm += wa
			for b := 0; b < tb.nref[zi]; b++ {
				want += wa * math.Exp(-4*tb.refCN[zi][b]*tb.refCN[zi][b]) * tb.c6[c6Index(zi, zi)+a*maxRef+b]
			}
		}
		want /= norm * norm
		if math.Abs(r.C6[0]-want) > 1e-12*want {
			t.Errorf("Z %d: C6 %.10f, want %.10f", zi, r.C6[0], want)
		}
	}
}

// BenchmarkEnergyGradient192 times energy and gradient for 16 benzene
// molecules (192 atoms) on a 4×4 grid 7 Å apart, every other one raised by
// 3.5 Å.
func BenchmarkEnergyGradient192(b *testing.B) {
	z, pos := readXYZ(b, "../../testdata/molecules/benzene.xyz")
	var zz []int
	var pp [][3]float64
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			s := [3]float64{7 * float64(i) * units.AngstromBohr, 7 * float64(j) * units.AngstromBohr, 0}
			if (i+j)%2 == 1 {
				s[2] = 3.5 * units.AngstromBohr
			}
			for k, v := range pos {
				zz = append(zz, z[k])
				pp = append(pp, [3]float64{v[0] + s[0], v[1] + s[1], v[2] + s[2]})
			}
		}
	}
	p := mustParams(b, "b3lyp")
	b.ReportAllocs()
	for b.Loop() {
		mustCompute(b, zz, pp, p, true)
	}
}
