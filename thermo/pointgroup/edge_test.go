package pointgroup

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/units"
)

// bentTriatomic places a–b–c with bonds r1, r2 (Å) and the angle at b in
// degrees.
func bentTriatomic(a, b, c string, r1, r2, angleDeg float64) []site {
	t := deg(angleDeg)
	return []site{{a, r1, 0, 0}, {b, 0, 0, 0}, {c, r2 * math.Cos(t), r2 * math.Sin(t), 0}}
}

// TestNearlyLinear checks molecules bent by a degree or less, within the
// default tolerance of a line: they are linear, and the inversion centre
// is decided by the positions along the axis. CO2 and acetylene are D∞h
// (σ = 2), HCN and an O–C–O with bonds 0.02 Å apart are C∞v (σ = 1)
// (G. Herzberg, Molecular Spectra and Molecular Structure II, 1945; from
// memory). A CO2 bent by 1° has its carbon 0.007 Å off the O–O axis, so
// inversion moves it 0.015 Å: more than the 0.01 Å tolerance if the
// offset across the axis counted. An HCN bent by 1° has its hydrogen
// 0.018 Å off the axis: bent (Cs).
func TestNearlyLinear(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	hcch := func(bendDeg float64) []site {
		b := deg(bendDeg)
		return []site{{"H", -0.6 - 1.06*math.Cos(b), 1.06 * math.Sin(b), 0}, {"C", -0.6, 0, 0}, {"C", 0.6, 0, 0}, {"H", 0.6 + 1.06*math.Cos(b), -1.06 * math.Sin(b), 0}}
	}
	for _, c := range []struct {
		name   string
		sites  []site
		symbol string
		sigma  int
	}{
		{"CO2 179°", bentTriatomic("O", "C", "O", 1.16, 1.16, 179), "D∞h", 2},
		{"CO2 179.9°", bentTriatomic("O", "C", "O", 1.16, 1.16, 179.9), "D∞h", 2},
		{"HCCH trans-bent 0.5°", hcch(0.5), "D∞h", 2},
		{"HCN 179.5°", bentTriatomic("H", "C", "N", 1.07, 1.15, 179.5), "C∞v", 1},
		{"HCN 179°", bentTriatomic("H", "C", "N", 1.07, 1.15, 179), "Cs", 1},
		{"OCO unequal 179°", bentTriatomic("O", "C", "O", 1.16, 1.18, 179), "C∞v", 1},
		{"CO2 175°", bentTriatomic("O", "C", "O", 1.16, 1.16, 175), "C2v", 2},
	} {
		t.Run(c.name, func(t *testing.T) {
			r, tr := randomMotion(rng)
			atoms := moved(toAtoms(c.sites), r, tr)
			got, err := Detect(atoms, 0)
			if err != nil {
				t.Fatal(err)
			}
			if got.Symbol != c.symbol || got.SymmetryNumber != c.sigma {
				t.Fatalf("got %s σ=%d (inversion %v), want %s σ=%d", got.Symbol, got.SymmetryNumber, got.Inversion, c.symbol, c.sigma)
			}
			if !got.Linear {
				return
			}
			sym, res, err := Symmetrize(atoms, 0)
			if err != nil {
				t.Fatal(err)
			}
			if res.Symbol != c.symbol {
				t.Fatalf("symmetrized to %s, want %s", res.Symbol, c.symbol)
			}
			// Straight to rounding, and for D∞h both halves equal.
			tight, err := Detect(sym, 1e-8)
			if err != nil || tight.Symbol != c.symbol {
				t.Fatalf("symmetrized geometry at 1e-8 bohr: %v %v", tight, err)
			}
			for i := range sym {
				if d := norm(sub(sym[i].Position, atoms[i].Position)); d > 0.02*units.AngstromBohr {
					t.Fatalf("atom %d moved by %.3g Å", i+1, d*units.BohrAngstrom)
				}
			}
		})
	}
}
