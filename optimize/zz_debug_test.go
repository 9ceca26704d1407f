package optimize

import (
	"context"
	"fmt"
	"testing"
)

func TestDebugTrace(t *testing.T) {
	crit, _ := Convergence("report")
	for _, mc := range modelCases() {
		s := mc.surf()
		x0 := distort(mc.z, mc.ref, 0.2, 15)
		Relax(context.Background(), s, mc.z, x0, Options{Criteria: crit, MaxSteps: 200, Progress: func(st Step) {
			fmt.Printf("%s %3d E %.8e dE %+.2e maxG %.1e rmsG %.1e maxS %.1e step %.1e trust %.3f rej %v %s conv %v\n", mc.name, st.Number, st.EnergyHartree, st.ChangeHartree, st.MaxGradient, st.RMSGradient, st.MaxStep, st.StepLength, st.TrustRadius, st.Rejected, st.Coordinates, st.Converged)
		}})
	}
}
