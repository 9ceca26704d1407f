//go:build libint2

package libintref

/*
#cgo CXXFLAGS: -std=c++17 -O2 -I/usr/include/eigen3 -Wno-deprecated-declarations -Wno-ignored-attributes -Wno-stringop-overread
#cgo LDFLAGS: -lint2 -lstdc++ -lm
#include <stdlib.h>
#include "shim.h"
*/
import "C"

import "fmt"

// Shell is one contracted Gaussian shell in poise's terms.
type Shell struct {
	L            int        // angular momentum
	Pure         bool       // real solid harmonics (2l+1) rather than Cartesian
	Center       [3]float64 // bohr
	Exponents    []float64  // bohr⁻²
	Coefficients []float64  // published coefficients of normalized primitives
}

// NumFunctions is the number of functions of the shell.
func (s Shell) NumFunctions() int {
	if s.Pure {
		return 2*s.L + 1
	}
	return (s.L + 1) * (s.L + 2) / 2
}

// Operator codes of the shim.
const (
	opOverlap     = C.LR_OVERLAP
	opKinetic     = C.LR_KINETIC
	opNuclear     = C.LR_NUCLEAR
	opEMultipole1 = C.LR_EMULTIPOLE1
	opCoulomb     = C.LR_COULOMB
)

// flatShells is the shim's flat representation of a list of shells.
type flatShells struct {
	ls, pures, nprims []C.int
	centers           []C.double
	exps, coefs       []C.double
}

func flatten(shells []Shell) (flatShells, error) {
	var f flatShells
	for i, s := range shells {
		if len(s.Exponents) == 0 || len(s.Exponents) != len(s.Coefficients) {
			return f, fmt.Errorf("libintref: shell %d: %d exponents, %d coefficients", i, len(s.Exponents), len(s.Coefficients))
		}
		f.ls = append(f.ls, C.int(s.L))
		p := 0
		if s.Pure {
			p = 1
		}
		f.pures = append(f.pures, C.int(p))
		f.nprims = append(f.nprims, C.int(len(s.Exponents)))
		for k := 0; k < 3; k++ {
			f.centers = append(f.centers, C.double(s.Center[k]))
		}
		for p := range s.Exponents {
			f.exps = append(f.exps, C.double(s.Exponents[p]))
			f.coefs = append(f.coefs, C.double(s.Coefficients[p]))
		}
	}
	return f, nil
}

// compute runs one shell set through libint2 and returns nsets result sets
// of Π nfunc values each, in poise's conventions.
func compute(op, deriv, nsets int, shells []Shell, params []float64) ([][]float64, error) {
	f, err := flatten(shells)
	if err != nil {
		return nil, err
	}
	n := 1
	for _, s := range shells {
		n *= s.NumFunctions()
	}
	out := make([]C.double, nsets*n)
	cparams := make([]C.double, len(params)+1) // +1 keeps the pointer valid when empty
	for i, v := range params {
		cparams[i] = C.double(v)
	}
	errbuf := make([]C.char, 512)
	rc := C.lr_compute(C.int(op), C.int(deriv), C.int(len(shells)),
		&f.ls[0], &f.pures[0], &f.nprims[0], &f.centers[0], &f.exps[0], &f.coefs[0],
		C.int(len(params)), &cparams[0], &out[0], C.int(len(out)), &errbuf[0], C.int(len(errbuf)))
	if rc != 0 {
		return nil, fmt.Errorf("libintref: libint2: %s", C.GoString(&errbuf[0]))
	}
	res := make([][]float64, nsets)
	for k := range res {
		res[k] = make([]float64, n)
		for i := range res[k] {
			res[k][i] = float64(out[k*n+i])
		}
	}
	return res, nil
}

func must(r [][]float64, err error) [][]float64 {
	if err != nil {
		panic(err)
	}
	return r
}

// Overlap returns ⟨a|b⟩ (na×nb, row-major). Like every function of this
// package without an error result, it panics if libint2 fails (for example
// for an angular momentum beyond the library's build): the package serves
// tests only.
func Overlap(a, b Shell) []float64 {
	return must(compute(opOverlap, 0, 1, []Shell{a, b}, nil))[0]
}

