package optimize

import (
	"context"
	"fmt"
	"math"
	"poise/gradient"
	"testing"
)

type harmSurf struct {
	n     int
	terms []Coordinate
	k     []float64
	q0    []float64
	evals int
}

func (h *harmSurf) NumAtoms() int    { return h.n }
func (h *harmSurf) Evaluations() int { return h.evals }
func (h *harmSurf) energy(x []float64) float64 {
	e := 0.0
	for i, c := range h.terms {
		d := c.Value(x) - h.q0[i]
		e += 0.5 * h.k[i] * d * d
	}
	return e
}

func TestDebugHarmonic(t *testing.T) {
	mc := modelCases()[2] // methane
	var terms []Coordinate
	var ks, q0 []float64
	for i := 1; i <= 4; i++ {
		terms = append(terms, Coordinate{Kind: Bond, Atoms: [4]int{0, i}})
		ks = append(ks, 0.5)
	}
	for i := 1; i <= 4; i++ {
		for j := i + 1; j <= 4; j++ {
			terms = append(terms, Coordinate{Kind: Angle, Atoms: [4]int{i, 0, j}})
			ks = append(ks, 0.15)
		}
	}
	for _, c := range terms {
		q0 = append(q0, c.Value(mc.ref))
	}
	hs := &harmSurf{n: 5, terms: terms, k: ks, q0: q0}
	surf := &modelWrap{hs}
	x0 := distort(mc.z, mc.ref, 0.2, 15)
	crit, _ := Convergence("strict")
	for _, exact := range []bool{false, true} {
		tu := defaultTuning
		if exact {
			tu.hess = func(p Coordinate) float64 {
				if p.Kind == Bond {
					return 0.5
				}
				return 0.15
			}
		}
		res, err := Relax(context.Background(), surf, mc.z, x0, Options{Criteria: crit, tune: &tu, Progress: func(st Step) {
			fmt.Printf("  %3d E %.3e maxG %.1e step %.1e trust %.2f\n", st.Number, st.EnergyHartree, st.MaxGradient, st.StepLength, st.TrustRadius)
		}})
		fmt.Println(exact, res.Steps, err, math.NaN())
	}
}

type modelWrap struct{ h *harmSurf }

func (m *modelWrap) NumAtoms() int    { return m.h.n }
func (m *modelWrap) Evaluations() int { return m.h.evals }
func (m *modelWrap) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	m.h.evals++
	out.EnergyHartree = m.h.energy(x)
	if out.Gradient == nil {
		out.Gradient = make([]float64, len(x))
	}
	const h = 1e-3
	y := append([]float64(nil), x...)
	for i := range x {
		var e [4]float64
		for s, d := range []float64{-2 * h, -h, h, 2 * h} {
			y[i] = x[i] + d
			e[s] = m.h.energy(y)
		}
		y[i] = x[i]
		out.Gradient[i] = (e[0] - 8*e[1] + 8*e[2] - e[3]) / (12 * h)
	}
	return nil
}
