// Package xc evaluates the exchange–correlation functionals of poise's
// Kohn–Sham DFT on batches of grid points.
//
// # Methods
//
// Lookup returns a Functional by method name: lda (Slater + VWN5), blyp,
// pbe, b3lyp (with VWN-RPA, as libxc's HYB_GGA_XC_B3LYP), b3lyp5 (with
// VWN5), pbe0, and hf (no density functional; exact exchange 1, so the SCF
// can treat Hartree–Fock uniformly through IsHF and NeedsGrid). The
// exact-exchange fraction (ExactExchange) scales the SCF's exchange build;
// this package only supplies the semilocal part. The compositions follow
// libxc 5.2's definitions (IDs in brackets):
//
//	lda     LDA_X [1] + LDA_C_VWN [7]
//	blyp    GGA_X_B88 [106] + GGA_C_LYP [131]
//	pbe     GGA_X_PBE [101] + GGA_C_PBE [130]
//	b3lyp   [402]: 0.08 LDA_X + 0.72 GGA_X_B88 + 0.19 LDA_C_VWN_RPA + 0.81 GGA_C_LYP, a0 = 0.20
//	b3lyp5  [475]: as b3lyp with LDA_C_VWN, a0 = 0.20
//	pbe0    [406]: 0.75 GGA_X_PBE + GGA_C_PBE, a0 = 0.25
//
// B88 there is the whole functional (local part included), so b3lyp's local
// exchange weight is 0.08 + 0.72 = 1 − a0 and its B88 gradient correction
// weight ax = 0.72, with correlation 0.19 VWN + 0.81 LYP (ac = 0.81).
//
// # Formulas (each cited again beside its code)
//
//   - Slater exchange: P. A. M. Dirac, Proc. Camb. Phil. Soc. 26, 376 (1930);
//     J. C. Slater, Phys. Rev. 81, 385 (1951).
//   - VWN correlation: S. H. Vosko, L. Wilk, M. Nusair, Can. J. Phys. 58,
//     1200 (1980); "VWN5" = their Ceperley–Alder fit with the spin-stiffness
//     interpolation (libxc LDA_C_VWN, 7); RPA fit with the plain
//     f(ζ) interpolation between the para- and ferromagnetic fits, as libxc
//     implements LDA_C_VWN_RPA (8).
//   - PW92 correlation: J. P. Perdew, Y. Wang, Phys. Rev. B 45, 13244
//     (1992), Table I constants (libxc LDA_C_PW, 12) and the more precise
//     constants of the PBE reference code (LDA_C_PW_MOD, 13), used inside
//     PBE correlation.
//   - Becke 88 exchange: A. D. Becke, Phys. Rev. A 38, 3098 (1988).
//   - LYP correlation: C. Lee, W. Yang, R. G. Parr, Phys. Rev. B 37, 785
//     (1988), in the form of B. Miehlich, A. Savin, H. Stoll, H. Preuss,
//     Chem. Phys. Lett. 157, 200 (1989).
//   - PBE exchange and correlation: J. P. Perdew, K. Burke, M. Ernzerhof,
//     Phys. Rev. Lett. 77, 3865 (1996).
//   - B3LYP: A. D. Becke, J. Chem. Phys. 98, 5648 (1993); P. J. Stephens,
//     F. J. Devlin, C. F. Chabalowski, M. J. Frisch, J. Phys. Chem. 98,
//     11623 (1994). PBE0: C. Adamo, V. Barone, J. Chem. Phys. 110, 6158
//     (1999).
//   - Reference library for the tests: S. Lehtola, C. Steigemann,
//     M. J. T. Oliveira, M. A. L. Marques, SoftwareX 7, 1 (2018) (libxc).
//
// # Batch interface and conventions
//
// EvalUnpolarized and EvalPolarized take flat slices of n points and
// overwrite the outputs (atomic units throughout):
//
//	inputs   ρ (total, or ρα and ρβ), σ = ∇ρ·∇ρ (σαα, σαβ, σββ); σ only for GGAs
//	exc      e = ρ·ε, the energy per unit volume: E_xc = ∫ e d³r
//	vrho     ∂e/∂ρ (∂e/∂ρα, ∂e/∂ρβ)
//	vsigma   ∂e/∂σ (∂e/∂σαα, ∂e/∂σαβ, ∂e/∂σββ)
//
// vrho and vsigma are libxc's vrho and vsigma; exc is libxc's zk (energy
// per particle) times the input density. A Functional is immutable and
// safe for concurrent use; the inner loops allocate nothing. Callers
// parallelize over batches.
//
// # Evaluation (unpol.go, pol.go)
//
// The components of a functional are evaluated together, point by point:
// the cube roots (ρ^(1/3); for spin densities n, ρα, ρβ, 1±ζ), rs, √rs and
// f(ζ) are computed once per point and shared by all components instead
// of each component taking its own math.Cbrt, and each component's
// contribution is added in the order of the functional's definition. A
// point below the smallest density threshold of the components costs one
// comparison. Closed-shell LYP is written out at ζ = 0 (all (1±ζ) powers
// 1, no ζ derivative) rather than evaluated as the polarized form with
// ρα = ρβ. The results equal those of separate component passes up to
// floating-point rounding (relative differences of order 1e-15).
//
// # Thresholds (libxc 5.2 defaults, reproduced per component)
//
// Each component functional has libxc's density threshold:
//
//	1e-15  Slater, VWN5, VWN-RPA, PW92 (both), B88, PBE exchange
//	1e-14  LYP
//	1e-12  PBE correlation
//
// with σ_thr = ρ_thr^(4/3) and ζ_thr = 2.220446049250313e-16 (DBL_EPSILON).
// As libxc does, for each component separately:
//   - a point whose total density is below the threshold gets zero from
//     that component (values and derivatives);
//   - otherwise each spin density is raised to at least the threshold and
//     σαα, σββ to at least σ_thr², and σαβ is clipped to ±(σαα+σββ)/2;
//   - an exchange channel (Slater, B88, PBE exchange) whose spin density
//     is at or below the threshold contributes nothing; for closed-shell
//     input this means ρ/2 ≤ ρ_thr gives zero exchange;
//   - powers (1±ζ)^p are held at ζ_thr^p when 1±ζ ≤ ζ_thr; GGA exchange
//     then also holds ζ itself at ±(1−ζ_thr). libxc tests this condition
//     as 2ρσ/ρ ≤ ζ_thr in exchange and on the computed 1±ζ in correlation;
//     both are reproduced, as is the order of operations in ζ, so that
//     nearly and fully polarized points agree with libxc too.
//
// In particular a one-electron density evaluated spin-polarized with ρβ = 0
// sees ρβ = ρ_thr inside correlation, so LYP's energy for it, exactly zero
// in theory, comes out of order ρ_thr times the volume (−3e-13 Eh for the
// hydrogen atom).
//
// # Later work
//
// Second derivatives (for analytic Hessians) will be added as further
// per-point kernels and Eval methods with additional outputs; the first
// derivative kernels here are closed-form per point and do not need to
// change.
package xc
