package freq

import (
	"context"
	"math"
	"testing"
)

// c1Molecule is a six-atom, non-planar arrangement without symmetry
// (bohr), in the shape of a small organic molecule (invented for the
// test), with kinds for the symmetry search.
func c1Molecule() ([]int, []float64) {
	kinds := []int{6, 6, 8, 1, 1, 7}
	x := []float64{
		0.00, 0.00, 0.00,
		2.87, 0.00, 0.00,
		3.90, 2.20, 0.40,
		-0.70, -1.90, 0.50,
		-0.60, 0.90, -1.70,
		4.30, -1.80, 1.10,
	}
	return kinds, x
}

// TestRotationalInvariance: in a molecule without symmetry, the columns of
// three more coordinates follow from the invariance under rotations. At a
// geometry away from the minimum (where the gradient term e_k × g of the
// relation matters: leaving it out makes errors of order |g|/r ≈ 1e-2
// here) the Hessian must agree with the exact one of the model as well as
// the full finite differences do (within 1.5 times their error, the bound
// TestSymmetryHessianModel uses for derived columns), and the dipole
// derivatives of the fixed point charges, which the differences give to
// rounding, must stay exact to 1e-9.
func TestRotationalInvariance(t *testing.T) {
	kinds, x0 := c1Molecule()
	p := symModel(kinds, x0)
	x := append([]float64(nil), x0...)
	// Away from the Morse minima.
	for i := range x {
		x[i] += 0.03 * math.Sin(float64(3*i+1))
	}
	nat := len(kinds)
	ctx := context.Background()
	full, err := ComputeHessian(ctx, p, x, HessianOptions{Dipole: true})
	if err != nil {
		t.Fatal(err)
	}
	gnorm := 0.0
	for _, g := range full.GradientAU {
		gnorm = math.Max(gnorm, math.Abs(g))
	}
	if gnorm < 1e-3 {
		t.Fatalf("largest gradient element %.1e: the test geometry is too close to a stationary point", gnorm)
	}
	exact := p.exactHessian(x)
	exactD := p.exactDipoleDeriv()
	for _, rot := range []bool{false, true} {
		h, err := ComputeHessian(ctx, p, x, HessianOptions{Dipole: true, SymmetryKinds: kinds, TranslationalInvariance: true, RotationalInvariance: rot})
		if err != nil {
			t.Fatal(err)
		}
		want := 6*nat - 6
		if rot {
			want = 6*nat - 12
		}
		if h.SymmetryOperations != 1 || h.Displacements != want {
			t.Errorf("rotations %v: %d operations, %d displaced points, want 1 and %d", rot, h.SymmetryOperations, h.Displacements, want)
		}
		errFull, errRot := 0.0, 0.0
		for i := range exact {
			errFull = math.Max(errFull, math.Abs(full.HessianAU[i]-exact[i]))
			errRot = math.Max(errRot, math.Abs(h.HessianAU[i]-exact[i]))
		}
		if errRot > 1.5*errFull+1e-9 {
			t.Errorf("rotations %v: largest error %.2e, %.2e with every coordinate displaced", rot, errRot, errFull)
		}
		for i := range exactD {
			if d := math.Abs(h.DipoleDerivAU[i] - exactD[i]); d > 1e-9 {
				t.Fatalf("rotations %v: dμ[%d] = %.10f, exact %.10f", rot, i, h.DipoleDerivAU[i], exactD[i])
			}
		}
	}
}

// TestRotationColumnsCollinear: atoms on a line give no well-conditioned
// choice, and every coordinate but the translation atom's is displaced.
func TestRotationColumnsCollinear(t *testing.T) {
	x := []float64{0, 0, 0, 0, 0, 2.2, 0, 0, 4.4, 0, 0, 6.6}
	if c, _ := rotationColumns(x, 0); c != nil {
		t.Errorf("collinear atoms: derived coordinates %v, want none", c)
	}
	pts, err := PlanPoints(4, x, HessianOptions{SymmetryKinds: []int{6, 6, 6, 8}, TranslationalInvariance: true, RotationalInvariance: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(pts.Displacements) != 24-6 && pts.SymmetryOperations == 1 {
		t.Errorf("%d displaced points, want %d", len(pts.Displacements), 24-6)
	}
}
