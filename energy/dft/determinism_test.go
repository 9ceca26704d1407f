package dft

import (
	"context"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"poise/energy/basis"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/xc"
)

// TestBuildIndependentOfThreadsAndCache checks that the energy, electron
// count, potential matrix and nuclear gradient are bit-for-bit the same
// with 1 and 2 threads and whatever part of the function values is kept
// between Builds (none, some batches, all), on the first and on a repeated
// Build (which reads the stored values).
func TestBuildIndependentOfThreadsAndCache(t *testing.T) {
	cases := []struct {
		method       string
		charge, mult int
		unrestricted bool
	}{
		{"b3lyp", 0, 1, false},
		{"lda", 0, 1, false},
		{"pbe", 1, 2, true},
	}
	for _, c := range cases {
		t.Run(fmt.Sprintf("%s/mult%d", c.method, c.mult), func(t *testing.T) {
			m := build(t, water, c.charge, c.mult)
			m.Atoms[1].Position[0] += 0.11
			fn, err := xc.Lookup(c.method)
			if err != nil {
				t.Fatal(err)
			}
			set, err := basis.Load("6-31g*")
			if err != nil {
				t.Fatal(err)
			}
			dens := testDensities(t, m, set, basis.Default, c.unrestricted)
			sh, err := set.Shells(m, basis.Default)
			if err != nil {
				t.Fatal(err)
			}
			z := make([]int, len(m.Atoms))
			pos := make([][3]float64, len(m.Atoms))
			for i, a := range m.Atoms {
				z[i], pos[i] = a.Z, a.Position
			}
			g, err := grid.New(z, pos, 1, grid.IdentityFrame(), 2)
			if err != nil {
				t.Fatal(err)
			}
			type outcome struct {
				e, nel float64
				v      [][]float64
				grad   [][3]float64
			}
			run := func(threads int, cacheBytes int64) []outcome {
				b := integral.NewBasis(sh)
				p := New(fn, g, b, threads)
				p.CacheBytes = cacheBytes
				var outs []outcome
				// Builds 1–2 store and reuse the function values; the
				// third follows ReleaseCache.
				for rep := 0; rep < 3; rep++ {
					if rep == 2 {
						if held := p.CachedBytes(); cacheBytes > 0 && (held == 0 || held > cacheBytes) {
							t.Errorf("cache %d: %d bytes stored", cacheBytes, held)
						}
						p.ReleaseCache()
						if held := p.CachedBytes(); held != 0 {
							t.Errorf("cache %d: %d bytes still stored after ReleaseCache", cacheBytes, held)
						}
					}
					v := make([][]float64, len(dens))
					for s := range v {
						v[s] = make([]float64, b.NBF*b.NBF)
					}
					e, nel, err := p.Build(context.Background(), dens, v)
					if err != nil {
						t.Fatal(err)
					}
					gr, err := p.Gradient(context.Background(), dens, len(m.Atoms))
					if err != nil {
						t.Fatal(err)
					}
					outs = append(outs, outcome{e, nel, v, gr})
				}
				return outs
			}
			ref := run(1, -1)
			for _, o := range []struct {
				threads int
				cache   int64
			}{{1, 0}, {2, -1}, {2, 0}, {2, 200 << 10}, {1, 200 << 10}} {
				got := run(o.threads, o.cache)
				for rep := range got {
					a, b := ref[rep], got[rep]
					if a.e != b.e || a.nel != b.nel {
						t.Errorf("threads %d cache %d build %d: E %.17g N %.17g, want %.17g %.17g", o.threads, o.cache, rep, b.e, b.nel, a.e, a.nel)
					}
					for s := range a.v {
						for i := range a.v[s] {
							if a.v[s][i] != b.v[s][i] {
								t.Fatalf("threads %d cache %d build %d: V[%d][%d] %.17g, want %.17g", o.threads, o.cache, rep, s, i, b.v[s][i], a.v[s][i])
							}
						}
					}
					for i := range a.grad {
						if a.grad[i] != b.grad[i] {
							t.Errorf("threads %d cache %d: gradient of atom %d %v, want %v", o.threads, o.cache, i, b.grad[i], a.grad[i])
						}
					}
				}
			}
		})
	}
}

// TestFactorDensity checks the pivoted Cholesky factor against the
// definition: for D = C Cᵀ built from r random columns, L has r columns
// and L Lᵀ reproduces D; an indefinite matrix is refused. The rank of D is
// compared with gonum's singular values.
func TestFactorDensity(t *testing.T) {
	const n = 12
	x := uint64(7)
	rnd := func() float64 {
		x = x*6364136223846793005 + 1442695040888963407
		return float64(x>>11)/float64(1<<53) - 0.5
	}
	for _, r := range []int{0, 1, 5, 12} {
		d := make([]float64, n*n)
		for k := 0; k < r; k++ {
			c := make([]float64, n)
			for i := range c {
				c[i] = rnd()
			}
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					d[i*n+j] += 2 * c[i] * c[j]
				}
			}
		}
		var svd mat.SVD
		if !svd.Factorize(mat.NewDense(n, n, append([]float64(nil), d...)), mat.SVDNone) {
			t.Fatal("gonum SVD failed")
		}
		want := 0
		for _, v := range svd.Values(nil) {
			if v > 1e-10 {
				want++
			}
		}
		f := factorDensity(d, n)
		if !f.ok || f.rank != want {
			t.Fatalf("rank-%d matrix: ok %v rank %d, gonum's singular values give %d", r, f.ok, f.rank, want)
		}
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				var s float64
				for k := 0; k < f.rank; k++ {
					s += f.l[i*f.rank+k] * f.l[j*f.rank+k]
				}
				if math.Abs(s-d[i*n+j]) > 1e-13 {
					t.Errorf("rank %d: (LLᵀ)[%d][%d] = %.15g, D = %.15g", r, i, j, s, d[i*n+j])
				}
			}
		}
	}
	ind := make([]float64, n*n)
	for i := 0; i < n; i++ {
		ind[i*n+i] = 1
	}
	ind[0*n+1], ind[1*n+0] = 2, 2 // eigenvalues 3 and −1 in the first 2×2 block
	if f := factorDensity(ind, n); f.ok {
		t.Errorf("indefinite matrix factored with rank %d", f.rank)
	}
}