// Kinetic returns ⟨a|−½∇²|b⟩.
func Kinetic(a, b Shell) []float64 {
	return must(compute(opKinetic, 0, 1, []Shell{a, b}, nil))[0]
}

// Nuclear returns −Σ_C charges[C]·⟨a| 1/|r−centers[C]| |b⟩.
func Nuclear(a, b Shell, charges []float64, centers [][3]float64) []float64 {
	return must(compute(opNuclear, 0, 1, []Shell{a, b}, chargeParams(charges, centers)))[0]
}

func chargeParams(charges []float64, centers [][3]float64) []float64 {
	if len(charges) != len(centers) {
		panic("libintref: charges and centers differ in length")
	}
	p := make([]float64, 0, 4*len(charges))
	for i, q := range charges {
		p = append(p, q, centers[i][0], centers[i][1], centers[i][2])
	}
	return p
}

// Dipole returns ⟨a|(r−origin)_k|b⟩ for k = x, y, z.
func Dipole(a, b Shell, origin [3]float64) [3][]float64 {
	r := must(compute(opEMultipole1, 0, 4, []Shell{a, b}, origin[:]))
	// libint2's emultipole1 sets are overlap, x, y, z.
	return [3][]float64{r[1], r[2], r[3]}
}

// ERI returns the electron-repulsion integrals (ab|cd) in chemists'
// notation, row-major over a, b, c, d.
func ERI(a, b, c, d Shell) []float64 {
	return must(compute(opCoulomb, 0, 1, []Shell{a, b, c, d}, nil))[0]
}

// ERIDeriv1 returns the first derivatives of (ab|cd) with respect to the
// centres: element 3·s+k is ∂/∂R_{s,k} for shell s = a, b, c, d (in this
// order, even when shells share a centre) and Cartesian direction k, each
// row-major like ERI. libint2 here supports l ≤ 4 for derivatives.
func ERIDeriv1(a, b, c, d Shell) ([12][]float64, error) {
	var out [12][]float64
	r, err := compute(opCoulomb, 1, 12, []Shell{a, b, c, d}, nil)
	if err != nil {
		return out, err
	}
	copy(out[:], r)
	return out, nil
}

// OneBodyOperator selects the operator of OneBodyDeriv1.
type OneBodyOperator int

// Operators for OneBodyDeriv1.
const (
	OverlapOperator OneBodyOperator = iota
	KineticOperator
	NuclearOperator
)

// OneBodyDeriv1 returns first derivatives of the one-electron integrals of
// op. For overlap and kinetic energy there are 6 sets (∂/∂A_x … ∂/∂B_z);
// for the nuclear attraction 6 + 3·len(charges) sets, the last ones with
// respect to the positions of the charges, in libint2's order. It returns
// an error when the libint2 build lacks one-electron derivatives.
func OneBodyDeriv1(op OneBodyOperator, a, b Shell, charges []float64, centers [][3]float64) ([][]float64, error) {
	switch op {
	case OverlapOperator:
		return compute(opOverlap, 1, 6, []Shell{a, b}, nil)
	case KineticOperator:
		return compute(opKinetic, 1, 6, []Shell{a, b}, nil)
	case NuclearOperator:
		return compute(opNuclear, 1, 6+3*len(charges), []Shell{a, b}, chargeParams(charges, centers))
	}
	return nil, fmt.Errorf("libintref: unknown operator %d", op)
}

