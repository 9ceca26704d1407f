package freq

import (
	"fmt"
	"math"
)

// StationaryGradientAU is the largest norm (Eh/bohr, over all 3N
// coordinates) of the gradient, without its translation and rotation
// parts, at which a geometry counts as a stationary point. Above it the
// projected frequencies of the soft modes are unreliable, shifted by
// tens of cm⁻¹ (common practice: relax before a frequency analysis to
// gradients of 1e-4 to 1e-3 Eh/bohr).
const StationaryGradientAU = 1e-3

// InternalGradientNorm returns the norm of the gradient (3N, Eh/bohr)
// after removing its components along rigid translations and rotations
// of the geometry (3N, bohr), which an invariant energy has only through
// numerical noise.
func InternalGradientNorm(coordsBohr, gradAU []float64) (float64, error) {
	if len(coordsBohr) != len(gradAU) || len(coordsBohr)%3 != 0 || len(coordsBohr) == 0 {
		return 0, fmt.Errorf("freq: %d coordinates and %d gradient components", len(coordsBohr), len(gradAU))
	}
	unit := make([]float64, len(coordsBohr)/3)
	for i := range unit {
		unit[i] = 1
	}
	ext, _ := externalBasis(unit, coordsBohr)
	g := append([]float64(nil), gradAU...)
	for _, e := range ext {
		d := dot(g, e)
		for i := range g {
			g[i] -= d * e[i]
		}
	}
	return math.Sqrt(dot(g, g)), nil
}
