package optimize

import (
	"fmt"
	"strings"
)

// Criteria are the convergence thresholds of a relaxation. A geometry is
// converged when all five hold at once. Gradients are of the energy with
// respect to the Cartesian coordinates of the atoms that may move, with
// the components along rigid translations and rotations and along held
// coordinates removed. Steps are Cartesian displacements, and both the
// last step and the next one must be small: the next step is the way to
// the minimum of the quadratic model (within the trust radius), so a small
// one says the geometry is close to the minimum, not just that it stopped
// moving. The energy change is that of the last step taken (for the
// starting geometry, the one the model predicts).
type Criteria struct {
	MaxGradient  float64 // largest gradient component, Eh/bohr
	RMSGradient  float64 // root-mean-square gradient component, Eh/bohr
	MaxStep      float64 // largest displacement component, bohr
	RMSStep      float64 // root-mean-square displacement component, bohr
	EnergyChange float64 // |energy change| of the last step, Eh
}

// Named convergence levels (see the package documentation for their
// purposes).
var presets = []struct {
	name string
	c    Criteria
}{
	{"draft", Criteria{MaxGradient: 2.5e-3, RMSGradient: 1.7e-3, MaxStep: 1.9e-2, RMSStep: 1.3e-2, EnergyChange: 1e-5}},
	{"report", Criteria{MaxGradient: 3e-4, RMSGradient: 2e-4, MaxStep: 1.9e-3, RMSStep: 1.3e-3, EnergyChange: 1e-6}},
	{"strict", Criteria{MaxGradient: 1e-5, RMSGradient: 7e-6, MaxStep: 4e-5, RMSStep: 3e-5, EnergyChange: 1e-8}},
}

// DefaultConvergence is the name of the default convergence level.
const DefaultConvergence = "report"

// ConvergenceNames lists the named convergence levels, loosest first.
func ConvergenceNames() []string {
	names := make([]string, len(presets))
	for i, p := range presets {
		names[i] = p.name
	}
	return names
}

// Convergence returns the criteria of a named level: "draft", "report" or
// "strict" (case-insensitive).
func Convergence(name string) (Criteria, error) {
	n := strings.ToLower(strings.TrimSpace(name))
	for _, p := range presets {
		if p.name == n {
			return p.c, nil
		}
	}
	return Criteria{}, fmt.Errorf("unknown convergence level %q: choose %s", name, strings.Join(ConvergenceNames(), ", "))
}

// met reports whether the measured values satisfy c.
func (c Criteria) met(maxG, rmsG, maxS, rmsS, dE float64) bool {
	if dE < 0 {
		dE = -dE
	}
	return maxG <= c.MaxGradient && rmsG <= c.RMSGradient && maxS <= c.MaxStep && rmsS <= c.RMSStep && dE <= c.EnergyChange
}

func (c Criteria) valid() bool {
	return c.MaxGradient > 0 && c.RMSGradient > 0 && c.MaxStep > 0 && c.RMSStep > 0 && c.EnergyChange > 0
}
