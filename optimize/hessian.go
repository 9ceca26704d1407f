package optimize

import "math"

// Model force constants of R. Lindh, A. Bernhardsson, G. Karlström,
// P.-Å. Malmqvist, Chem. Phys. Lett. 241, 423 (1995): k = k₀·Πρ over the
// atom pairs of the coordinate, ρ_ij = exp(α_ij (r²_ref,ij − r²_ij)), with
// α and r_ref by the periods of the two atoms (rows 1, 2, 3+; bohr). The
// paper builds a Cartesian Hessian from all pairs, triples and quadruples;
// here the same force constants sit on the diagonal of the Hessian in the
// redundant internal coordinates.
const (
	lindhBond     = 0.45  // Eh/bohr²
	lindhAngle    = 0.15  // Eh/rad²
	lindhDihedral = 0.005 // Eh/rad²
)

var lindhAlpha = [3][3]float64{
	{1.0000, 0.3949, 0.3949},
	{0.3949, 0.2800, 0.2800},
	{0.3949, 0.2800, 0.2800},
}

var lindhRref = [3][3]float64{
	{1.35, 2.10, 2.53},
	{2.10, 2.87, 3.40},
	{2.53, 3.40, 3.40},
}

// period returns the row index (0, 1, 2) of Lindh's tables for element z;
// the fourth period uses the third row's parameters.
func period(z int) int {
	switch {
	case z <= 2:
		return 0
	case z <= 10:
		return 1
	}
	return 2
}

// lindhRho is ρ_ij. For a bonded pair (closer than BondFactor times the
// sum of the covalent radii) it is evaluated at the sum of the covalent
// radii instead of the actual distance: a relaxation often starts far from
// the minimum, and the force constants should describe the region it is
// heading for (our choice; it cut the steps of distorted starts by about a
// tenth in the tests).
func lindhRho(z []int, x []float64, i, j int) float64 {
	pi, pj := period(z[i]), period(z[j])
	r := dist(x, i, j)
	if rc := CovalentRadiusBohr(z[i]) + CovalentRadiusBohr(z[j]); r < BondFactor*rc {
		r = rc
	}
	rr := lindhRref[pi][pj]
	return math.Exp(lindhAlpha[pi][pj] * (rr*rr - r*r))
}

// outOfPlaneForce (Eh/rad²) scales the out-of-plane coordinate of a planar
// atom by the ρ of its three bonds: the bends and torsions of the model give
// no curvature at planarity, so it needs its own constant.
const outOfPlaneForce = 0.05

// Smallest diagonal force constants, so that the model Hessian stays
// positive definite for long fragment bonds and weak torsions (common
// practice).
const (
	minBondForce     = 0.005
	minBendForce     = 0.002
	minDihedralForce = 0.0005
)

// modelForceConstant is the diagonal model Hessian element of p at x.
func modelForceConstant(z []int, x []float64, p Coordinate) float64 {
	a := p.Atoms
	switch p.Kind {
	case Bond:
		return math.Max(lindhBond*lindhRho(z, x, a[0], a[1]), minBondForce)
	case Angle, LinearBend:
		return math.Max(lindhAngle*lindhRho(z, x, a[0], a[1])*lindhRho(z, x, a[1], a[2]), minBendForce)
	case Dihedral:
		return math.Max(lindhDihedral*lindhRho(z, x, a[0], a[1])*lindhRho(z, x, a[1], a[2])*lindhRho(z, x, a[2], a[3]), minDihedralForce)
	case OutOfPlane:
		return outOfPlaneForce * lindhRho(z, x, a[3], a[0]) * lindhRho(z, x, a[3], a[1]) * lindhRho(z, x, a[3], a[2])
	}
	return minBondForce
}

// modelHessian returns the diagonal model Hessian of prims at x, row-major
// len(prims)².
func modelHessian(z []int, x []float64, prims []Coordinate) []float64 {
	n := len(prims)
	h := make([]float64, n*n)
	for i, p := range prims {
		h[i*n+i] = modelForceConstant(z, x, p)
	}
	return h
}
