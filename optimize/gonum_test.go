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

// gradientOnly are criteria that stop, like gonum's GradientThreshold, as
// soon as the largest gradient component is below maxGradient.
func gradientOnly(maxGradient float64) Criteria {
	return Criteria{MaxGradient: maxGradient, RMSGradient: 1, MaxStep: 1, RMSStep: 1, EnergyChange: 1}
}

// comparisonCase is one surface and start for the comparison.
type comparisonCase struct {
	name string
	z    []int
	x0   []float64
	surf func() gradient.Surface
}

// TestFewerGradientsThanGonum relaxes the model surfaces and three small
// molecules at HF/STO-3G from distorted starts at the "report" level, and
// gonum's general-purpose BFGS in Cartesian coordinates from the same starts
// to the same largest gradient. poise must need at most half the
// evaluations on average.
func TestFewerGradientsThanGonum(t *testing.T) {
	var cases []comparisonCase
	for _, mc := range modelCases() {
		mc := mc
		cases = append(cases, comparisonCase{"model " + mc.name, mc.z, distort(mc.z, mc.ref, 0.2, 15), func() gradient.Surface { return mc.surf() }})
	}
	if !testing.Short() {
		for _, m := range robustnessSet() {
			switch m.name {
			case "benzene", "n-butane":
				continue
			}
			m := m
			x0 := distort(m.z, m.x, 0.2, 15)
			cases = append(cases, comparisonCase{"HF/STO-3G " + m.name, m.z, x0, func() gradient.Surface { return scfSurface(t, m.z, x0, "hf", "sto-3g") }})
		}
	}
	for _, level := range []string{"report", "strict"} {
		crit, _ := Convergence(level)
		sum := 0.0
		totalP, totalG := 0, 0
		for _, c := range cases {
			full, err := Relax(context.Background(), c.surf(), c.z, c.x0, Options{Criteria: crit})
			if err != nil {
				t.Fatalf("%s: poise: %v", c.name, err)
			}
			res, err := Relax(context.Background(), c.surf(), c.z, c.x0, Options{Criteria: gradientOnly(crit.MaxGradient)})
			if err != nil {
				t.Fatalf("%s: poise: %v", c.name, err)
			}
			ng, _, err := gonumBFGS(c.surf(), c.x0, crit.MaxGradient, 2000)
			if err != nil {
				t.Fatalf("%s: gonum: %v", c.name, err)
			}
			ratio := float64(res.Evaluations) / float64(ng)
			sum += ratio
			totalP += res.Evaluations
			totalG += ng
			t.Logf("%-28s poise %3d (all criteria %3d)  gonum BFGS %4d  ratio %.2f", c.name, res.Evaluations, full.Evaluations, ng, ratio)
		}
		mean := sum / float64(len(cases))
		t.Logf("mean ratio %.2f; totals %d / %d", mean, totalP, totalG)
		if mean > 0.5 {
			t.Errorf("poise needs %.2f of gonum BFGS's evaluations on average, want at most 0.5", mean)
		}
	}
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
