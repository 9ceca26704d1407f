// Package thermo computes ideal-gas thermochemistry of a molecule from its
// geometry, masses, harmonic frequencies and electronic levels: the
// rigid-rotor / harmonic-oscillator (RRHO) model with an optional
// quasi-harmonic treatment of low modes. Point groups and symmetry numbers
// come from the subpackage pointgroup.
//
// # Model
//
// The partition function of an ideal gas of N molecules is q^N/N!, with q the
// product of translational, rotational, vibrational and electronic factors
// (D. A. McQuarrie, Statistical Mechanics, Harper & Row 1976, chapters 5–8;
// T. L. Hill, An Introduction to Statistical Thermodynamics, Addison-Wesley
// 1960). Per mole, with R = N_A k, x_i = hcν̃_i/kT and Θ = hcν̃/k:
//
//	translation  q_t = (2πmkT/h²)^{3/2} kT/p         (Sackur–Tetrode)
//	             U_t = 3/2 RT   S_t = R(ln q_t + 5/2)   Cv_t = 3/2 R
//	rotation     linear:    q_r = T/(σΘ_r),  Θ_r = h²/(8π²Ik)
//	             U_r = RT   S_r = R(ln q_r + 1)         Cv_r = R
//	             nonlinear: q_r = (√π/σ) (T³/(Θ_A Θ_B Θ_C))^{1/2}
//	             U_r = 3/2 RT   S_r = R(ln q_r + 3/2)   Cv_r = 3/2 R
//	vibration    U_v = R Σ Θ_i (1/2 + 1/(e^{x_i} − 1))  (includes the ZPE)
//	             S_v = R Σ [x_i/(e^{x_i} − 1) − ln(1 − e^{−x_i})]
//	             Cv_v = R Σ x_i² e^{x_i}/(e^{x_i} − 1)²
//	electronic   q_e = Σ_j g_j e^{−ε_j/kT}
//	             U_e = N_A⟨ε⟩   S_e = R ln q_e + U_e/T   Cv_e = N_A(⟨ε²⟩ − ⟨ε⟩²)/(kT²)
//
// and in total H = U + RT, Cp = Cv + R, G = H − TS (so H − U = RT,
// Cp − Cv = R per mole). Energies are reported per molecule in hartree
// relative to the electronic energy E_el ("corrections"); E_el + correction
// gives absolute H and G when E_el is known.
//
// The rotational partition function is the high-temperature (classical)
// limit, common practice for all molecules but H2 and its isotopologues at
// low temperature; σ is the rotational symmetry number (G. Herzberg,
// Molecular Spectra and Molecular Structure II, Van Nostrand 1945;
// McQuarrie §8-3). Imaginary modes (given as negative wavenumbers) and zero
// modes are left out of the vibrational sums with a warning. A molecule is
// linear when its point group is (every atom within the symmetry tolerance
// of one line); one bent by more than BentLimitBohr that comes with 3N−6
// frequencies, as the Hessian analysis gives it, is treated as bent with
// its point group found below the bend, and a warning. The electronic
// factor is the spin degeneracy 2S+1 by default; for molecules with
// low-lying or orbitally degenerate states, such as NO (²Π½ and ²Π3/2,
// 119.8 cm⁻¹ apart), the levels are given explicitly.
//
// # Standard states
//
// The translational partition function refers to the pressure of the
// conditions (1 bar by default; 1 atm on request). For the 1 mol/L standard
// state of solution chemistry, the volume per molecule is 1/(N_A c°) with
// c° = 1 mol/L, which equals the ideal gas at p = c°RT. This lowers S by
// R ln(c°RT/p°) and adds RT ln(c°RT/p°) to G (7.9 kJ/mol at 298.15 K from
// 1 bar); H, U and Cp are unchanged.
//
// # Low modes
//
// Harmonic entropies of modes below ~100 cm⁻¹ are unreliable. With
// [LowModes], each mode's entropy is interpolated between the harmonic
// oscillator and a free rotor with the damping w(ν̃) = 1/(1 + (ω0/ν̃)^α):
//
//	S = w S_vib + (1 − w) S_rot,  S_rot = R[1/2 + ln (8π³μ'kT/h²)^{1/2}],
//	μ = h/(8π²cν̃),  μ' = μB_av/(μ + B_av),
//
// with ω0 = 100 cm⁻¹, α = 4 and B_av = 1e-44 kg m² (S. Grimme, Chem. Eur. J.
// 18, 9955 (2012)). The energy (and so the enthalpy) of each mode is damped
// the same way toward the free-rotor value RT/2,
//
//	U = w U_vib + (1 − w) RT/2,  Cv = w Cv_vib + (1 − w) R/2,
//
// following Y.-P. Li, J. Gomes, S. M. Sharada, A. T. Bell, M. Head-Gordon,
// J. Phys. Chem. C 119, 1840 (2015) (cited from memory; U_vib includes the
// mode's zero-point energy, as we recall their scheme). The zero-point
// energy reported stays the harmonic one.
//
// # Modes file (the contract of `poise modes`)
//
// [ReadModes] reads a JSON object; these keys are read, all others ignored:
//
//	"symbols"            ["O", "H", "H"]             element symbols, one per atom
//	"geometry_angstrom"  [[x, y, z], ...]            Å, one row per atom
//	"masses_u"           [15.9949, 1.00783, ...]     optional; u, one per atom
//	                                                 (default: most abundant isotopes)
//	"frequencies_cm1"    [1595.0, 3657.0, 3756.0]    ascending; imaginary as negative;
//	                                                 the 3N−6 (3N−5) vibrations only,
//	                                                 without translations and rotations
//	"multiplicity"       1                           optional; 2S+1
//	"energy_hartree"     -76.0                       optional; electronic energy
//
// The modes command writes at least these keys with these meanings.
package thermo
