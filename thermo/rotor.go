package thermo

import (
	"math"

	"poise/energy/units"
	"poise/thermo/pointgroup"
)

// RotorType classifies a molecule by its principal moments of inertia.
type RotorType int

// The rotor types.
const (
	AtomRotor     RotorType = iota // a single atom: no rotation
	LinearRotor                    // I_A = 0, I_B = I_C
	SphericalTop                   // I_A = I_B = I_C
	ProlateTop                     // I_A < I_B = I_C
	OblateTop                      // I_A = I_B < I_C
	AsymmetricTop                  // I_A < I_B < I_C
)

// String returns the name of the rotor type ("prolate symmetric top").
func (t RotorType) String() string {
	switch t {
	case AtomRotor:
		return "atom"
	case LinearRotor:
		return "linear"
	case SphericalTop:
		return "spherical top"
	case ProlateTop:
		return "prolate symmetric top"
	case OblateTop:
		return "oblate symmetric top"
	case AsymmetricTop:
		return "asymmetric top"
	}
	return "unknown"
}

// momentTolerance is the relative difference below which two principal
// moments count as equal when symmetry does not decide.
const momentTolerance = 1e-3

// Rotor holds the principal moments of inertia and rotational constants.
type Rotor struct {
	Type RotorType
	// MomentsAmuBohr2 are the principal moments I_A ≤ I_B ≤ I_C, u·bohr².
	MomentsAmuBohr2 [3]float64
	// ConstantsCm1 are the rotational constants A ≥ B ≥ C, cm⁻¹, of the
	// nonzero moments: one for linear molecules, none for atoms.
	ConstantsCm1 []float64
	// ConstantsGHz are the same constants in GHz.
	ConstantsGHz []float64
}

// MomentsAmuAngstrom2 returns the principal moments in u·Å².
func (r Rotor) MomentsAmuAngstrom2() [3]float64 {
	f := units.BohrAngstrom * units.BohrAngstrom
	return [3]float64{r.MomentsAmuBohr2[0] * f, r.MomentsAmuBohr2[1] * f, r.MomentsAmuBohr2[2] * f}
}

// momentKgM2 converts a moment from u·bohr² to kg·m².
func momentKgM2(i float64) float64 {
	b := units.BohrAngstrom * 1e-10
	return i * units.AtomicMassUnitKg * b * b
}

// NewRotor computes the principal moments of atoms and classifies the
// rotor. The point group pg (of the same atoms) decides linearity and the
// symmetric tops that symmetry makes exact; otherwise moments within a
// relative 1e-3 count as equal.
func NewRotor(atoms []pointgroup.Atom, pg *pointgroup.Result) Rotor {
	var r Rotor
	r.MomentsAmuBohr2, _ = pointgroup.Inertia(atoms)
	ia, ib, ic := r.MomentsAmuBohr2[0], r.MomentsAmuBohr2[1], r.MomentsAmuBohr2[2]
	switch {
	case len(atoms) == 1:
		r.Type = AtomRotor
		return r
	case pg.Linear:
		r.Type = LinearRotor
		r.MomentsAmuBohr2[0] = 0
		b := (ib + ic) / 2
		r.MomentsAmuBohr2[1], r.MomentsAmuBohr2[2] = b, b
	default:
		switch pg.Symbol {
		case "T", "Td", "Th", "O", "Oh", "I", "Ih":
			r.Type = SphericalTop
		default:
			high := len(pg.Axes) > 0 && pg.Axes[0].Order >= 3
			eqAB := ib-ia <= momentTolerance*ic
			eqBC := ic-ib <= momentTolerance*ic
			switch {
			case high && ib-ia < ic-ib, !high && eqAB && !eqBC:
				r.Type = OblateTop
			case high, !high && eqBC && !eqAB:
				r.Type = ProlateTop
			case eqAB && eqBC:
				r.Type = SphericalTop
			default:
				r.Type = AsymmetricTop
			}
		}
	}
	for k := 0; k < 3; k++ {
		i := r.MomentsAmuBohr2[k]
		if i <= 0 {
			continue
		}
		hz := units.Planck / (8 * math.Pi * math.Pi * momentKgM2(i))
		r.ConstantsGHz = append(r.ConstantsGHz, hz/1e9)
		r.ConstantsCm1 = append(r.ConstantsCm1, hz/(100*units.SpeedOfLight))
		if r.Type == LinearRotor {
			break
		}
	}
	return r
}
