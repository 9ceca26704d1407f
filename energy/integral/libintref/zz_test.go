//go:build libint2

package libintref

import "testing"

func TestZZ(t *testing.T) {
	s := Shell{L: 5, Center: [3]float64{0, 0, 0.5}, Exponents: []float64{1}, Coefficients: []float64{1}}
	p := Shell{L: 0, Center: [3]float64{0, 0, 0.5}, Exponents: []float64{1}, Coefficients: []float64{1}}
	_, err := ERIDeriv1(s, p, p, p)
	t.Log(err)
	n, c := ERIAllUnique([]Shell{s, p, p})
	t.Log(n, c)
	h := Shell{L: 6, Center: [3]float64{0, 0, 0.5}, Exponents: []float64{1}, Coefficients: []float64{1}}
	defer func() { t.Log(recover()) }()
	Overlap(h, h)
}
