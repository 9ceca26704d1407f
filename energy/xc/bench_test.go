package xc

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/grid"
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

// slaterShell is the spherically averaged density of nel electrons in a
// Slater-type shell of principal quantum number n (1 or 2) and exponent
// zeta: ρ(r) = nel·N²r^(2n−2)e^(−2ζr)/(4π).
type slaterShell struct {
	n         int
	nel, zeta float64
}

// density returns ρ(r) and dρ/dr of the shell.
func (s slaterShell) density(r float64) (rho, drho float64) {
	ex := math.Exp(-2 * s.zeta * r)
	if s.n == 1 {
		rho = s.nel * s.zeta * s.zeta * s.zeta / math.Pi * ex
		return rho, -2 * s.zeta * rho
	}
	// N² = (2ζ)^5/4! for n = 2.
	c := s.nel * math.Pow(2*s.zeta, 5) / 24 / (4 * math.Pi)
	return c * r * r * ex, c * (2*r - 2*s.zeta*r*r) * ex
}

// waterGridPoints returns ρ and σ = |∇ρ|² of a model water density on the
// default molecular grid: a superposition of spherical atoms made of
// Slater-type shells with Slater's screening-rule exponents (J. C. Slater,
// Phys. Rev. 36, 57 (1930): O 1s 7.70, 2sp 2.275; H 1s 1.0 — from memory).
// Like a real SCF density on the grid, most points lie far from the
// nuclei where ρ is tiny. Geometry: O–H 0.958 Å, ∠HOH 104.5° (common
// practice for a water benchmark), in bohr.
func waterGridPoints(b *testing.B) (rho, sigma []float64) {
	z := []int{8, 1, 1}
	pos := [][3]float64{{0, 0, 0}, {0, 1.4305, 1.1075}, {0, -1.4305, 1.1075}}
	atoms := [][]slaterShell{
		{{1, 2, 7.70}, {2, 6, 2.275}},
		{{1, 1, 1.0}},
		{{1, 1, 1.0}},
	}
	g, err := grid.New(z, pos, grid.DefaultLevel, grid.IdentityFrame(), 1)
	if err != nil {
		b.Fatal(err)
	}
	n := g.NumPoints()
	rho, sigma = make([]float64, n), make([]float64, n)
	for i := 0; i < n; i++ {
		var r0, gx, gy, gz float64
		for a, shells := range atoms {
			dx, dy, dz := g.X[i]-pos[a][0], g.Y[i]-pos[a][1], g.Z[i]-pos[a][2]
			d := math.Sqrt(dx*dx + dy*dy + dz*dz)
			for _, s := range shells {
				v, dv := s.density(d)
				r0 += v
				if d > 0 {
					gx += dv * dx / d
					gy += dv * dy / d
					gz += dv * dz / d
				}
			}
		}
		rho[i] = r0
		sigma[i] = gx*gx + gy*gy + gz*gz
	}
	return rho, sigma
}

// BenchmarkWaterGrid evaluates each method on the model water density at
// all points of the default grid (one call per iteration).
func BenchmarkWaterGrid(b *testing.B) {
	rho, sigma := waterGridPoints(b)
	n := len(rho)
	e, v, s := make([]float64, n), make([]float64, n), make([]float64, n)
	for _, m := range []string{"lda", "blyp", "pbe", "b3lyp", "pbe0"} {
		f, _ := Lookup(m)
		b.Run(m, func(b *testing.B) {
			for b.Loop() {
				f.EvalUnpolarized(n, rho, sigma, e, v, s)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/point")
		})
	}
}
