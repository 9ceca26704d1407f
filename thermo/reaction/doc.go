// Package reaction reads reaction files, checks that every reaction is
// balanced, and turns per-species energies and thermochemistry into
// reaction quantities: ΔE(electronic), ΔZPE, ΔH(T), ΔG(T), ΔCp(T) and the
// equilibrium constant K.
//
// The package separates the arithmetic of reactions ([Evaluate]) from the
// way species are computed: the caller supplies, per species, one
// [ConformerResult] per conformer (an electronic energy and a thermo.Input),
// so the reaction quantities can be recomputed at any temperature and
// pressure without new electronic-structure work.
//
// # Reaction file format
//
// A reaction file is plain UTF-8 text, one statement per line. A # starts
// a comment that runs to the end of the line; blank lines are ignored.
// Words are separated by spaces or tabs. There are two statements
// (keywords are case-insensitive; names and paths are not):
//
//	species NAME FILE [FILE ...] [charge Q] [multiplicity M]
//	reaction [LABEL:] TERM [+ TERM ...] -> TERM [+ TERM ...]
//
// species declares a species NAME and its structure(s): XYZ files, with
// paths relative to the directory of the reaction file (absolute paths are
// kept). Several files are several conformers of the same species; they
// must have the same elements. charge (default 0) and multiplicity 2S+1
// (default: 1 for an even electron count, 2 for an odd one) apply to every
// conformer. A NAME starts with a letter and may hold letters, digits and
// _ - . + ( ) ' ; it must not be declared twice. Paths must not hold spaces
// or #.
//
// reaction declares a reaction. The optional LABEL (before a colon) names
// it in the output; without one it is called "reaction N", N counting
// reactions from 1. A TERM is an optional positive stoichiometric
// coefficient and a species name, separated by a space: "2 water",
// "1/2 oxygen", "0.5 oxygen". Terms are separated by a + standing alone
// between spaces (so "NH4+" is a name), the two sides by ->. A species may
// appear once per side. Every species in a reaction must be declared
// (before or after the reaction), and every reaction must balance the
// elements and the charge.
//
// Example (testdata/demo/hydrogenation.reaction):
//
//	# Heat released by hydrogenating ethylene
//	species ethylene  ethylene.xyz
//	species hydrogen  hydrogen.xyz
//	species ethane    ethane.xyz
//	reaction hydrogenation: ethylene + hydrogen -> ethane
//
// Mistakes are reported as *[Error] values with the file and line.
//
// # Quantities
//
// For a reaction Σ ν_i A_i (ν negative for reactants), every quantity is
// ΔX = Σ ν_i X_i, per mole of reaction as written. Per species, E is the
// electronic energy, ZPE the harmonic zero-point energy, H = E + H_corr(T)
// and G = E + G_corr(T, p) from the rigid-rotor / harmonic-oscillator model
// of package thermo (ideal gas; McQuarrie, Statistical Mechanics, 1976).
//
// A species with several conformers is represented by its conformer of
// lowest G (at the conditions asked); E, ZPE, H and G of the reaction use
// that conformer. The conformer mixture free energy
//
//	G_mix = −RT ln Σ_i exp(−G_i/RT)
//
// (the Gibbs energy of the equilibrium mixture of conformers treated as
// distinct species in the same well-separated minima; e.g. the "Boltzmann
// weighted" free energy of conformer ensembles) is reported beside it, and
// ΔG_mix uses it for every species (G_mix = G for a single structure).
//
// The equilibrium constant is K = exp(−ΔG°/RT) with the standard state the
// ideal gas at p° = 1 bar, whatever pressure ΔG is reported at: K is the
// dimensionless Kp of the partial pressures in units of p°. It uses the
// lowest-G conformers (KMix uses ΔG_mix). log10 K is always given because K
// itself can overflow.
//
// Kirchhoff's law, dΔH/dT = ΔCp, holds exactly for the model, which makes
// it a check of the implementation (see the tests).
//
// These are model estimates: method errors of several kJ/mol or more are
// common. They are not a substitute for calorimetry or a process-hazard
// assessment; defer to local codes and licensed practice for safety
// decisions ([Caution]).
package reaction