// ERIAllUnique computes, inside libint2 and single-threaded, every unique
// shell quartet (ij|kl) of shells (i ≥ j, k ≥ l, ij ≥ kl: 8-fold
// permutational symmetry), without any screening of shell quartets (libint2's
// default primitive screening at machine precision stays on). It returns
// the number of integrals computed and their sum in poise's conventions,
// for benchmarks.
func ERIAllUnique(shells []Shell) (count int, checksum float64) {
	if len(shells) == 0 {
		return 0, 0
	}
	f, err := flatten(shells)
	if err != nil {
		panic(err)
	}
	var cnt C.longlong
	var sum C.double
	errbuf := make([]C.char, 512)
	rc := C.lr_eri_all_unique(C.int(len(shells)), &f.ls[0], &f.pures[0], &f.nprims[0],
		&f.centers[0], &f.exps[0], &f.coefs[0], &cnt, &sum, &errbuf[0], C.int(len(errbuf)))
	if rc != 0 {
		panic(fmt.Errorf("libintref: libint2: %s", C.GoString(&errbuf[0])))
	}
	return int(cnt), float64(sum)
}

// coulombUnit runs lr_coulomb_unit and returns nsets result sets.
func coulombUnit(deriv, nsets int, shells []Shell) ([][]float64, error) {
	f, err := flatten(shells)
	if err != nil {
		return nil, err
	}
	n := 1
	for _, s := range shells {
		n *= s.NumFunctions()
	}
	out := make([]C.double, nsets*n)
	errbuf := make([]C.char, 512)
	rc := C.lr_coulomb_unit(C.int(deriv), C.int(len(shells)),
		&f.ls[0], &f.pures[0], &f.nprims[0], &f.centers[0], &f.exps[0], &f.coefs[0],
		&out[0], C.int(len(out)), &errbuf[0], C.int(len(errbuf)))
	if rc != 0 {
		return nil, fmt.Errorf("libintref: libint2: %s", C.GoString(&errbuf[0]))
	}
	res := make([][]float64, nsets)
	for k := range res {
		res[k] = make([]float64, n)
		for i := range res[k] {
			res[k][i] = float64(out[k*n+i])
		}
	}
	return res, nil
}

// ThreeCentre returns (ab|p) = ∫∫ a(1)b(1) r₁₂⁻¹ p(2), row-major over a, b,
// p, computed by libint2 as the four-centre Coulomb integral (ab|p 1) with
// its unit shell.
func ThreeCentre(a, b, p Shell) []float64 {
	return must(coulombUnit(0, 1, []Shell{a, b, p}))[0]
}

// TwoCentre returns (p|q), row-major, as libint2's (p 1|q 1).
func TwoCentre(p, q Shell) []float64 {
	return must(coulombUnit(0, 1, []Shell{p, q}))[0]
}

// ThreeCentreDeriv1 returns ∂(ab|p)/∂R: element 3·s+k for shell s = a, b,
// p and direction k, each row-major like ThreeCentre (libint2's sets for
// the three real shells of (ab|p 1)).
func ThreeCentreDeriv1(a, b, p Shell) ([9][]float64, error) {
	var out [9][]float64
	r, err := coulombUnit(1, 12, []Shell{a, b, p})
	if err != nil {
		return out, err
	}
	copy(out[:], r[:9])
	return out, nil
}

// TwoCentreDeriv1 returns ∂(p|q)/∂R: element 3·s+k for shell s = p, q and
// direction k (libint2's sets 0–2 and 6–8 of (p 1|q 1)).
func TwoCentreDeriv1(p, q Shell) ([6][]float64, error) {
	var out [6][]float64
	r, err := coulombUnit(1, 12, []Shell{p, q})
	if err != nil {
		return out, err
	}
	copy(out[:3], r[0:3])
	copy(out[3:], r[6:9])
	return out, nil
}

// Boys fills out[0..mmax] with libint2's Boys function F_m(t)
// (Chebyshev interpolation of order 7), a second reference for tests.
func Boys(mmax int, t float64, out []float64) error {
	buf := make([]C.double, mmax+1)
	errbuf := make([]C.char, 256)
	if rc := C.lr_boys(C.int(mmax), C.double(t), &buf[0], &errbuf[0], C.int(len(errbuf))); rc != 0 {
		return fmt.Errorf("libintref: libint2: %s", C.GoString(&errbuf[0]))
	}
	for i := range buf {
		out[i] = float64(buf[i])
	}
	return nil
}
