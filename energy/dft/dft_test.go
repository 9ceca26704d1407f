package dft

import (
	"context"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
)

type atomSpec struct {
	sym     string
	x, y, z float64 // ångström
}

var water = []atomSpec{
	{"O", 0, 0, 0.1173},
	{"H", 0, 0.75695, -0.4692},
	{"H", 0, -0.75695, -0.4692},
}

func build(t testing.TB, atoms []atomSpec, charge, mult int) *molecule.Molecule {
	t.Helper()
	m := &molecule.Molecule{}
	for _, a := range atoms {
		z, ok := molecule.ElementBySymbol(a.sym)
		if !ok {
			t.Fatalf("unknown element %q", a.sym)
		}
		m.Atoms = append(m.Atoms, molecule.Atom{Z: z, Symbol: molecule.Symbol(z),
			Position: [3]float64{a.x * units.AngstromBohr, a.y * units.AngstromBohr, a.z * units.AngstromBohr},
			Mass:     molecule.MostAbundantMass(z)})
	}
	if err := m.SetSpin(charge, mult); err != nil {
		t.Fatal(err)
	}
	return m
}

// ks runs a Kohn–Sham calculation with the grid oriented by the molecule's
// own standard frame.
func ks(t testing.TB, m *molecule.Molecule, method, basisName string, level int, unrestricted bool) *scf.Result {
	t.Helper()
	fn, err := xc.Lookup(method)
	if err != nil {
		t.Fatal(err)
	}
	set, err := basis.Load(basisName)
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	z := make([]int, len(m.Atoms))
	pos := make([][3]float64, len(m.Atoms))
	for i, a := range m.Atoms {
		z[i], pos[i] = a.Z, a.Position
	}
	frame, err := grid.StandardFrame(z, pos)
	if err != nil {
		t.Fatal(err)
	}
	g, err := grid.New(z, pos, level, frame, 2)
	if err != nil {
		t.Fatal(err)
	}
	pot := New(fn, g, integral.NewBasis(sh), 2)
	res, err := scf.Run(context.Background(), m, sh, scf.Options{XC: pot, Unrestricted: unrestricted})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestElectronCount(t *testing.T) {
	// ∫ρ equals the number of electrons (exact; the grid must reproduce it
	// to 1e-5 at the default level).
	res := ks(t, build(t, water, 0, 0), "b3lyp", "6-31g*", grid.DefaultLevel, false)
	if d := math.Abs(res.IntegratedElectrons - 10); d > 1e-5 {
		t.Errorf("∫ρ = %.8f, off by %.2e", res.IntegratedElectrons, d)
	}
}

func TestUnrestrictedEqualsRestricted(t *testing.T) {
	// UKS of a closed-shell molecule equals RKS (the spin-polarized
	// functional at ζ = 0 is the unpolarized one; exact).
	for _, method := range []string{"lda", "b3lyp"} {
		m := build(t, water, 0, 0)
		r := ks(t, m, method, "3-21g", grid.DefaultLevel, false)
		u := ks(t, m, method, "3-21g", grid.DefaultLevel, true)
		if d := math.Abs(r.EnergyHartree - u.EnergyHartree); d > 1e-9 {
			t.Errorf("%s: UKS %.12f vs RKS %.12f differ by %.2e", method, u.EnergyHartree, r.EnergyHartree, d)
		}
	}
}

func rotated(in []atomSpec) []atomSpec {
	a, b := 0.7, -0.4
	ca, sa, cb, sb := math.Cos(a), math.Sin(a), math.Cos(b), math.Sin(b)
	out := make([]atomSpec, len(in))
	for i, p := range in {
		// rotation about z by a, then about x by b, then a shift
		x, y, z := ca*p.x-sa*p.y, sa*p.x+ca*p.y, p.z
		y, z = cb*y-sb*z, sb*y+cb*z
		out[i] = atomSpec{p.sym, x + 0.3, y - 1.2, z + 0.5}
	}
	return out
}

func TestGridConvergenceAndRotation(t *testing.T) {
	if testing.Short() {
		t.Skip("B3LYP/6-31G* on three grids")
	}
	// The default grid is within 1e-6 Eh of the next finer level for water
	// and rotating the molecule moves the energy less than 1e-6 Eh (the
	// project's accuracy target for the default grid).
	m := build(t, water, 0, 0)
	def := ks(t, m, "b3lyp", "6-31g*", grid.DefaultLevel, false).EnergyHartree
	finer := ks(t, m, "b3lyp", "6-31g*", grid.DefaultLevel+1, false).EnergyHartree
	rot := ks(t, build(t, rotated(water), 0, 0), "b3lyp", "6-31g*", grid.DefaultLevel, false).EnergyHartree
	t.Logf("B3LYP/6-31G* water: level %d %.10f, level %d %.10f (diff %.2e), rotated %.10f (diff %.2e)",
		grid.DefaultLevel, def, grid.DefaultLevel+1, finer, def-finer, rot, def-rot)
	if d := math.Abs(def - finer); d > 1e-6 {
		t.Errorf("default grid %.9f vs finer %.9f: %.2e", def, finer, d)
	}
	if d := math.Abs(def - rot); d > 1e-6 {
		t.Errorf("rotated %.9f vs %.9f: %.2e", rot, def, d)
	}
}
