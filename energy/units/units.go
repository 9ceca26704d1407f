// Package units holds the physical constants and unit conversions of poise.
//
// All values are CODATA 2018 (E. Tiesinga, P. J. Mohr, D. B. Newell,
// B. N. Taylor, Rev. Mod. Phys. 93, 025010 (2021)); derived factors are
// computed from them, not rounded separately. Physics inside poise runs in
// atomic units; these constants convert at the edges.
package units

const (
	// BohrAngstrom is the Bohr radius in ångström.
	BohrAngstrom = 0.529177210903
	// AngstromBohr converts ångström to bohr.
	AngstromBohr = 1 / BohrAngstrom

	// HartreeEV is the Hartree energy in electronvolt.
	HartreeEV = 27.211386245988
	// HartreeJoule is the Hartree energy in joule.
	HartreeJoule = 4.3597447222071e-18
	// Avogadro is the Avogadro constant in mol⁻¹ (exact).
	Avogadro = 6.02214076e23
	// HartreeKJPerMol is the Hartree energy times N_A in kJ/mol.
	HartreeKJPerMol = HartreeJoule * Avogadro / 1000
	// CalorieJoule is the thermochemical calorie in joule (exact).
	CalorieJoule = 4.184
	// HartreeKcalPerMol is the Hartree energy times N_A in kcal/mol.
	HartreeKcalPerMol = HartreeKJPerMol / CalorieJoule

	// Boltzmann is the Boltzmann constant in J/K (exact).
	Boltzmann = 1.380649e-23
	// Planck is the Planck constant in J s (exact).
	Planck = 6.62607015e-34
	// SpeedOfLight is the speed of light in vacuum in m/s (exact).
	SpeedOfLight = 299792458.0
	// GasConstant is R = N_A k in J/(mol K).
	GasConstant = Avogadro * Boltzmann
	// HartreeWavenumber is the Hartree energy in cm⁻¹.
	HartreeWavenumber = 219474.6313632
	// ElementaryCharge is e in coulomb (exact).
	ElementaryCharge = 1.602176634e-19

	// AtomicMassUnitKg is the unified atomic mass unit in kg.
	AtomicMassUnitKg = 1.66053906660e-27
	// ElectronMassKg is the electron mass in kg.
	ElectronMassKg = 9.1093837015e-31
	// AtomicMassUnitElectronMasses is 1 u in electron masses (atomic units of mass).
	AtomicMassUnitElectronMasses = 1822.888486209

	// DebyeAU is one debye in atomic units of dipole moment (e·bohr):
	// 1 D = 1e-21/c C·m, e·a0 = 8.4783536255e-30 C·m.
	DebyeAU = 1e-21 / SpeedOfLight / 8.4783536255e-30
	// AUDebye is one atomic unit of dipole moment in debye.
	AUDebye = 1 / DebyeAU

	// StandardPressurePa is the IUPAC standard pressure, 1 bar, in pascal.
	StandardPressurePa = 1e5
	// AtmospherePa is one standard atmosphere in pascal (exact).
	AtmospherePa = 101325.0
)
