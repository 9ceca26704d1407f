package optimize

import (
	"context"
	"fmt"
	"math"
	"testing"
	"time"

	"poise/energy/units"
)

func TestDebugRobust(t *testing.T) {
	crit, _ := Convergence("report")
	for _, m := range robustnessSet() {
		x0 := distort(m.z, m.x, 0.2, 15)
		dmin := math.Inf(1)
		for i := range m.z { for j := i+1; j < len(m.z); j++ { dmin = math.Min(dmin, tdist(x0,i,j)*units.BohrAngstrom) } }
		s := scfSurface(t, m.z, x0, "hf", "sto-3g")
		t0 := time.Now()
		res, err := Relax(context.Background(), s, m.z, x0, Options{Criteria: crit, Progress: func(st Step) {
			if testing.Verbose() { fmt.Printf("   %s %3d E %.8f dE %+.2e maxG %.1e step %.1e trust %.3f rej %v %s\n", m.name, st.Number, st.EnergyHartree, st.ChangeHartree, st.MaxGradient, st.StepLength, st.TrustRadius, st.Rejected, st.Coordinates) }
		}})
		fmt.Printf("%-16s dmin0 %.2f  steps %d evals %d  E %.8f conv %v %s rebuilds %d  %v err %v\n", m.name, dmin, res.Steps, res.Evaluations, res.EnergyHartree, res.Converged, res.Coordinates, res.Rebuilds, time.Since(t0).Round(time.Millisecond), err)
		for _, c := range m.checks {
			var v float64
			if len(c.atoms) == 2 { v = tdist(res.XBohr, c.atoms[0], c.atoms[1]) * units.BohrAngstrom } else { v = tangle(res.XBohr, c.atoms[0], c.atoms[1], c.atoms[2]) * 180 / math.Pi }
			fmt.Printf("      %v %.4f ref %.3f  diff %+.4f\n", c.atoms, v, c.value, v-c.value)
		}
	}
}
