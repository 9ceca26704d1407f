package scf_test

import (
	"context"
	"fmt"
	"math"
	"testing"
	"time"

	"poise/energy/basis"
	"poise/energy/dft"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
)

// hardAtom is an atom of a hard-case molecule, position in ångström.
type hardAtom struct {
	sym     string
	x, y, z float64
}

// hardCase is one molecule of the hard SCF set.
type hardCase struct {
	name         string
	method       string // "hf" or a functional name
	basis        string
	charge, mult int
	unrestricted bool
	atoms        []hardAtom
}

// bent returns a symmetric A–B–A triatomic (B at the origin) with bond
// length r (ångström) and angle theta (degrees).
func bent(center, end string, r, thetaDeg float64) []hardAtom {
	h := thetaDeg * math.Pi / 360
	return []hardAtom{
		{center, 0, 0, 0},
		{end, r * math.Sin(h), 0, r * math.Cos(h)},
		{end, -r * math.Sin(h), 0, r * math.Cos(h)},
	}
}

func diatomic(a, b string, r float64) []hardAtom {
	return []hardAtom{{a, 0, 0, 0}, {b, 0, 0, r}}
}

// tetrahedral returns A at the origin and four B at distance r.
func tetrahedral(a, b string, r float64) []hardAtom {
	s := r / math.Sqrt(3)
	return []hardAtom{{a, 0, 0, 0}, {b, s, s, s}, {b, -s, -s, s}, {b, -s, s, -s}, {b, s, -s, -s}}
}

// The hard SCF set. Experimental geometries (from memory): water r(OH)
// 0.9578 Å, ∠HOH 104.48°, both bonds stretched to 1.8×; O3 1.2717 Å,
// 116.78°; NO 1.1508 Å; CN 1.1718 Å; CH2 ³B1 1.0753 Å, 133.93°; CH2 ¹A1
// 1.107 Å, 102.4°; OH⁻ 0.9643 Å; TiCl4 (Td) 2.170 Å; CuCl 2.051 Å.
var hardSet = []hardCase{
	{"water-1.8x/RHF", "hf", "6-31g*", 0, 1, false, bent("O", "H", 1.8*0.9578, 104.48)},
	{"O3/RB3LYP", "b3lyp", "6-31g*", 0, 1, false, bent("O", "O", 1.2717, 116.78)},
	{"NO/UHF", "hf", "6-31g*", 0, 2, true, diatomic("N", "O", 1.1508)},
	{"NO/UB3LYP", "b3lyp", "6-31g*", 0, 2, true, diatomic("N", "O", 1.1508)},
	{"CN/UHF", "hf", "6-31g*", 0, 2, true, diatomic("C", "N", 1.1718)},
	{"CN/UB3LYP", "b3lyp", "6-31g*", 0, 2, true, diatomic("C", "N", 1.1718)},
	{"CH2-triplet/UB3LYP", "b3lyp", "6-31g*", 0, 3, true, bent("C", "H", 1.0753, 133.93)},
	{"CH2-singlet/RB3LYP", "b3lyp", "6-31g*", 0, 1, false, bent("C", "H", 1.107, 102.4)},
	{"OH-/RB3LYP", "b3lyp", "6-31+g*", -1, 1, false, diatomic("O", "H", 0.9643)},
	{"TiCl4/RB3LYP", "b3lyp", "6-31g*", 0, 1, false, tetrahedral("Ti", "Cl", 2.170)},
	{"CuCl/RB3LYP", "b3lyp", "6-31g*", 0, 1, false, diatomic("Cu", "Cl", 2.051)},
}

