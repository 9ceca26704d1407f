package scf

import (
	"context"
	"math"
	"testing"

	"poise/energy/basis"
)

// energyAt returns the SCF energy functional at the given spin densities.
func energyAt(t *testing.T, p *problem, opt Options, dens [][]float64) float64 {
	t.Helper()
	var r Result
	_, e, err := fockAndEnergy(context.Background(), p.jk, p.h, dens, p.ax, opt.XC, true, &r)
	if err != nil {
		t.Fatal(err)
	}
	return e
}

// checkCurvature compares the lowest Hessian eigenvalue with the second
// derivative of the energy along the eigenvector. With φ_i → φ_i + t·Σ_a
// x_ia φ_a (orthonormalized; exp(κ) to second order), the energy of a real
// rotation is E0 + κᵀ(A+B)κ to second order, so d²E/dt² = 4λ for the
// restricted → unrestricted (triplet) vector (α by +x, β by −x, each of unit
// norm) and 2λ for an unrestricted vector of unit norm (R. Seeger,
// J. A. Pople, J. Chem. Phys. 66, 3045 (1977)).
func checkCurvature(t *testing.T, name string, atoms []atomSpec, basisName string, mult int, opt Options) {
	m := mol(t, atoms, false, 0, mult)
	set, err := basis.Load(basisName)
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	res, err := Run(ctx, m, sh, opt)
	if err != nil {
		t.Fatal(err)
	}
	st, err := CheckStability(ctx, m, sh, opt, res)
	if err != nil {
		t.Fatal(err)
	}
	wd := withDefaults(opt)
	wd.Unrestricted = true
	p, err := newProblem(ctx, m, sh, wd)
	if err != nil {
		t.Fatal(err)
	}
	const step = 1e-3
	e0 := energyAt(t, p, opt, rotatedState(p, res, st, 0).Density)
	ep := energyAt(t, p, opt, rotatedState(p, res, st, step).Density)
	em := energyAt(t, p, opt, rotatedState(p, res, st, -step).Density)
	curv := (ep + em - 2*e0) / (step * step)
	factor := 2.0
	if !res.Unrestricted {
		factor = 4
	}
	want := factor * st.LowestEigenvalueHartree
	t.Logf("%s: λ = %.6f Eh, d²E/dt² = %.6f, %g·λ = %.6f (%d products)", name, st.LowestEigenvalueHartree, curv, factor, want, st.Products)
	if math.Abs(curv-want) > 2e-3*math.Max(1, math.Abs(want)) {
		t.Errorf("%s: d²E/dt² = %.6f along the lowest eigenvector, want %g·λ = %.6f", name, curv, factor, want)
	}
}

func TestStabilityHessianCurvatureHF(t *testing.T) {
	h := 0.5 * 104.48 * math.Pi / 180
	r := 1.8 * 0.9578 // water with both bonds stretched 1.8× (unstable RHF)
	water := []atomSpec{{"O", 0, 0, 0}, {"H", r * math.Sin(h), 0, r * math.Cos(h)}, {"H", -r * math.Sin(h), 0, r * math.Cos(h)}}
	checkCurvature(t, "RHF water 1.8x", water, "6-31g", 1, Options{})
	// NH2 ²B1 (r 1.024 Å, 103.4°; from memory): no degenerate open shell,
	// so the lowest internal eigenvalue is not a zero mode.
	a := 0.5 * 103.4 * math.Pi / 180
	nh2 := []atomSpec{{"N", 0, 0, 0}, {"H", 1.024 * math.Sin(a), 0, 1.024 * math.Cos(a)}, {"H", -1.024 * math.Sin(a), 0, 1.024 * math.Cos(a)}}
	checkCurvature(t, "UHF NH2", nh2, "6-31g", 2, Options{})
}

// TestSecondStartFindsLowerOpenShell: UHF CN (doublet) has two stable
// solutions, the ²Σ⁺-like …1π⁴5σ¹ and, above it, the ²Π-like …1π³5σ²
// (experimentally X²Σ⁺ is the ground state and A²Π lies about 1.1 eV
// higher; from memory). Converged from a ²Π-like start, the SCF stays in
// the upper solution (after following its symmetry-breaking instability),
// which the stability check passes; the second-start
// search must replace it with the lower one, which the atomic-density
// guess reaches, and say so.
func TestSecondStartFindsLowerOpenShell(t *testing.T) {
	m := mol(t, []atomSpec{{"C", 0, 0, 0}, {"N", 0, 0, 1.1718}}, false, 0, 2)
	set, err := basis.Load("6-31g*")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	sigma, err := Run(ctx, m, sh, Options{Stability: StabilityCheck})
	if err != nil {
		t.Fatal(err)
	}
	// ²Π-like start: β electron moved from the highest occupied (π)
	// orbital to the lowest virtual (5σ) one.
	n, nmo := sigma.NBF, sigma.NMO
	pick := func(c []float64, cols []int) []float64 {
		d := make([]float64, n*n)
		for _, k := range cols {
			for mu := 0; mu < n; mu++ {
				for nu := 0; nu < n; nu++ {
					d[mu*n+nu] += c[mu*nmo+k] * c[nu*nmo+k]
				}
			}
		}
		return d
	}
	var colsA, colsB []int
	for k := 0; k < sigma.NumAlpha; k++ {
		colsA = append(colsA, k)
	}
	for k := 0; k < sigma.NumBeta-1; k++ {
		colsB = append(colsB, k)
	}
	colsB = append(colsB, sigma.NumBeta)
	start := &State{NBF: n, Density: [][]float64{pick(sigma.Coefficients[0], colsA), pick(sigma.Coefficients[1], colsB)}}
	opt := Options{Stability: StabilityFollow, Guess: start} // warm start: no second start
	pi, err := Run(ctx, m, sh, opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("²Σ⁺-like %.10f Eh (λ %.5f), ²Π-like start → %.10f Eh (λ %.5f, ⟨S²⟩ %.4f)", sigma.EnergyHartree,
		sigma.Stability.LowestEigenvalueHartree, pi.EnergyHartree, pi.Stability.LowestEigenvalueHartree, pi.S2)
	if !sigma.Stability.Stable || !pi.Stability.Stable || pi.EnergyHartree < sigma.EnergyHartree+1e-3 {
		t.Fatalf("want two stable UHF solutions, the ²Π-like one higher: %.10f (stable %v) and %.10f (stable %v)",
			sigma.EnergyHartree, sigma.Stability.Stable, pi.EnergyHartree, pi.Stability.Stable)
	}
	before := len(pi.Fallbacks)
	var logged []string
	follow := Options{Stability: StabilityFollow, StartGuess: GuessHuckel, Log: func(s string) { logged = append(logged, s) }}
	if !wantSecondStart(m, follow, pi) {
		t.Fatal("the second-start search is not asked for an open shell in follow mode")
	}
	best, err := secondStart(ctx, m, sh, follow, pi)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range logged {
		t.Log("  ", s)
	}
	if math.Abs(best.EnergyHartree-sigma.EnergyHartree) > 1e-8 {
		t.Errorf("second-start search ends at %.10f Eh, want the lower solution %.10f Eh", best.EnergyHartree, sigma.EnergyHartree)
	}
	if len(logged) == 0 || len(logged) != len(best.Fallbacks)-before {
		t.Errorf("search notices: %d logged, %d recorded", len(logged), len(best.Fallbacks))
	}
}
