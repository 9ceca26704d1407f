package settle

import (
	"strings"
	"testing"

	"poise/energy/units"
)

// The warning about an unchecked restricted singlet: stretched bonds and
// small HOMO–LUMO gaps (below SmallGapHartree, common practice) warn;
// open shells, unrestricted runs and ordinary molecules do not.
func TestStabilityWarning(t *testing.T) {
	// H2 at 0.74 Å (equilibrium, experimental; from memory) and 1.2 Å
	// (stretched: 1.2 / (2 × 0.31) = 1.94× the covalent radii of Cordero
	// et al. 2008 — beyond 1.8, a contact) and 0.95 Å (1.53×).
	h2 := func(rAngstrom float64) []float64 { return []float64{0, 0, 0, 0, 0, rAngstrom * units.AngstromBohr} }
	z := []int{1, 1}
	cases := []struct {
		name         string
		x            []float64
		mult         int
		unrestricted bool
		gap          float64
		want         string
	}{
		{"equilibrium, large gap", h2(0.74), 1, false, 0.5, ""},
		{"equilibrium, gap unknown", h2(0.74), 1, false, 0, ""},
		{"stretched bond", h2(0.95), 1, false, 0.3, "stretched bond"},
		{"small gap", h2(0.74), 1, false, 0.05, "small HOMO–LUMO gap"},
		{"small gap, unrestricted", h2(0.74), 1, true, 0.05, ""},
		{"small gap, triplet", h2(0.74), 3, false, 0.05, ""},
		{"contact, not a bond", h2(1.2), 1, false, 0.3, ""},
	}
	for _, c := range cases {
		got := StabilityWarning(z, c.x, c.mult, c.unrestricted, c.gap)
		if (c.want == "") != (got == "") || (c.want != "" && !strings.Contains(got, c.want)) {
			t.Errorf("%s: warning %q, want one containing %q", c.name, got, c.want)
		}
	}
}
