// Package dispersion computes the empirical D3 dispersion correction with
// Becke–Johnson damping, D3(BJ), two-body part only, and its analytic
// nuclear gradient. Positions are in bohr, energies in hartree.
//
// The model follows
//
//   - S. Grimme, J. Antony, S. Ehrlich, H. Krieg, "A consistent and accurate
//     ab initio parametrization of density functional dispersion correction
//     (DFT-D) for the 94 elements H-Pu", J. Chem. Phys. 132, 154104 (2010):
//     coordination numbers, reference C6 coefficients and their Gaussian
//     interpolation, ⟨r⁴⟩/⟨r²⟩ ratios and C8;
//   - S. Grimme, S. Ehrlich, L. Goerigk, "Effect of the damping function in
//     dispersion corrected density functional theory", J. Comput. Chem. 32,
//     1456 (2011): the Becke–Johnson damping and its parameters for hf, blyp,
//     b3lyp, pbe and pbe0;
//   - L. Goerigk, S. Grimme, Phys. Chem. Chem. Phys. 13, 6670 (2011): the
//     olyp parameters (kept for the validation case);
//   - P. Pyykkö, M. Atsumi, Chem. Eur. J. 15, 186 (2009): the covalent radii
//     of the coordination number.
//
// In atomic units, with R_A = 4/3 × the covalent radius of atom A:
//
//	CN_A   = Σ_B 1 / (1 + exp(−16 ((R_A + R_B)/r_AB − 1)))   over B with r_AB < 40 bohr
//	W_Aa   = exp(−4 (CN_A − CN_a)²) / Σ_a' exp(−4 (CN_A − CN_a')²)
//	C6_AB  = Σ_a Σ_b W_Aa W_Bb C6ref(a, b)
//	Q_A    = sqrt(0.5 ⟨r⁴⟩/⟨r²⟩_A sqrt(Z_A)),   C8_AB = 3 C6_AB Q_A Q_B
//	R0_AB  = a1 sqrt(C8_AB/C6_AB) + a2 = a1 sqrt(3 Q_A Q_B) + a2
//	E      = − Σ_{A<B} [ s6 C6_AB/(r⁶ + R0⁶) + s8 C8_AB/(r⁸ + R0⁸) ]
//
// The 40-bohr cutoff applies to the coordination number only (the common
// choice); the energy sums over all pairs. The Gaussian weights are computed
// with the largest exponent factored out, which equals the formula above
// wherever it does not underflow and tends continuously to full weight on
// the reference with the largest CN where it would.
//
// The gradient is analytic: the direct pair terms plus the chain rule
// through the coordination numbers, ∂E/∂CN_A · ∂CN_A/∂R.
//
// Data (embedded, byte-identical copies of the published tables in
// data/*.tsv, see data/README.md): the reference C6 coefficients, reference
// coordination numbers and ⟨r⁴⟩/⟨r²⟩ ratios of Grimme et al. 2010, the
// covalent radii of Pyykkö and Atsumi 2009 (metals −10 %), and the damping
// parameters above, as tabulated by the LGPL-3.0 library simple-dftd3.
// Elements H to Kr (Z 1–36) are covered.
package dispersion
