package xc

import (
	"math"
	"math/rand/v2"
	"testing"
)

// benchPoints returns n closed-shell and open-shell points with ρ
// log-uniform in [1e-6, 1e2] and reduced gradients in [0, 3].
func benchPoints(n int) (rho, sigma, ra, rb, saa, sab, sbb []float64) {
	rng := rand.New(rand.NewPCG(11, 13))
	for i := 0; i < n; i++ {
		r := math.Pow(10, -6+8*rng.Float64())
		g := 2 * math.Cbrt(3*math.Pi*math.Pi) * math.Pow(r, 4.0/3.0) * 3 * rng.Float64()
		rho = append(rho, r)
		sigma = append(sigma, g*g)
		z := 2*rng.Float64() - 1
		ra = append(ra, r*(1+z)/2)
		rb = append(rb, r*(1-z)/2)
		saa = append(saa, g*g*(1+z)*(1+z)/4)
		sbb = append(sbb, g*g*(1-z)*(1-z)/4)
		sab = append(sab, 0.5*g*g*(1-z*z)/4)
	}
	return
}

// BenchmarkEvalUnpolarized and BenchmarkEvalPolarized evaluate each
// method on a batch of 1e5 points (one call per iteration; ns/op ÷ 1e5 is
// the cost per point).
func BenchmarkEvalUnpolarized(b *testing.B) {
	const n = 100000
	rho, sigma, _, _, _, _, _ := benchPoints(n)
	e, v, s := make([]float64, n), make([]float64, n), make([]float64, n)
	for _, m := range []string{"lda", "blyp", "pbe", "b3lyp", "b3lyp5", "pbe0"} {
		f, _ := Lookup(m)
		b.Run(m, func(b *testing.B) {
			for b.Loop() {
				f.EvalUnpolarized(n, rho, sigma, e, v, s)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
		})
	}
}

func BenchmarkEvalPolarized(b *testing.B) {
	const n = 100000
	_, _, ra, rb, saa, sab, sbb := benchPoints(n)
	var o [6][]float64
	for k := range o {
		o[k] = make([]float64, n)
	}
	for _, m := range []string{"lda", "blyp", "pbe", "b3lyp", "b3lyp5", "pbe0"} {
		f, _ := Lookup(m)
		b.Run(m, func(b *testing.B) {
			for b.Loop() {
				f.EvalPolarized(n, ra, rb, saa, sab, sbb, o[0], o[1], o[2], o[3], o[4], o[5])
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/point")
		})
	}
}
