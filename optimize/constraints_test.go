package optimize

import (
	"context"
	"math"
	"strings"
	"testing"

	"poise/energy/units"
)

// The model surfaces are sums of terms in separate internal coordinates,
// so with one coordinate held the constrained minimum has every other term
// at its own minimum: known exactly.

func TestFrozenAtomsDoNotMove(t *testing.T) {
	mc := modelCases()[6] // propane
	x0 := distort(mc.z, mc.ref, 0.2, 15)
	frozen := []int{0, 3, 8}
	res, err := Relax(context.Background(), mc.surf(), mc.z, x0, Options{Freeze: frozen})
	if err != nil {
		t.Fatal(err)
	}
	for _, a := range frozen {
		for k := 0; k < 3; k++ {
			if res.XBohr[3*a+k] != x0[3*a+k] {
				t.Errorf("frozen atom %d moved: coordinate %c %v → %v", a+1, "xyz"[k], x0[3*a+k], res.XBohr[3*a+k])
			}
		}
	}
	// The other atoms relaxed: the gradient on them is below the report
	// threshold.
	crit, _ := Convergence("report")
	for a := 0; a < len(mc.z); a++ {
		if a == 0 || a == 3 || a == 8 {
			continue
		}
		for k := 0; k < 3; k++ {
			if g := math.Abs(res.GradientHartreeBohr[3*a+k]); g > crit.MaxGradient {
				t.Errorf("gradient on free atom %d is %.2e", a+1, g)
			}
		}
	}
	t.Logf("%d steps, energy %.3e (start distorted, three atoms frozen)", res.Steps, res.EnergyHartree)
}

func TestHeldCoordinates(t *testing.T) {
	strict, _ := Convergence("strict")
	water, peroxide := modelCases()[0], modelCases()[4]
	cases := []struct {
		name  string
		mc    modelCase
		start []zrow
		hold  Coordinate
		want  float64 // held value (Å or degrees)
	}{
		{"water angle 120°", water, []zrow{{z: 8}, {z: 1, a: 0, r: 1.1}, {z: 1, a: 0, r: 0.85, b: 1, theta: 120}},
			Coordinate{Kind: Angle, Atoms: [4]int{1, 0, 2}}, 120},
		{"peroxide O–O 1.60 Å", peroxide, []zrow{{z: 1}, {z: 8, a: 0, r: 1.1}, {z: 8, a: 1, r: 1.60, b: 0, theta: 90},
			{z: 1, a: 2, r: 0.85, b: 1, theta: 115, c: 0, phi: 80}},
			Coordinate{Kind: Bond, Atoms: [4]int{1, 2}}, 1.60},
		{"peroxide dihedral 180°", peroxide, []zrow{{z: 1}, {z: 8, a: 0, r: 1.1}, {z: 8, a: 1, r: 1.35, b: 0, theta: 90},
			{z: 1, a: 2, r: 0.85, b: 1, theta: 115, c: 0, phi: 180}},
			Coordinate{Kind: Dihedral, Atoms: [4]int{0, 1, 2, 3}}, 180},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			z, x0 := build(c.start)
			res, err := Relax(context.Background(), c.mc.surf(), z, x0, Options{Criteria: strict, Hold: []Coordinate{c.hold}})
			if err != nil {
				t.Fatal(err)
			}
			got := c.hold.Value(res.XBohr)
			switch c.hold.Kind {
			case Bond:
				if d := math.Abs(got*units.BohrAngstrom - c.want); d > 1e-4 {
					t.Errorf("held distance %.6f Å, started at %.6f", got*units.BohrAngstrom, c.want)
				}
			default:
				if d := math.Abs(wrapAngle(got-c.want*math.Pi/180)) * 180 / math.Pi; d > 0.01 {
					t.Errorf("held angle %.4f°, started at %.4f°", got*180/math.Pi, c.want)
				}
			}
			// Every other term at its minimum.
			s := c.mc.surf()
			for _, m := range s.morse {
				if sameAtoms(c.hold, Coordinate{Kind: Bond, Atoms: [4]int{m.i, m.j}}) {
					continue
				}
				if d := math.Abs(tdist(res.XBohr, m.i, m.j)-m.reBohr) * units.BohrAngstrom; d > 1e-4 {
					t.Errorf("bond %d–%d is %.2e Å from its minimum", m.i+1, m.j+1, d)
				}
			}
			for _, a := range s.angles {
				if sameAtoms(c.hold, Coordinate{Kind: Angle, Atoms: [4]int{a.i, a.j, a.k}}) {
					continue
				}
				if d := math.Abs(tangle(res.XBohr, a.i, a.j, a.k)-a.theta0) * 180 / math.Pi; d > 0.01 {
					t.Errorf("angle %d–%d–%d is %.2e° from its minimum", a.i+1, a.j+1, a.k+1, d)
				}
			}
			t.Logf("%d steps, %d evaluations", res.Steps, res.Evaluations)
		})
	}
}

// TestHoldNonBonded holds a distance that is not a bond (H···H in water),
// together with a frozen atom.
func TestHoldNonBonded(t *testing.T) {
	mc := modelCases()[0]
	x0 := distort(mc.z, mc.ref, 0.2, 15)
	hold := Coordinate{Kind: Bond, Atoms: [4]int{1, 2}}
	want := hold.Value(x0)
	res, err := Relax(context.Background(), mc.surf(), mc.z, x0, Options{Hold: []Coordinate{hold}, Freeze: []int{1}})
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(hold.Value(res.XBohr)-want) * units.BohrAngstrom; d > 1e-4 {
		t.Errorf("held H···H distance moved by %.2e Å", d)
	}
	for k := 0; k < 3; k++ {
		if res.XBohr[3+k] != x0[3+k] {
			t.Errorf("frozen atom 2 moved")
		}
	}
	if !res.Converged {
		t.Error("not converged")
	}
}

func TestConstraintErrors(t *testing.T) {
	mc := modelCases()[3] // linear O–C–O
	x := mc.ref
	for _, c := range []struct {
		opt Options
		msg string
	}{
		{Options{Hold: []Coordinate{{Kind: Angle, Atoms: [4]int{0, 1, 2}}}}, "linear"},
		{Options{Hold: []Coordinate{{Kind: Bond, Atoms: [4]int{0, 5}}}}, "does not exist"},
		{Options{Hold: []Coordinate{{Kind: Bond, Atoms: [4]int{0, 1}}, {Kind: Bond, Atoms: [4]int{1, 0}}}}, "twice"},
		{Options{Hold: []Coordinate{{Kind: LinearBend, Atoms: [4]int{0, 1, 2}}}}, "only bonds"},
		{Options{Freeze: []int{3}}, "does not exist"},
		{Options{MaxSteps: -1}, "negative"},
	} {
		_, err := Relax(context.Background(), mc.surf(), mc.z, x, c.opt)
		if err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%+v: error %v, want one mentioning %q", c.opt, err, c.msg)
		}
	}
}

// TestAllFrozen: nothing can move; the start is the answer.
func TestAllFrozen(t *testing.T) {
	mc := modelCases()[0]
	x0 := distort(mc.z, mc.ref, 0.2, 15)
	res, err := Relax(context.Background(), mc.surf(), mc.z, x0, Options{Freeze: []int{0, 1, 2}})
	if err != nil || !res.Converged || res.Evaluations != 1 {
		t.Fatalf("result %+v, error %v", res, err)
	}
}
