// Package molecule holds the molecular input of poise: nuclei with positions
// in bohr, total charge and spin multiplicity; the reader and writer of
// standard XYZ files (coordinates in ångström); and the element data for
// hydrogen to krypton (Z 1–36).
//
// XYZ files are checked line by line and every mistake comes back as an
// *InputError naming the file and the line; nothing the user writes makes
// the package panic.
//
// Element data (data/isotopes.tsv, embedded in the program):
//   - isotope masses: the Atomic Mass Evaluation 2020, M. Wang, W. J. Huang,
//     F. G. Kondev, G. Audi, S. Naimi, Chinese Phys. C 45, 030003 (2021);
//   - natural isotopic abundances: NIST, Atomic Weights and Isotopic
//     Compositions (J. S. Coursey, D. J. Schwab, J. J. Tsai, R. A. Dragoset);
//   - standard atomic weights: CIAAW 2021 (abridged values).
//
// Unit conversion uses the CODATA 2018 Bohr radius from package units.
package molecule