// setupHard builds the molecule, shells and SCF options of a case.
func setupHard(t testing.TB, c hardCase) (*molecule.Molecule, []basis.Shell, scf.Options) {
	t.Helper()
	m := &molecule.Molecule{}
	for _, a := range c.atoms {
		z, ok := molecule.ElementBySymbol(a.sym)
		if !ok {
			t.Fatalf("unknown element %q", a.sym)
		}
		m.Atoms = append(m.Atoms, molecule.Atom{Z: z, Symbol: molecule.Symbol(z),
			Position: [3]float64{a.x * units.AngstromBohr, a.y * units.AngstromBohr, a.z * units.AngstromBohr},
			Mass:     molecule.MostAbundantMass(z)})
	}
	if err := m.SetSpin(c.charge, c.mult); err != nil {
		t.Fatal(err)
	}
	set, err := basis.Load(c.basis)
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	opt := scf.Options{Unrestricted: c.unrestricted, Threads: 2}
	attachXC(t, m, sh, c.method, &opt)
	return m, sh, opt
}

// attachXC sets opt.XC to method's functional (nothing for "hf") on the
// default grid of m in its standard frame.
func attachXC(t testing.TB, m *molecule.Molecule, sh []basis.Shell, method string, opt *scf.Options) {
	t.Helper()
	if method == "hf" {
		return
	}
	fn, err := xc.Lookup(method)
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
	g, err := grid.New(z, pos, hardGrid, frame, 2)
	if err != nil {
		t.Fatal(err)
	}
	opt.XC = dft.New(fn, g, integral.NewBasis(sh), 2)
}

// hardGrid is the DFT grid level of the hard set: the default one, as the
// set checks convergence "with default settings".
const hardGrid = grid.DefaultLevel

// TestHardSCF runs the hard set with default SCF settings from two
// different starting guesses (atomic densities; Hückel-like), each
// followed through the stability check. The checks are the issue's: both
// converge, both end at the same energy within 1e-8 Eh, and the final
// solution is stable (lowest orbital-Hessian eigenvalue ≥
// scf.StabilityThreshold). For the open shells (NO, CN, triplet CH2)
// follow mode includes the second-start search (doc.go), so there both
// runs compare the lower of two starts (TestSecondStartFindsLowerOpenShell
// checks the search itself). Runs in the plain pass only, and not with
// -short: about 180 s of CPU on 2 threads, 2 min on an idle 2-core
// machine (TiCl4 80 s, CuCl 35 s, O3 26 s, NO/CN/CH2 DFT 7–11 s each,
// the rest ≤ 2 s; measured with the XC build of December 2026).
func TestHardSCF(t *testing.T) {
	if testing.Short() {
		t.Skip("hard SCF set skipped in -short mode")
	}
	if referenceRun {
		t.Skip("hard SCF set runs in the plain test pass only")
	}
	for _, c := range hardSet {
		t.Run(c.name, func(t *testing.T) {
			start := time.Now()
			m, sh, opt := setupHard(t, c)
			opt.Stability = scf.StabilityFollow
			var energies []float64
			for _, g := range []scf.GuessKind{scf.GuessAtomic, scf.GuessHuckel} {
				opt.StartGuess = g
				var notes []string
				opt.Log = func(s string) { notes = append(notes, s) }
				res, err := scf.Run(context.Background(), m, sh, opt)
				if err != nil {
					t.Fatalf("%s guess: %v", g, err)
				}
				st := res.Stability
				if st == nil || !st.Stable {
					t.Errorf("%s guess: final solution not stable: %+v", g, st)
					continue
				}
				if len(notes) != len(res.Fallbacks) {
					t.Errorf("%s guess: %d notices logged, %d recorded", g, len(notes), len(res.Fallbacks))
				}
				followed := ""
				for _, f := range res.Followed {
					followed += fmt.Sprintf(" [followed %s λ=%.5f at %.8f]", f.Kind, f.LowestEigenvalueHartree, f.EnergyHartree)
				}
				t.Logf("%-16s E = %.10f Eh, %d iterations, unrestricted %v, <S²> %.4f, λ(%s) = %.5f Eh (%d products)%s",
					g, res.EnergyHartree, res.Iterations, res.Unrestricted, res.S2, st.Kind, st.LowestEigenvalueHartree, st.Products, followed)
				for _, f := range res.Fallbacks {
					t.Logf("    note: %s", f)
				}
				energies = append(energies, res.EnergyHartree)
			}
			if len(energies) == 2 && math.Abs(energies[0]-energies[1]) > 1e-8 {
				t.Errorf("the two guesses end %.2e Eh apart (%.10f, %.10f), want ≤ 1e-8", energies[1]-energies[0], energies[0], energies[1])
			}
			t.Logf("time %.1f s", time.Since(start).Seconds())
		})
	}
}

