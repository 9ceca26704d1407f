//go:build libint2

package libintref

import (
	"math"
	"testing"
)

// TestUnitShellClosedForm checks the unit-shell path of the shim against
// the closed form of the two-centre Coulomb integral of normalized s
// primitives, (a|b) = N_a N_b 2π^{5/2}/(αβ√(α+β)) F₀(αβ/(α+β)·R²) with
// F₀(t) = ½√(π/t) erf(√t) (Helgaker, Jørgensen & Olsen, "Molecular
// Electronic-Structure Theory", ch. 9, from memory).
func TestUnitShellClosedForm(t *testing.T) {
	al, be := 0.8, 1.7
	a := Shell{L: 0, Center: [3]float64{0, 0, 0}, Exponents: []float64{al}, Coefficients: []float64{1}}
	b := Shell{L: 0, Center: [3]float64{0.3, -0.4, 1.2}, Exponents: []float64{be}, Coefficients: []float64{1}}
	r2 := 0.3*0.3 + 0.4*0.4 + 1.2*1.2
	x := al * be / (al + be) * r2
	f0 := 0.5 * math.Sqrt(math.Pi/x) * math.Erf(math.Sqrt(x))
	norm := math.Pow(2*al/math.Pi, 0.75) * math.Pow(2*be/math.Pi, 0.75)
	want := norm * 2 * math.Pow(math.Pi, 2.5) / (al * be * math.Sqrt(al+be)) * f0
	if got := TwoCentre(a, b)[0]; math.Abs(got-want) > 1e-14*want {
		t.Errorf("(a|b) %.16g, closed form %.16g", got, want)
	}
}
