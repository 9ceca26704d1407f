package thermo

import (
	"math"
	"strings"
	"testing"

	"poise/energy/units"
)

// bentCO2 is O=C=O with bonds of 1.160 Å (G. Herzberg, Molecular Spectra
// and Molecular Structure II, 1945; from memory) and the angle at C in
// degrees.
func bentCO2(angleDeg float64) Input {
	t := angleDeg * math.Pi / 180
	r := 1.160
	return Input{Atoms: atoms(site{"O", r, 0, 0}, site{"C", 0, 0, 0}, site{"O", r * math.Cos(t), r * math.Sin(t), 0})}
}

// TestNearlyLinearFrequencyCount: a CO2 bent by 1° lies within the default
// symmetry tolerance (0.01 Å) of a line. With the 3N−5 = 4 frequencies of
// a linear molecule it is D∞h; with the 3N−6 = 3 that the Hessian analysis
// gives for a molecule bent by more than its 1e-3 bohr it is treated as
// bent, C2v (σ = 2, as for a bent AB2: Herzberg II, from memory), with a
// warning, instead of failing at the end of a settle. A straight molecule
// or one bent by less than the Hessian analysis's tolerance with 3N−6
// frequencies is a mistake in the count.
func TestNearlyLinearFrequencyCount(t *testing.T) {
	for _, c := range []struct {
		name   string
		in     Input
		freq   []float64
		symbol string
		sigma  int
		rotor  RotorType
		warn   bool
		err    string
	}{
		{"179° with 4", bentCO2(179), []float64{667, 667, 1333, 2349}, "D∞h", 2, LinearRotor, false, ""},
		{"179° with 3", bentCO2(179), []float64{667, 1333, 2349}, "C2v", 2, ProlateTop, true, ""},
		{"180° with 3", bentCO2(180), []float64{667, 1333, 2349}, "", 0, 0, false, "linear within the symmetry tolerance"},
		// Bent by 0.02°, the carbon is 1.5e-4 Å (2.8e-4 bohr) off the
		// axis: linear for the Hessian analysis too.
		{"179.98° with 3", bentCO2(179.98), []float64{667, 1333, 2349}, "", 0, 0, false, "linear within the symmetry tolerance"},
	} {
		for _, sym := range []bool{false, true} {
			in := c.in
			in.FrequenciesCm1 = c.freq
			m, err := NewModel(in, Options{Symmetrize: sym})
			if c.err != "" {
				if err == nil || !strings.Contains(err.Error(), c.err) {
					t.Errorf("%s (symmetrize %v): error %v, want %q", c.name, sym, err, c.err)
				}
				continue
			}
			if err != nil {
				t.Fatalf("%s (symmetrize %v): %v", c.name, sym, err)
			}
			warned := false
			for _, w := range m.Warnings {
				warned = warned || strings.Contains(w, "treated as bent")
			}
			if m.PointGroup.Symbol != c.symbol || m.SymmetryNumber != c.sigma || m.Rotor.Type != c.rotor || warned != c.warn {
				t.Errorf("%s (symmetrize %v): %s σ=%d %s, warned %v; want %s σ=%d %s, %v", c.name, sym,
					m.PointGroup.Symbol, m.SymmetryNumber, m.Rotor.Type, warned, c.symbol, c.sigma, c.rotor, c.warn)
			}
		}
	}
	// The off-axis distance the rule uses, from the geometry: in the 179°
	// CO2 the O–O midpoint is r·cos(89.5°) from C, the axis passes through
	// the centre of mass on that line, and the carbon is farthest from it.
	in := bentCO2(179)
	mid := 1.160 * math.Cos(89.5*math.Pi/180) * units.AngstromBohr
	mc, mo := in.Atoms[1].Mass, in.Atoms[0].Mass
	want := mid * 2 * mo / (2*mo + mc) // carbon's distance from the axis
	if got := offAxisBohr(in.Atoms); math.Abs(got-want) > 1e-3*want {
		t.Errorf("off-axis distance %.6g bohr, want %.6g", got, want)
	}
}
