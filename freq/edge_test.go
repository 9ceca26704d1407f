package freq

import (
	"testing"

	"poise/thermo"
)

// TestLinearToleranceAgreesWithThermo: thermo treats a molecule with 3N−6
// frequencies as bent when an atom lies farther than thermo.BentLimitBohr
// from the axis; that must be where this package stops calling it linear,
// or a settle of a nearly linear molecule could give frequencies that the
// thermochemistry refuses.
func TestLinearToleranceAgreesWithThermo(t *testing.T) {
	if thermo.BentLimitBohr != LinearToleranceBohr {
		t.Fatalf("thermo.BentLimitBohr %g, freq.LinearToleranceBohr %g", thermo.BentLimitBohr, LinearToleranceBohr)
	}
}
