package optimize

import (
	"context"
	"fmt"
	"testing"
)

func TestDebugWaterModel(t *testing.T) {
	crit, _ := Convergence("strict")
	mc := modelCases()[0]
	for _, v := range []int{0, 1} {
		tu := defaultTuning
		if v == 1 {
			tu.hess = func(p Coordinate) float64 {
				if p.Kind == Bond { return 0.576 }
				return 0.16
			}
		}
		Relax(context.Background(), mc.surf(), mc.z, distort(mc.z, mc.ref, 0.2, 15), Options{Criteria: crit, tune: &tu, Progress: func(st Step) {
			fmt.Printf("%d %3d E %.3e maxG %.1e step %.1e trust %.3f rej %v\n", v, st.Number, st.EnergyHartree, st.MaxGradient, st.StepLength, st.TrustRadius, st.Rejected)
		}})
	}
}
