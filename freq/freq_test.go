package freq

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"

	"poise/energy/molecule"
	"poise/energy/units"
)

// The model's analytic Hessian agrees with gonum's finite differences of
// its energy (an independent check of the reference itself).
func TestModelHessianAgainstGonum(t *testing.T) {
	p, x := waterModel()
	x[4] += 0.05 // away from the minimum, so that V′ ≠ 0 terms count
	x[8] -= 0.03
	var num mat.SymDense
	fd.Hessian(&num, p.energy, x, &fd.Settings{Formula: fd.Central, Step: 1e-4})
	ex := p.exactHessian(x)
	n := len(x)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if d := math.Abs(num.At(i, j) - ex[i*n+j]); d > 1e-5 {
				t.Errorf("H[%d][%d]: analytic %.8f, gonum %.8f", i, j, ex[i*n+j], num.At(i, j))
			}
		}
	}
}

// The finite-difference Hessian of analytic gradients matches the exact
// Hessian: to O(h²) with the central formula, O(h⁴) with four points.
func TestHessianMatchesExactModel(t *testing.T) {
	p, x := waterModel()
	x[1] += 0.02 // a general, non-stationary geometry
	x[5] -= 0.04
	ex := p.exactHessian(x)
	exD := p.exactDipoleDeriv()
	for _, c := range []struct {
		four bool
		tol  float64 // Eh/bohr²; truncation h²/6·V⁗ ≈ 4e-6·V⁗ (V⁗ ≲ 6 here), h⁴/30·V⁽⁶⁾ four-point
	}{{false, 3e-5}, {true, 1e-8}} {
		h, err := ComputeHessian(context.Background(), p, x, HessianOptions{FourPoint: c.four, Dipole: true, Threads: 2})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i := range ex {
			worst = math.Max(worst, math.Abs(h.HessianAU[i]-ex[i]))
		}
		if worst > c.tol {
			t.Errorf("four-point %v: largest error %.2e Eh/bohr², want < %.0e", c.four, worst, c.tol)
		}
		for i := range exD {
			if d := math.Abs(h.DipoleDerivAU[i] - exD[i]); d > 1e-10 {
				t.Errorf("four-point %v: dipole derivative %d: %g, exact %g", c.four, i, h.DipoleDerivAU[i], exD[i])
			}
		}
		want := 1 + 2*len(x)
		if c.four {
			want = 1 + 4*len(x)
		}
		if h.Evaluations != want || p.Evaluations() < want {
			t.Errorf("four-point %v: %d evaluations, want %d", c.four, h.Evaluations, want)
		}
	}
}

