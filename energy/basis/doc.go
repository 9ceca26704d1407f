// Package basis holds poise's library of Gaussian basis sets and places
// their shells on the atoms of a molecule.
//
// The library (data/, embedded in the program) has 27 published sets for
// hydrogen to krypton: STO-3G, 3-21G, the 6-31G and 6-311G families,
// cc-pVXZ and aug-cc-pVXZ, def2-SVP/SVPD/TZVP/TZVPP, pcseg-1/2, and the
// def2-universal Coulomb and Coulomb-exchange fitting sets. Each element of
// each set carries the journal references of its functions (ElementShells
// returns them; `poise basis show` prints them); the repository's NOTICE file
// lists them all. The data were collected from those papers by the Basis Set
// Exchange library (B. P. Pritchard, D. Altarawy, B. Didier, T. D. Gibson,
// T. L. Windus, J. Chem. Inf. Model. 59, 4814 (2019)), distributed under the
// BSD 3-Clause license.
//
// Conventions: exponents in bohr⁻²; one shell per angular momentum and
// contraction (published SP shells and general contractions are split into
// shells that repeat the exponents); coefficients multiply normalized
// primitives and are normalized by the integral code. Each set has one
// angular convention for l ≥ 2, as is common practice: Cartesian for
// STO-3G, 3-21G and the 6-31G family, spherical for all others. Set.Shells
// can override it.
package basis
