package freq

import (
	"math"

	"poise/energy/units"
)

// Conversions from the atomic units of the analysis (Eh, bohr, u), all
// derived from the CODATA 2018 constants of package units.

// wavenumberPerRootAU converts √(Eh/(bohr²·u)), the square root of an
// eigenvalue of the mass-weighted Hessian, to a wavenumber in cm⁻¹:
// ν̃ = ω/(2πc), ω² = λ·Eh/(a0²·u).
func wavenumberPerRootAU() float64 {
	a0 := units.BohrAngstrom * 1e-10 // m
	omega := math.Sqrt(units.HartreeJoule / (a0 * a0 * units.AtomicMassUnitKg))
	return omega / (2 * math.Pi * units.SpeedOfLight * 100)
}

// WavenumberCm1 converts an eigenvalue of the mass-weighted Hessian
// (Eh/(bohr²·u)) to a wavenumber in cm⁻¹, negative for a negative
// eigenvalue (an imaginary frequency).
func WavenumberCm1(eigenvalue float64) float64 {
	w := math.Sqrt(math.Abs(eigenvalue)) * wavenumberPerRootAU()
	if eigenvalue < 0 {
		return -w
	}
	return w
}

// mdynPerAngstromPerAU converts a force constant in Eh/bohr² to mdyn/Å
// (1 mdyn/Å = 100 N/m).
func mdynPerAngstromPerAU() float64 {
	a0 := units.BohrAngstrom * 1e-10
	return units.HartreeJoule / (a0 * a0) / 100
}

// kmPerMolPerAU converts |∂μ/∂Q|² in e²/u (μ in e·bohr, Q in bohr·√u) to
// an integrated IR band intensity in km/mol. For the fundamental of a
// harmonic oscillator A = N_A π/(3c²)·|∂μ/∂Q|²/(4πε0) (SI; E. B. Wilson,
// J. C. Decius, P. C. Cross, Molecular Vibrations, McGraw-Hill 1955,
// ch. 7; B. Galabov, T. Dudev, Vibrational Intensities, Elsevier 1996),
// and e²/(4πε0) = Eh·a0, so A = N_A π Eh a0/(3c²u)·|∂μ/∂Q|²_au
// (974.86 km/mol per e²/u).
func kmPerMolPerAU() float64 {
	a0 := units.BohrAngstrom * 1e-10
	c := units.SpeedOfLight
	return units.Avogadro * math.Pi * units.HartreeJoule * a0 / (3 * c * c * units.AtomicMassUnitKg) / 1000
}
