package optimize

import (
	"context"
	"fmt"
	"testing"
)

func TestDebugSCF(t *testing.T) {
	crit, _ := Convergence("strict")
	for _, m := range robustnessSet() {
		if m.name != "water" && m.name != "hydrogen cyanide" && m.name != "formaldehyde" {
			continue
		}
		x0 := distort(m.z, m.x, 0.2, 15)
		s := scfSurface(t, m.z, x0, "hf", "sto-3g")
		res, _ := Relax(context.Background(), s, m.z, x0, Options{Criteria: crit, Progress: func(st Step) {
			fmt.Printf("%s %3d E %.8f dE %+.2e maxG %.1e maxS %.1e step %.1e trust %.3f rej %v %s conv %v\n", m.name, st.Number, st.EnergyHartree, st.ChangeHartree, st.MaxGradient, st.MaxStep, st.StepLength, st.TrustRadius, st.Rejected, st.Coordinates, st.Converged)
		}})
		fmt.Println(res.Rebuilds, res.Coordinates)
	}
}
