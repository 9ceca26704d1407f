// Package fit is density fitting (the resolution of the identity, RI) of
// the Coulomb and exchange terms of a Fock build and of their nuclear
// gradient, with the Coulomb metric: the orbital products are expanded in
// an auxiliary basis {χ_P} so that
//
//	(μν|λσ) ≈ Σ_PQ (μν|P) [V⁻¹]_PQ (Q|λσ),   V_PQ = (P|Q),
//
// which is the robust, variational fit of the Coulomb energy
// (B. I. Dunlap, J. W. D. Connolly and J. R. Sabin, J. Chem. Phys. 71,
// 3396 (1979); O. Vahtras, J. Almlöf and M. W. Feyereisen, Chem. Phys.
// Lett. 213, 514 (1993)) and, used for exchange too, the RI-JK
// approximation of F. Weigend, Phys. Chem. Chem. Phys. 4, 4285 (2002),
// whose auxiliary sets def2-universal-JKFIT (F. Weigend, J. Comput. Chem.
// 29, 167 (2008)) are built for it.
//
// # Algorithm
//
// With the Cholesky factor V = L Lᵀ, the three-centre integrals are stored
// once as B = L⁻¹ I, I_P,μν = (μν|P), over the orbital pairs μ ≥ ν
// (naux × n(n+1)/2 words). Then
//
//   - J_μν = Σ_R B_R,μν Σ_λσ B_R,λσ D_λσ (two matrix–vector products);
//   - K_μν = Σ_R (B_R D B_R)_μν, evaluated through the eigenvectors of
//     D = Σ_i λ_i v_i v_iᵀ that carry weight (the occupied space of an SCF
//     density): X_R = B_R V, K = Σ_R X_R Λ X_Rᵀ, at 4·naux·n²·r operations
//     for rank r.
//
// The analytic gradient of the fitted energy (F. Weigend, M. Häser,
// H. Patzelt and R. Ahlrichs, Chem. Phys. Lett. 294, 143 (1998), for the
// Coulomb part; the exchange part follows the same derivation) needs the
// derivatives of the three- and two-centre integrals only:
//
//	∂E₂ = Σ_P,μν G_P,μν ∂(μν|P) + Σ_PQ H_PQ ∂(P|Q),
//	G_P = c_P D − ax Σ_s D^s Z_P D^s,   H = −½ c cᵀ + ½ ax Σ_s M^s,
//
// with c = V⁻¹ I D, Z_P = Σ_Q [V⁻¹]_PQ I_Q and M^s_PQ = tr(Z_P D^s Z_Q D^s)
// (per spin density D^s; a restricted density counts as two spins of D/2).
//
// Every step splits its work into chunks fixed by the sizes alone and
// reduces them in a fixed order, so results do not depend on the number
// of threads.
package fit
