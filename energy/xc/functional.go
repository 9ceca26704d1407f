package xc

import (
	"fmt"
	"math"
	"strings"
)

// kernel identifies one component functional.
type kernel int

const (
	kSlater kernel = iota // Slater exchange (libxc LDA_X, 1)
	kVWN                  // VWN correlation, either parametrization (7, 8)
	kPW                   // PW92 correlation, either constant set (12, 13)
	kB88                  // Becke 88 exchange (GGA_X_B88, 106)
	kPBEX                 // PBE exchange (GGA_X_PBE, 101)
	kLYP                  // LYP correlation (GGA_C_LYP, 131)
	kPBEC                 // PBE correlation (GGA_C_PBE, 130)
)

// term is a component functional with its weight, thresholds and constants.
type term struct {
	kind kernel
	coef float64
	sc   screen
	pw   pwSet  // kPW, kPBEC
	vwn  vwnSet // kVWN
}

func (k kernel) isGGA() bool { return k >= kB88 }

func slaterTerm(c float64) term {
	return term{kind: kSlater, coef: c, sc: newScreen(densThresholdDefault)}
}
func vwnTerm(c float64, s vwnSet) term {
	return term{kind: kVWN, coef: c, sc: newScreen(densThresholdDefault), vwn: s}
}
func pwTerm(c float64, s pwSet) term {
	return term{kind: kPW, coef: c, sc: newScreen(densThresholdDefault), pw: s}
}
func b88Term(c float64) term  { return term{kind: kB88, coef: c, sc: newScreen(densThresholdDefault)} }
func pbexTerm(c float64) term { return term{kind: kPBEX, coef: c, sc: newScreen(densThresholdDefault)} }
func lypTerm(c float64) term  { return term{kind: kLYP, coef: c, sc: newScreen(densThresholdLYP)} }
func pbecTerm(c float64) term {
	return term{kind: kPBEC, coef: c, sc: newScreen(densThresholdPBEC), pw: pwModified()}
}

// Functional is an exchange–correlation functional: a weighted sum of
// component functionals plus a fraction of exact (Hartree–Fock) exchange.
// It is immutable after Lookup and safe for concurrent use.
type Functional struct {
	name  string
	terms []term
	exx   float64
	gga   bool
	// needRs reports a component that uses rs and √rs (local correlation).
	needRs bool
	// minDens is the smallest density threshold of the components: below
	// it a point gets zero from all of them. maxDens is the largest: spin
	// densities at or above it are not changed by any component's clamp.
	minDens, maxDens float64
}

func newFunctional(name string, exx float64, terms ...term) *Functional {
	f := &Functional{name: name, terms: terms, exx: exx, minDens: math.Inf(1)}
	for _, t := range terms {
		f.gga = f.gga || t.kind.isGGA()
		switch t.kind {
		case kVWN, kPW, kPBEC:
			f.needRs = true
		}
		f.minDens = min(f.minDens, t.sc.dens)
		f.maxDens = max(f.maxDens, t.sc.dens)
	}
	return f
}

// b3lypTerms returns the B3LYP mixture as libxc builds HYB_GGA_XC_B3LYP
// (402) and B3LYP5 (475): (1−a0−ax) Slater + ax B88 + (1−ac) VWN + ac LYP,
// with a0 = 0.20, ax = 0.72, ac = 0.81 (A. D. Becke, J. Chem. Phys. 98,
// 5648 (1993), eq. (2); P. J. Stephens, F. J. Devlin, C. F. Chabalowski,
// M. J. Frisch, J. Phys. Chem. 98, 11623 (1994), with LYP for PW91).
// B88 here is the whole functional (Slater plus gradient correction), so
// the local exchange weight is 0.08 + 0.72 = 0.80 = 1 − a0.
func b3lypTerms(vwn vwnSet) []term {
	const ax, ac = 0.72, 0.81
	return []term{slaterTerm(1.0 - b3lypA0 - ax), b88Term(ax), vwnTerm(1.0-ac, vwn), lypTerm(ac)}
}

// b3lypA0 is the exact-exchange fraction a0 of B3LYP.
const b3lypA0 = 0.20

// Names returns the method names Lookup accepts, sorted.
func Names() []string { return []string{"b3lyp", "b3lyp5", "blyp", "hf", "lda", "pbe", "pbe0"} }

// Lookup returns the functional of a method name (case-insensitive):
//
//	hf      no density functional, exact exchange 1
//	lda     Slater exchange + VWN5 correlation
//	blyp    Becke 88 exchange + LYP correlation
//	pbe     PBE exchange + PBE correlation
//	b3lyp   0.08 Slater + 0.72 B88 + 0.19 VWN-RPA + 0.81 LYP, exact exchange 0.20 (libxc 402)
//	b3lyp5  as b3lyp with VWN5 (libxc 475)
//	pbe0    0.75 PBE exchange + PBE correlation, exact exchange 0.25 (libxc 406)
func Lookup(method string) (*Functional, error) {
	key := strings.ToLower(strings.TrimSpace(method))
	switch key {
	case "hf":
		return newFunctional(key, 1), nil
	case "lda":
		return newFunctional(key, 0, slaterTerm(1), vwnTerm(1, vwn5())), nil
	case "blyp":
		return newFunctional(key, 0, b88Term(1), lypTerm(1)), nil
	case "pbe":
		return newFunctional(key, 0, pbexTerm(1), pbecTerm(1)), nil
	case "b3lyp":
		return newFunctional(key, b3lypA0, b3lypTerms(vwnRPA())...), nil
	case "b3lyp5":
		return newFunctional(key, b3lypA0, b3lypTerms(vwn5())...), nil
	case "pbe0":
		// C. Adamo, V. Barone, J. Chem. Phys. 110, 6158 (1999);
		// M. Ernzerhof, G. E. Scuseria, J. Chem. Phys. 110, 5029 (1999).
		const a0 = 0.25
		return newFunctional(key, a0, pbexTerm(1-a0), pbecTerm(1)), nil
	}
	return nil, fmt.Errorf("xc: unknown method %q (known: %s)", method, strings.Join(Names(), ", "))
}

