package optimize

import (
	"context"
	"fmt"
	"testing"

	"poise/gradient"
)

func TestTune(t *testing.T) {
	variants := map[string]tuning{}
	d := defaultTuning
	variants["a default"] = d
	v := d; v.trust0 = 0.5; variants["b trust0.5"] = v
	v = d; v.rejectShrink = 0.5; v.lowShrink = 0.5; v.shrinkOfR = true; variants["c shrinkR"] = v
	v = d; v.rejectShrink = 0.5; variants["d rej0.5"] = v
	v = d; v.rejectRise = 1e-4; variants["e rise1e-4"] = v
	v = d; v.trust0 = 0.5; v.rejectShrink = 0.5; v.lowShrink=0.5; v.shrinkOfR = true; variants["f b+c"] = v
	v = d; v.lowRatio = 0.1; v.rejectShrink = 0.5; variants["g low0.1"] = v
	v = d; v.trust0 = 0.5; v.grow = 3; variants["h grow3"] = v
	v = d; v.trust0 = 1.0; variants["i trust1"] = v
	v = d; v.trust0 = 0.5; v.highRatio = 0.5; variants["j high0.5"] = v
	type cs struct{ name string; z []int; x0 []float64; surf func() gradient.Surface }
	var cases []cs
	for _, mc := range modelCases() {
		mc := mc
		cases = append(cases, cs{"m " + mc.name, mc.z, distort(mc.z, mc.ref, 0.2, 15), func() gradient.Surface { return mc.surf() }})
	}
	for _, m := range robustnessSet() {
		switch m.name {
		case "water", "ammonia", "hydrogen cyanide", "ethanol", "formaldehyde", "carbon dioxide", "acetylene", "methane":
		default:
			continue
		}
		m := m
		x0 := distort(m.z, m.x, 0.2, 15)
		cases = append(cases, cs{m.name, m.z, x0, func() gradient.Surface { return scfSurface(t, m.z, x0, "hf", "sto-3g") }})
	}
	for _, bd := range []float64{175, 165, 160} {
	bendDegrees = bd
	fmt.Println("bend", bd)
	for _, lvl := range []string{"report"} {
		crit, _ := Convergence(lvl)
		for _, name := range []string{"b trust0.5"} {
			tu := variants[name]
			tot := 0
			line := ""
			for _, c := range cases {
				res, err := Relax(context.Background(), c.surf(), c.z, c.x0, Options{Criteria: crit, tune: &tu})
				if err != nil { t.Fatal(err) }
				tot += res.Evaluations
				line += fmt.Sprintf(" %3d", res.Evaluations)
				if name == "b trust0.5" && bd == 175 { fmt.Printf("%s ", c.name) }
			}
			fmt.Printf("%-7s %-12s total %4d :%s\n", lvl, name, tot, line)
		}
	}
	}
}
