package optimize

import (
	"context"
	"fmt"
	"math"
	"testing"
	"time"

	gopt "gonum.org/v1/gonum/optimize"

	"poise/gradient"
)

// gonumBFGS minimizes the surface in Cartesian coordinates with gonum's
// general-purpose BFGS (with its default line search) until the largest
// gradient component is below gradTol, and returns the number of surface
// evaluations it needed. Energy and gradient come from one evaluation; a
// second request at the same point is served from a cache.
func gonumBFGS(s gradient.Surface, x0 []float64, gradTol float64, maxEvals int) (int, []float64, error) {
	start := s.Evaluations()
	var lastX []float64
	var lastP gradient.Point
	var evalErr error
	eval := func(x []float64) {
		if lastX != nil && equalSlices(lastX, x) {
			return
		}
		lastP.Gradient = make([]float64, len(x))
		if err := s.Evaluate(context.Background(), x, gradient.Request{Gradient: true}, &lastP); err != nil && evalErr == nil {
			evalErr = err
			lastP.EnergyHartree = math.Inf(1)
		}
		lastX = append(lastX[:0], x...)
	}
	p := gopt.Problem{
		Func: func(x []float64) float64 { eval(x); return lastP.EnergyHartree },
		Grad: func(g, x []float64) { eval(x); copy(g, lastP.Gradient) },
	}
	settings := &gopt.Settings{GradientThreshold: gradTol, FuncEvaluations: maxEvals, Converger: gopt.NeverTerminate{}}
	res, err := gopt.Minimize(p, x0, settings, &gopt.BFGS{})
	if evalErr != nil {
		return s.Evaluations() - start, nil, evalErr
	}
	if err != nil {
		return s.Evaluations() - start, nil, err
	}
	if res.Status != gopt.GradientThreshold {
		return s.Evaluations() - start, res.X, fmt.Errorf("gonum BFGS stopped with status %v", res.Status)
	}
	return s.Evaluations() - start, res.X, nil
}

func equalSlices(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// BenchmarkRobustnessSet relaxes each molecule of the robustness set at
// HF/STO-3G from its distorted start ("report" level) and reports the
// surface evaluations per relaxation; ns/op is the wall time of one
// relaxation. Run with -benchtime=1x.
func BenchmarkRobustnessSet(b *testing.B) {
	crit, _ := Convergence("report")
	for _, m := range robustnessSet() {
		x0 := distort(m.z, m.x, 0.2, 15)
		b.Run(m.name, func(b *testing.B) {
			evals := 0
			for i := 0; i < b.N; i++ {
				b.StopTimer()
				s := scfSurface(b, m.z, x0, "hf", "sto-3g")
				b.StartTimer()
				res, err := Relax(context.Background(), s, m.z, x0, Options{Criteria: crit})
				if err != nil {
					b.Fatal(err)
				}
				evals += res.Evaluations
			}
			b.ReportMetric(float64(evals)/float64(b.N), "evaluations/op")
		})
	}
}

// BenchmarkGonumBFGS is BenchmarkRobustnessSet with gonum's BFGS in
// Cartesian coordinates, stopped at the same largest gradient.
func BenchmarkGonumBFGS(b *testing.B) {
	crit, _ := Convergence("report")
	for _, m := range robustnessSet() {
		x0 := distort(m.z, m.x, 0.2, 15)
		b.Run(m.name, func(b *testing.B) {
			evals := 0
			for i := 0; i < b.N; i++ {
				b.StopTimer()
				s := scfSurface(b, m.z, x0, "hf", "sto-3g")
				b.StartTimer()
				t0 := time.Now()
				n, _, err := gonumBFGS(s, x0, crit.MaxGradient, 3000)
				if err != nil {
					b.Logf("%s: %v after %d evaluations, %v", m.name, err, n, time.Since(t0))
				}
				evals += n
			}
			b.ReportMetric(float64(evals)/float64(b.N), "evaluations/op")
		})
	}
}