// TestH2RestrictedInstability: H2 at 2.5 Å, far beyond the
// Coulson–Fischer point (about 1.2 Å for RHF/UHF; from memory), has a
// restricted → unrestricted instability; following it gives a lower UHF
// energy, close to that of two hydrogen atoms (the check).
func TestH2RestrictedInstability(t *testing.T) {
	c := hardCase{"H2", "hf", "6-31g**", 0, 1, false, diatomic("H", "H", 2.5)}
	m, sh, opt := setupHard(t, c)
	ctx := context.Background()
	opt.Stability = scf.StabilityCheck
	rhf, err := scf.Run(ctx, m, sh, opt)
	if err != nil {
		t.Fatal(err)
	}
	if rhf.Unrestricted || rhf.Stability == nil || rhf.Stability.Stable || rhf.Stability.Kind != scf.StabilityRestricted {
		t.Fatalf("RHF at 2.5 Å: want a detected restricted → unrestricted instability, got %+v", rhf.Stability)
	}
	opt.Stability = scf.StabilityFollow
	uhf, err := scf.Run(ctx, m, sh, opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("E(RHF) = %.10f Eh (λ = %.5f), E(UHF) = %.10f Eh, <S²> = %.4f", rhf.EnergyHartree, rhf.Stability.LowestEigenvalueHartree, uhf.EnergyHartree, uhf.S2)
	if !uhf.Unrestricted || !(uhf.EnergyHartree < rhf.EnergyHartree) || !uhf.Stability.Stable {
		t.Errorf("following the instability: unrestricted %v, E(UHF) %.10f vs E(RHF) %.10f, stable %v",
			uhf.Unrestricted, uhf.EnergyHartree, rhf.EnergyHartree, uhf.Stability.Stable)
	}
	// Two separated hydrogen atoms lie at 2·E(H) = 2·(−0.498233) Eh in
	// 6-31G** (from memory); UHF at 2.5 Å is a little below.
	if uhf.EnergyHartree > -0.99 || uhf.EnergyHartree < -1.01 {
		t.Errorf("E(UHF) = %.6f Eh, want near twice the 6-31G** hydrogen atom", uhf.EnergyHartree)
	}
	// At equilibrium (0.74 Å) RHF is stable (common practice).
	c.atoms = diatomic("H", "H", 0.74)
	m, sh, opt = setupHard(t, c)
	opt.Stability = scf.StabilityCheck
	eq, err := scf.Run(ctx, m, sh, opt)
	if err != nil {
		t.Fatal(err)
	}
	if !eq.Stability.Stable {
		t.Errorf("RHF H2 at 0.74 Å reported unstable: %+v", eq.Stability)
	}
}

// TestOneElectronStability: a single electron (the H atom, UHF/6-31G) has
// no β orbitals to rotate; the stability check and its follow mode must
// still work (all eigenvalues of its α block are positive, so it is
// stable) and keep the energy −0.498233 Eh (6-31G hydrogen atom; from
// memory).
func TestOneElectronStability(t *testing.T) {
	for _, mode := range []scf.StabilityMode{scf.StabilityCheck, scf.StabilityFollow} {
		c := hardCase{"H", "hf", "6-31g", 0, 2, false, []hardAtom{{"H", 0, 0, 0}}}
		m, sh, opt := setupHard(t, c)
		opt.Stability = mode
		res, err := scf.Run(context.Background(), m, sh, opt)
		if err != nil {
			t.Fatal(err)
		}
		if res.Stability == nil || !res.Stability.Stable {
			t.Errorf("mode %v: H atom stability %+v, want stable", mode, res.Stability)
		}
		if math.Abs(res.EnergyHartree-(-0.498233)) > 1e-5 {
			t.Errorf("mode %v: E(H) = %.6f Eh, want −0.498233", mode, res.EnergyHartree)
		}
	}
}