// Name returns the canonical (lower-case) method name.
func (f *Functional) Name() string { return f.name }

// ExactExchange returns the fraction of exact exchange the SCF must add to
// the Kohn–Sham matrix (its exchange build scaled by this factor): 0 for
// pure density functionals, 0.20 for B3LYP, 0.25 for PBE0, 1 for HF.
func (f *Functional) ExactExchange() float64 { return f.exx }

// IsGGA reports whether the functional depends on the density gradient,
// so that sigma inputs and vsigma outputs are needed.
func (f *Functional) IsGGA() bool { return f.gga }

// IsHF reports whether this is Hartree–Fock: no density-functional part.
func (f *Functional) IsHF() bool { return len(f.terms) == 0 }

// NeedsGrid reports whether the functional has a part to integrate on a grid.
func (f *Functional) NeedsGrid() bool { return len(f.terms) > 0 }

func need(name string, s []float64, n int) {
	if len(s) < n {
		panic(fmt.Sprintf("xc: %s has length %d, need %d", name, len(s), n))
	}
}

// EvalUnpolarized evaluates the functional at n points of a closed-shell
// density. Inputs: rho = ρ (total density), sigma = |∇ρ|² (GGA only; may be
// nil for LDA). Outputs, overwritten for the first n points: exc = e, the
// energy per unit volume (E_xc = ∫ e d³r, hartree/bohr³), vrho = ∂e/∂ρ,
// vsigma = ∂e/∂σ (GGA only; if non-nil for an LDA it is zeroed). Points
// below a component's density threshold get zero from that component.
// Slices shorter than n are a programming error and panic.
func (f *Functional) EvalUnpolarized(n int, rho, sigma []float64, exc, vrho, vsigma []float64) {
	need("rho", rho, n)
	need("exc", exc, n)
	need("vrho", vrho, n)
	rho, exc, vrho = rho[:n], exc[:n], vrho[:n]
	if f.gga {
		need("sigma", sigma, n)
		need("vsigma", vsigma, n)
		sigma, vsigma = sigma[:n], vsigma[:n]
	} else {
		if vsigma != nil {
			need("vsigma", vsigma, n)
			clear(vsigma[:n])
		}
		sigma, vsigma = nil, nil
	}
	f.evalUnpol(rho, sigma, exc, vrho, vsigma)
}

// EvalPolarized evaluates the functional at n points of a spin-polarized
// density. Inputs: rhoA = ρα, rhoB = ρβ; sigmaAA = ∇ρα·∇ρα,
// sigmaAB = ∇ρα·∇ρβ, sigmaBB = ∇ρβ·∇ρβ (GGA only; may be nil for LDA).
// Outputs, overwritten for the first n points: exc = e (energy per
// volume), vrhoA = ∂e/∂ρα, vrhoB = ∂e/∂ρβ, vsigmaAA = ∂e/∂σαα,
// vsigmaAB = ∂e/∂σαβ, vsigmaBB = ∂e/∂σββ (GGA only; zeroed if non-nil for
// an LDA). Slices shorter than n are a programming error and panic.
func (f *Functional) EvalPolarized(n int, rhoA, rhoB, sigmaAA, sigmaAB, sigmaBB []float64,
	exc, vrhoA, vrhoB, vsigmaAA, vsigmaAB, vsigmaBB []float64) {
	need("rhoA", rhoA, n)
	need("rhoB", rhoB, n)
	need("exc", exc, n)
	need("vrhoA", vrhoA, n)
	need("vrhoB", vrhoB, n)
	rhoA, rhoB, exc, vrhoA, vrhoB = rhoA[:n], rhoB[:n], exc[:n], vrhoA[:n], vrhoB[:n]
	if f.gga {
		need("sigmaAA", sigmaAA, n)
		need("sigmaAB", sigmaAB, n)
		need("sigmaBB", sigmaBB, n)
		need("vsigmaAA", vsigmaAA, n)
		need("vsigmaAB", vsigmaAB, n)
		need("vsigmaBB", vsigmaBB, n)
		sigmaAA, sigmaAB, sigmaBB = sigmaAA[:n], sigmaAB[:n], sigmaBB[:n]
		vsigmaAA, vsigmaAB, vsigmaBB = vsigmaAA[:n], vsigmaAB[:n], vsigmaBB[:n]
	} else {
		sigmaAA, sigmaAB, sigmaBB = nil, nil, nil
		for _, v := range [][]float64{vsigmaAA, vsigmaAB, vsigmaBB} {
			if v != nil {
				need("vsigma", v, n)
				clear(v[:n])
			}
		}
		vsigmaAA, vsigmaAB, vsigmaBB = nil, nil, nil
	}
	f.evalPol(rhoA, rhoB, sigmaAA, sigmaAB, sigmaBB, exc, vrhoA, vrhoB, vsigmaAA, vsigmaAB, vsigmaBB)
}