// Unit conversions against textbook factors: ν̃ = 1302.79 cm⁻¹·√(k/μ)
// with k in mdyn/Å and μ in u; an IR intensity of 42.2561 km/mol per
// (D/Å)²/u (both from memory, common spectroscopy conversion factors).
func TestConversions(t *testing.T) {
	// A diatomic with a harmonic force constant k and charges ±q.
	const kMdyn = 5.0
	kAU := kMdyn / mdynPerAngstromPerAU()
	m1, m2 := 1.00782503, 34.96885268 // u
	mu := m1 * m2 / (m1 + m2)         // the reduced mass of the two-body problem
	r := 2.4
	hess := make([]float64, 36)
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			v := 0.0
			if i == 2 && j == 2 {
				v = kAU
			}
			hess[i*6+j], hess[(3+i)*6+3+j] = v, v
			hess[i*6+3+j], hess[(3+i)*6+j] = -v, -v
		}
	}
	const q = 0.2
	dd := make([]float64, 18)
	for k := 0; k < 3; k++ {
		dd[3*k+k] = q
		dd[3*(3+k)+k] = -q
	}
	a, err := Analyze(System{Z: []int{1, 17}, MassesU: []float64{m1, m2}, CoordsBohr: []float64{0, 0, 0, 0, 0, r}, HessianAU: hess, DipoleDerivAU: dd})
	if err != nil {
		t.Fatal(err)
	}
	if !a.Linear || len(a.Modes) != 1 {
		t.Fatalf("diatomic: linear %v, %d modes", a.Linear, len(a.Modes))
	}
	m := a.Modes[0]
	want := 1302.79 * math.Sqrt(kMdyn/mu)
	if math.Abs(m.WavenumberCm1-want) > 1e-4*want {
		t.Errorf("wavenumber %.3f, want %.3f", m.WavenumberCm1, want)
	}
	// The reduced mass 1/Σ l_i² of the Cartesian displacement l of the
	// normalized mass-weighted mode is m1m2(m1+m2)/(m1²+m2²) for a
	// diatomic, and the force constant along the unit Cartesian
	// displacement (m2, −m1)/√(m1²+m2²) is k(m1+m2)²/(m1²+m2²) (Wilson,
	// Decius & Cross ch. 2, worked for two atoms).
	wantMu := m1 * m2 * (m1 + m2) / (m1*m1 + m2*m2)
	wantK := kMdyn * (m1 + m2) * (m1 + m2) / (m1*m1 + m2*m2)
	if math.Abs(m.ReducedMassU-wantMu) > 1e-9 || math.Abs(m.ForceConstantMdynA-wantK) > 1e-9 {
		t.Errorf("reduced mass %.6f (want %.6f), force constant %.6f (want %.6f)", m.ReducedMassU, wantMu, m.ForceConstantMdynA, wantK)
	}
	// dμ/dr = q e; in D/Å: q·(e·a0 in D)/(a0 in Å).
	dmu := q * units.AUDebye / units.BohrAngstrom
	wantA := 42.2561 * dmu * dmu / mu
	if math.Abs(m.IRIntensityKmMol-wantA) > 1e-4*wantA {
		t.Errorf("intensity %.4f km/mol, want %.4f", m.IRIntensityKmMol, wantA)
	}
	if m.Description != "Cl–H stretch" {
		t.Errorf("description %q, want %q", m.Description, "Cl–H stretch")
	}
	if zpe := 0.5 * want / units.HartreeWavenumber; math.Abs(a.ZeroPointHartree-zpe) > 1e-4*zpe {
		t.Errorf("ZPE %.8f, want %.8f", a.ZeroPointHartree, zpe)
	}
}

// Teller–Redlich product rule (E. B. Wilson, J. C. Decius, P. C. Cross,
// Molecular Vibrations, 1955, §8-6): for two isotopologues with the same
// Hessian,
//
//	Π (ν̃'_i/ν̃_i)² = Π_a (m_a/m'_a)³ · (M'/M)³ · (I'_A I'_B I'_C)/(I_A I_B I_C),
//
// exact for harmonic frequencies with translations and rotations
// projected out.
func TestTellerRedlichModel(t *testing.T) {
	p, x := waterModel()
	// At the exact minimum: the rule needs a Hessian whose null space holds
	// the rigid translations and rotations.
	h := p.exactHessian(x)
	checkProductRule(t, []int{8, 1, 1}, x, h, "model water")
}

func checkProductRule(t *testing.T, z []int, x, h []float64, name string) {
	t.Helper()
	mH := []float64{molecule.MostAbundantMass(8), molecule.MostAbundantMass(1), molecule.MostAbundantMass(1)}
	d, _ := molecule.IsotopeMass(1, 2)
	mD := []float64{mH[0], d, d}
	aH, err := Analyze(System{Z: z, MassesU: mH, CoordsBohr: x, HessianAU: h})
	if err != nil {
		t.Fatal(err)
	}
	aD, err := Analyze(System{Z: z, MassesU: mD, CoordsBohr: x, HessianAU: h})
	if err != nil {
		t.Fatal(err)
	}
	lhs := 1.0
	for i := range aH.Modes {
		r := aD.Modes[i].WavenumberCm1 / aH.Modes[i].WavenumberCm1
		lhs *= r * r
	}
	rhs := 1.0
	totalH, totalD := 0.0, 0.0
	for a := range mH {
		rhs *= math.Pow(mH[a]/mD[a], 3)
		totalH += mH[a]
		totalD += mD[a]
	}
	rhs *= math.Pow(totalD/totalH, 3)
	rhs *= inertiaProduct(mD, x) / inertiaProduct(mH, x)
	rel := math.Abs(lhs/rhs - 1)
	t.Logf("%s: product rule relative deviation %.1e", name, rel)
	if rel > 1e-6 {
		t.Errorf("%s: product rule: frequencies %.10f, masses and moments %.10f (relative %.1e)", name, lhs, rhs, rel)
	}
}

