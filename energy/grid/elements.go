package grid

import "poise/energy/units"

// maxZ is the highest atomic number the grid knows radii for (Xe).
const maxZ = 54

// taXi holds the Treutler–Ahlrichs radial scaling factors ξ for H–Kr,
// indexed by atomic number (index 0 unused). Source: O. Treutler,
// R. Ahlrichs, J. Chem. Phys. 102, 346 (1995), Table 1 (from memory).
// Elements beyond Kr have no listed ξ; see xi.
var taXi = [...]float64{
	0,
	0.8, 0.9, // H He
	1.8, 1.4, 1.3, 1.1, 0.9, 0.9, 0.9, 0.9, // Li–Ne
	1.4, 1.3, 1.3, 1.2, 1.1, 1.0, 1.0, 1.0, // Na–Ar
	1.5, 1.4, // K Ca
	1.3, 1.2, 1.2, 1.2, 1.2, 1.2, 1.2, 1.1, 1.1, 1.1, // Sc–Zn
	1.1, 1.0, 0.9, 0.9, 0.9, 0.9, // Ga–Kr
}

// braggSlaterAngstrom holds atomic radii in ångström, indexed by atomic
// number, for H–Xe. Source: J. C. Slater, J. Chem. Phys. 41, 3199 (1964)
// (from memory). Two documented departures, both common practice since
// A. D. Becke, J. Chem. Phys. 88, 2547 (1988), appendix: hydrogen uses
// 0.35 Å instead of Slater's 0.25 Å; the noble gases, which Slater does not
// list, take the radius of the preceding element (He that of H, our choice).
var braggSlaterAngstrom = [...]float64{
	0,
	0.35, 0.35, // H He
	1.45, 1.05, 0.85, 0.70, 0.65, 0.60, 0.50, 0.50, // Li–Ne
	1.80, 1.50, 1.25, 1.10, 1.00, 1.00, 1.00, 1.00, // Na–Ar
	2.20, 1.80, // K Ca
	1.60, 1.40, 1.35, 1.40, 1.40, 1.40, 1.35, 1.35, 1.35, 1.35, // Sc–Zn
	1.30, 1.25, 1.15, 1.15, 1.15, 1.15, // Ga–Kr
	2.35, 2.00, // Rb Sr
	1.80, 1.55, 1.45, 1.45, 1.35, 1.30, 1.35, 1.40, 1.60, 1.55, // Y–Cd
	1.55, 1.45, 1.45, 1.40, 1.40, 1.40, // In–Xe
}

// xiFromBraggSlater converts a Bragg–Slater radius in ångström into a
// radial scaling factor for elements without a Treutler–Ahlrichs ξ. The
// factor 0.8 is the ratio ξ/R for the row-4 p block (Ga–Kr: 0.85, 0.80,
// 0.78, 0.78, 0.78, 0.78); our choice.
const xiFromBraggSlater = 0.8

// xi returns the radial scaling factor of element z (1 ≤ z ≤ maxZ).
func xi(z int) float64 {
	if z < len(taXi) {
		return taXi[z]
	}
	return xiFromBraggSlater * braggSlaterAngstrom[z]
}

// braggSlaterBohr returns the atomic radius of element z in bohr.
func braggSlaterBohr(z int) float64 {
	return braggSlaterAngstrom[z] * units.AngstromBohr
}

// row returns the periodic-table row (1–5) of element z.
func row(z int) int {
	switch {
	case z <= 2:
		return 1
	case z <= 10:
		return 2
	case z <= 18:
		return 3
	case z <= 36:
		return 4
	default:
		return 5
	}
}
