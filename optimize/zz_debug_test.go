package optimize

import (
	"context"
	"fmt"
	"testing"
)

func TestDebugTrace(t *testing.T) {
	strict, _ := Convergence("strict")
	for _, mc := range modelCases() {
		if mc.name != "propane" && mc.name != "peroxide" {
			continue
		}
		s := mc.surf()
		x0 := distort(mc.z, mc.ref, 0.2, 15)
		Relax(context.Background(), s, mc.z, x0, Options{Criteria: strict, MaxSteps: 200, Progress: func(st Step) {
			fmt.Printf("%s %3d E %.8e dE %+.2e maxG %.1e step %.1e trust %.3f rej %v %s\n", mc.name, st.Number, st.EnergyHartree, st.ChangeHartree, st.MaxGradient, st.StepLength, st.TrustRadius, st.Rejected, st.Coordinates)
		}})
	}
}