// inertiaProduct is the determinant of the inertia tensor about the centre
// of mass (the product of the principal moments).
func inertiaProduct(m, x []float64) float64 {
	var com [3]float64
	total := 0.0
	for a := range m {
		total += m[a]
		for k := 0; k < 3; k++ {
			com[k] += m[a] * x[3*a+k]
		}
	}
	t := mat.NewDense(3, 3, nil)
	for a := range m {
		var r [3]float64
		for k := range r {
			r[k] = x[3*a+k] - com[k]/total
		}
		rr := r[0]*r[0] + r[1]*r[1] + r[2]*r[2]
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				v := -m[a] * r[i] * r[j]
				if i == j {
					v += m[a] * rr
				}
				t.Set(i, j, t.At(i, j)+v)
			}
		}
	}
	return mat.Det(t)
}

// A run interrupted after some displaced points resumes from the work
// directory without evaluating them again, and gives the same Hessian.
func TestResume(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "work")
	p, x := waterModel()
	full, err := ComputeHessian(context.Background(), p, x, HessianOptions{Dipole: true, Threads: 1})
	if err != nil {
		t.Fatal(err)
	}

	p1, _ := waterModel()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	const stopAt = 8 // the reference and 7 displaced points
	p1.after = func(n int64) {
		if n == stopAt {
			cancel()
		}
	}
	opt := HessianOptions{Dipole: true, Threads: 1, WorkDir: dir, Tag: "model"}
	_, err = ComputeHessian(ctx, p1, x, opt)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("interrupted run: error %v, want context.Canceled", err)
	}
	saved, _ := filepath.Glob(filepath.Join(dir, displacePrefix+"*.json"))
	if len(saved) != stopAt-1 {
		t.Fatalf("%d displaced points saved, want %d", len(saved), stopAt-1)
	}

	p2, _ := waterModel()
	h, err := ComputeHessian(context.Background(), p2, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	left := 2*len(x) - (stopAt - 1)
	// The remaining displaced points plus one energy at the reference to
	// restore the warm start.
	if p2.Evaluations() != left+1 || h.Reused != stopAt-1 || h.Computed != left {
		t.Errorf("resumed: %d evaluations (want %d), %d reused (want %d), %d computed", p2.Evaluations(), left+1, h.Reused, stopAt-1, h.Computed)
	}
	for i := range full.HessianAU {
		if h.HessianAU[i] != full.HessianAU[i] {
			t.Fatalf("resumed Hessian differs at %d: %g vs %g", i, h.HessianAU[i], full.HessianAU[i])
		}
	}
	// A third run evaluates nothing.
	p3, _ := waterModel()
	if _, err := ComputeHessian(context.Background(), p3, x, opt); err != nil {
		t.Fatal(err)
	}
	if p3.Evaluations() != 0 {
		t.Errorf("complete work directory: %d evaluations, want 0", p3.Evaluations())
	}
	// Another geometry is refused, or with DiscardStale starts afresh.
	x2 := append([]float64(nil), x...)
	x2[2] += 0.01
	if _, err := ComputeHessian(context.Background(), p3, x2, opt); !errors.Is(err, ErrStaleWorkDir) {
		t.Errorf("other geometry: error %v, want ErrStaleWorkDir", err)
	}
	opt.DiscardStale = true
	p4, _ := waterModel()
	if _, err := ComputeHessian(context.Background(), p4, x2, opt); err != nil {
		t.Fatal(err)
	}
	if p4.Evaluations() != 1+2*len(x) {
		t.Errorf("discarded work directory: %d evaluations, want %d", p4.Evaluations(), 1+2*len(x))
	}
	// No temporary files are left behind.
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if e.Name()[0] == '.' {
			t.Errorf("left-over file %s", e.Name())
		}
	}
}

// The model water: 3 vibrations, rigid-body roots at zero at the minimum,
// and descriptions naming the O–H stretches and the bend.
func TestAnalyzeModelWater(t *testing.T) {
	p, x := waterModel()
	m := []float64{molecule.MostAbundantMass(8), molecule.MostAbundantMass(1), molecule.MostAbundantMass(1)}
	a, err := Analyze(System{Z: []int{8, 1, 1}, MassesU: m, CoordsBohr: x, HessianAU: p.exactHessian(x), DipoleDerivAU: p.exactDipoleDeriv()})
	if err != nil {
		t.Fatal(err)
	}
	if a.Linear || len(a.Modes) != 3 || len(a.RigidBodyCm1) != 6 {
		t.Fatalf("linear %v, %d modes, %d rigid-body roots", a.Linear, len(a.Modes), len(a.RigidBodyCm1))
	}
	for _, r := range a.RigidBodyCm1 {
		if math.Abs(r) > 1e-3 {
			t.Errorf("rigid-body root %.4f cm⁻¹ at the exact minimum of an invariant model", r)
		}
	}
	// The lowest mode is the bend (the H···H term is soft); of the two
	// stretches, the one symmetric under the mirror y → −y that swaps the
	// hydrogens (z displacements of H1 and H2 equal) is in phase.
	if a.Modes[0].Description != "H–O–H bend" {
		t.Errorf("mode 1 (%.1f cm⁻¹): %q, want %q", a.Modes[0].WavenumberCm1, a.Modes[0].Description, "H–O–H bend")
	}
	for _, md := range a.Modes[1:] {
		d := md.Displacement
		want := "O–H stretch, out of phase"
		if math.Abs(d[5]-d[8]) < 1e-8 && math.Abs(d[4]+d[7]) < 1e-8 {
			want = "O–H stretch, in phase"
		}
		if md.Description != want {
			t.Errorf("mode at %.1f cm⁻¹: %q, want %q", md.WavenumberCm1, md.Description, want)
		}
	}
}

// For an ion, a surface that reports the dipole about the centre of mass
// has derivatives that depend on the masses; with the charge and masses
// given, ComputeHessian returns the atomic polar tensors about a fixed
// origin, which obey the sum rule Σ_a ∂μ_k/∂x_aj = Q δ_jk (translating the
// whole ion moves its charge; Wilson, Decius & Cross ch. 7).
func TestIonDipoleOrigin(t *testing.T) {
	p, x := waterModel()
	p.charges = []float64{-0.2, 0.6, 0.6} // an H2O+ -like charge 1 e
	p.comMasses = []float64{15.99491462, 1.00782503, 1.00782503}
	h, err := ComputeHessian(context.Background(), p, x, HessianOptions{Dipole: true, Threads: 1, Charge: 1, MassesU: p.comMasses})
	if err != nil {
		t.Fatal(err)
	}
	exact := p.exactDipoleDeriv()
	for i := range exact {
		if d := math.Abs(h.DipoleDerivAU[i] - exact[i]); d > 1e-9 {
			t.Errorf("element %d: %g, fixed-origin exact %g", i, h.DipoleDerivAU[i], exact[i])
		}
	}
	for j := 0; j < 3; j++ {
		for k := 0; k < 3; k++ {
			s := 0.0
			for a := 0; a < 3; a++ {
				s += h.DipoleDerivAU[3*(3*a+j)+k]
			}
			want := 0.0
			if j == k {
				want = 1
			}
			if math.Abs(s-want) > 1e-9 {
				t.Errorf("sum rule (%d,%d): %g, want %g", j, k, s, want)
			}
		}
	}
}
