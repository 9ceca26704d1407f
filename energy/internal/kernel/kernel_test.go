package kernel

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// naiveDots is the textbook triple loop for c = A·Bᵀ, with the error bound
// scale Σ_t |a_it b_jt| per element.
func naiveDots(a []float64, na int, b []float64, nb int, k int) (c, scale []float64) {
	c = make([]float64, na*nb)
	scale = make([]float64, na*nb)
	for i := 0; i < na; i++ {
		for j := 0; j < nb; j++ {
			var s, abs float64
			for t := 0; t < k; t++ {
				s += a[i*k+t] * b[j*k+t]
				abs += math.Abs(a[i*k+t] * b[j*k+t])
			}
			c[i*nb+j], scale[i*nb+j] = s, abs
		}
	}
	return c, scale
}

func randomSlice(r *rand.Rand, n int) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = 2*r.Float64() - 1
	}
	return s
}

// dotShapes are the shapes the kernel tests run: every tail of the 3×4
// tiles and of the four-lane contraction (0…13 each), and some larger ones
// like those of a batch (points × functions).
func dotShapes() [][3]int {
	var shapes [][3]int
	for na := 0; na <= 13; na++ {
		for nb := 0; nb <= 13; nb++ {
			for k := 0; k <= 13; k++ {
				shapes = append(shapes, [3]int{na, nb, k})
			}
		}
	}
	for _, s := range [][3]int{
		{60, 128, 60}, {128, 21, 61}, {61, 127, 21}, {97, 97, 255},
		{256, 5, 23}, {23, 256, 5}, {1, 300, 129}, {37, 1, 130}, {62, 63, 131},
	} {
		shapes = append(shapes, s)
	}
	return shapes
}

// TestDotProductsKernels compares DotProducts (the AVX2+FMA kernel where
// the processor has it) and the portable dotProductsGo with a naive triple
// loop on random inputs, over all tail shapes and with a leading dimension
// larger than nb, and checks that the padding of c is left alone.
func TestDotProductsKernels(t *testing.T) {
	t.Logf("vector kernels in use: %v", simd)
	r := rand.New(rand.NewPCG(1, 2))
	const pad = 3
	const sentinel = 12345.0
	kernels := []struct {
		name string
		f    func(a []float64, na int, b []float64, nb int, k int, c []float64, ldc int)
	}{{"dispatch", DotProducts}, {"go", dotProductsGo}}
	for _, sh := range dotShapes() {
		na, nb, k := sh[0], sh[1], sh[2]
		a := randomSlice(r, na*k)
		b := randomSlice(r, nb*k)
		want, scale := naiveDots(a, na, b, nb, k)
		for _, ldc := range []int{nb, nb + pad} {
			results := make([][]float64, len(kernels))
			for ki, kn := range kernels {
				c := make([]float64, na*ldc+pad)
				for i := range c {
					c[i] = sentinel
				}
				kn.f(a, na, b, nb, k, c, ldc)
				for i := 0; i < na; i++ {
					for j := 0; j < ldc; j++ {
						got := c[i*ldc+j]
						if j >= nb {
							if got != sentinel {
								t.Fatalf("%s %v ldc=%d: padding c[%d][%d] changed to %g", kn.name, sh, ldc, i, j, got)
							}
							continue
						}
						w := want[i*nb+j]
						if d := math.Abs(got - w); d > 1e-13*scale[i*nb+j] || (scale[i*nb+j] == 0 && got != 0) {
							t.Fatalf("%s %v ldc=%d: c[%d][%d] = %.17g, want %.17g (scale %g)", kn.name, sh, ldc, i, j, got, w, scale[i*nb+j])
						}
					}
				}
				for _, x := range c[na*ldc:] {
					if x != sentinel {
						t.Fatalf("%s %v ldc=%d: wrote past the last row", kn.name, sh, ldc)
					}
				}
				results[ki] = c
			}
			for i := range results[0] {
				if d := math.Abs(results[0][i] - results[1][i]); d > 1e-13*math.Max(1, math.Abs(results[1][i])) && i%ldc < nb {
					t.Fatalf("%v: kernels differ at %d: %g vs %g", sh, i, results[0][i], results[1][i])
				}
			}
		}
	}
}

// TestDotProductsElementwise checks that every element of c is the same,
// bit for bit, whether it is computed in a full product or alone (one row
// of a, one row of b): the result depends only on the two rows, never on
// the tile that held the element, so batches of any shape agree.
func TestDotProductsElementwise(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for _, sh := range [][3]int{{7, 9, 13}, {13, 11, 6}, {5, 8, 61}, {12, 12, 4}} {
		na, nb, k := sh[0], sh[1], sh[2]
		a := randomSlice(r, na*k)
		b := randomSlice(r, nb*k)
		full := make([]float64, na*nb)
		DotProducts(a, na, b, nb, k, full, nb)
		for i := 0; i < na; i++ {
			for j := 0; j < nb; j++ {
				one := make([]float64, 1)
				DotProducts(a[i*k:i*k+k], 1, b[j*k:j*k+k], 1, k, one, 1)
				if one[0] != full[i*nb+j] {
					t.Fatalf("%v: c[%d][%d] = %.17g in the full product, %.17g alone", sh, i, j, full[i*nb+j], one[0])
				}
			}
		}
	}
}

// TestColumnDotsKernels compares ColumnDots with columnDotsGo and a naive
// loop for every tail of the 16- and 4-point blocks.
func TestColumnDotsKernels(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for m := 0; m <= 7; m++ {
		for np := 0; np <= 41; np++ {
			x := randomSlice(r, m*np)
			y := randomSlice(r, m*np)
			for name, f := range map[string]func(x, y []float64, m, np int, out []float64){"dispatch": ColumnDots, "go": columnDotsGo} {
				out := make([]float64, np+2)
				for i := range out {
					out[i] = 7 // ColumnDots overwrites, never accumulates
				}
				f(x, y, m, np, out)
				for p := 0; p < np; p++ {
					var s, abs float64
					for a := 0; a < m; a++ {
						s += x[a*np+p] * y[a*np+p]
						abs += math.Abs(x[a*np+p] * y[a*np+p])
					}
					if d := math.Abs(out[p] - s); d > 1e-13*abs || (abs == 0 && out[p] != 0) {
						t.Fatalf("%s m=%d np=%d: out[%d] = %.17g, want %.17g", name, m, np, p, out[p], s)
					}
				}
				if out[np] != 7 || out[np+1] != 7 {
					t.Fatalf("%s m=%d np=%d: wrote past np", name, m, np)
				}
			}
		}
	}
}

// TestMatMulKernels compares MatMul (the AVX2+FMA kernel where the
// processor has it) and the portable matMulGo with a naive triple loop on
// random inputs, for every tail of the 4×12 tiles and the masked columns,
// checks that nothing past c is written, and that every element equals,
// bit for bit, the same element computed alone.
func TestMatMulKernels(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 10))
	var shapes [][3]int
	for m := 0; m <= 9; m++ {
		for n := 0; n <= 29; n++ {
			for k := 0; k <= 6; k++ {
				shapes = append(shapes, [3]int{m, n, k})
			}
		}
	}
	shapes = append(shapes, [3]int{21, 128, 60}, [3]int{60, 255, 21}, [3]int{61, 256, 61}, [3]int{5, 131, 97})
	const sentinel = -999.0
	for _, sh := range shapes {
		m, n, k := sh[0], sh[1], sh[2]
		a := randomSlice(r, m*k)
		b := randomSlice(r, k*n)
		for name, f := range map[string]func(a []float64, m int, b []float64, k, n int, c []float64){"dispatch": MatMul, "go": matMulGo} {
			c := make([]float64, m*n+2)
			for i := range c {
				c[i] = sentinel
			}
			f(a, m, b, k, n, c)
			for i := 0; i < m; i++ {
				for j := 0; j < n; j++ {
					var s, abs float64
					for q := 0; q < k; q++ {
						s += a[i*k+q] * b[q*n+j]
						abs += math.Abs(a[i*k+q] * b[q*n+j])
					}
					got := c[i*n+j]
					if d := math.Abs(got - s); d > 1e-13*abs || (abs == 0 && got != 0) {
						t.Fatalf("%s %v: c[%d][%d] = %.17g, want %.17g", name, sh, i, j, got, s)
					}
				}
			}
			if c[m*n] != sentinel || c[m*n+1] != sentinel {
				t.Fatalf("%s %v: wrote past c", name, sh)
			}
			if m == 0 || n == 0 {
				continue
			}
			// One element alone: row i of a against column j of b.
			i, j := r.IntN(m), r.IntN(n)
			col := make([]float64, k)
			for q := range col {
				col[q] = b[q*n+j]
			}
			one := make([]float64, 1)
			f(a[i*k:i*k+k], 1, col, k, 1, one)
			if one[0] != c[i*n+j] {
				t.Fatalf("%s %v: c[%d][%d] = %.17g in the full product, %.17g alone", name, sh, i, j, c[i*n+j], one[0])
			}
		}
	}
}

// TestExpNonPositive compares ExpNonPositive with math.Exp on random and
// special arguments in [−708, 0] (within 4 units in the last place: the
// vector kernel rounds differently) and checks the 0 below −708 and that
// nothing past the end is written.
func TestExpNonPositive(t *testing.T) {
	r := rand.New(rand.NewPCG(13, 14))
	x := []float64{0, -0.0, -1e-300, -1e-17, -0.5 * math.Ln2, -math.Ln2, -1, -2.5, -700, -708, -708.5, -745, -1e10, math.Inf(-1)}
	for i := 0; i < 20000; i++ {
		switch i % 3 {
		case 0:
			x = append(x, -708*r.Float64())
		case 1:
			x = append(x, -10*r.Float64())
		default:
			x = append(x, -math.Exp(-40*r.Float64()))
		}
	}
	for n := 0; n <= len(x); n += 1 + n/3 {
		out := make([]float64, n+1)
		out[n] = 42
		ExpNonPositive(x[:n], out)
		for i, v := range x[:n] {
			if v < -708 {
				if out[i] != 0 {
					t.Fatalf("exp(%g) = %g, want 0", v, out[i])
				}
				continue
			}
			want := math.Exp(v)
			if d := math.Abs(out[i] - want); d > 4*ulp(want) {
				t.Fatalf("exp(%.17g) = %.17g, want %.17g (%.1f ulp)", v, out[i], want, d/ulp(want))
			}
		}
		if out[n] != 42 {
			t.Fatalf("n=%d: wrote past the end", n)
		}
	}
}

// ulp is the spacing of the floating-point numbers at x (x > 0).
func ulp(x float64) float64 { return math.Nextafter(x, math.Inf(1)) - x }

// TestZRowsKernels compares ZRows (the AVX2+FMA kernel where the
// processor has it) and zRowsGo with the formula written out, for every
// tail of the four-point vectors, and checks nothing past z is written.
func TestZRowsKernels(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 22))
	for m := 0; m <= 5; m++ {
		for np := 0; np <= 13; np++ {
			phi, gx, gy, gz := randomSlice(r, m*np), randomSlice(r, m*np), randomSlice(r, m*np), randomSlice(r, m*np)
			half, bx, by, bz := randomSlice(r, np), randomSlice(r, np), randomSlice(r, np), randomSlice(r, np)
			for name, f := range map[string]func(phi, gx, gy, gz, half, bx, by, bz []float64, m, np int, z []float64){"dispatch": ZRows, "go": zRowsGo} {
				z := make([]float64, m*np+1)
				z[m*np] = 5
				f(phi, gx, gy, gz, half, bx, by, bz, m, np, z)
				for a := 0; a < m; a++ {
					for p := 0; p < np; p++ {
						i := a*np + p
						want := half[p]*phi[i] + bx[p]*gx[i] + by[p]*gy[i] + bz[p]*gz[i]
						abs := math.Abs(half[p]*phi[i]) + math.Abs(bx[p]*gx[i]) + math.Abs(by[p]*gy[i]) + math.Abs(bz[p]*gz[i])
						if math.Abs(z[i]-want) > 1e-15*abs {
							t.Fatalf("%s m=%d np=%d: z[%d][%d] = %.17g, want %.17g", name, m, np, a, p, z[i], want)
						}
					}
				}
				if z[m*np] != 5 {
					t.Fatalf("%s m=%d np=%d: wrote past z", name, m, np)
				}
			}
		}
	}
}

// BenchmarkDotProducts times the kernel on the shapes of a batch of 128
// points and 60 functions with a density factor of rank 21: the potential
// block φᵀZ (60×60, contraction over 128 points), X = φL (128×21 over 60
// functions) and U = L Xᵀ (60×128 over 21), for the dispatching kernel and
// the portable one.
func BenchmarkDotProducts(b *testing.B) {
	r := rand.New(rand.NewPCG(7, 8))
	shapes := []struct {
		name      string
		na, nb, k int
	}{
		{"vblock60x60k128", 60, 60, 128},
		{"x128x21k60", 128, 21, 60},
		{"u60x128k21", 60, 128, 21},
	}
	for _, sh := range shapes {
		a := randomSlice(r, sh.na*sh.k)
		bb := randomSlice(r, sh.nb*sh.k)
		c := make([]float64, sh.na*sh.nb)
		for _, kn := range []struct {
			name string
			f    func(a []float64, na int, b []float64, nb int, k int, c []float64, ldc int)
		}{{"dispatch", DotProducts}, {"go", dotProductsGo}} {
			b.Run(fmt.Sprintf("%s/%s", sh.name, kn.name), func(b *testing.B) {
				flops := 2 * float64(sh.na*sh.nb*sh.k)
				for b.Loop() {
					kn.f(a, sh.na, bb, sh.nb, sh.k, c, sh.nb)
				}
				b.ReportMetric(flops*float64(b.N)/b.Elapsed().Seconds()/1e9, "Gflop/s")
			})
		}
	}
}

// BenchmarkExp times ExpNonPositive on 256 arguments (one batch).
func BenchmarkExp(b *testing.B) {
	r := rand.New(rand.NewPCG(15, 16))
	x := make([]float64, 256)
	for i := range x {
		x[i] = -40 * r.Float64()
	}
	out := make([]float64, len(x))
	b.Run("dispatch", func(b *testing.B) {
		for b.Loop() {
			ExpNonPositive(x, out)
		}
	})
	b.Run("go", func(b *testing.B) {
		for b.Loop() {
			expNonPositiveGo(x, out)
		}
	})
}

// BenchmarkMatMul times the kernel on the shapes of the density step of a
// batch of 128 points and 60 functions with a density factor of rank 21:
// Xᵀ = Lᵀφᵀ (21×128 over 60) and U = L Xᵀ (60×128 over 21).
func BenchmarkMatMul(b *testing.B) {
	r := rand.New(rand.NewPCG(11, 12))
	for _, sh := range []struct {
		name    string
		m, k, n int
	}{{"xt21x128k60", 21, 60, 128}, {"u60x128k21", 60, 21, 128}} {
		a := randomSlice(r, sh.m*sh.k)
		bb := randomSlice(r, sh.k*sh.n)
		c := make([]float64, sh.m*sh.n)
		for _, kn := range []struct {
			name string
			f    func(a []float64, m int, b []float64, k, n int, c []float64)
		}{{"dispatch", MatMul}, {"go", matMulGo}} {
			b.Run(sh.name+"/"+kn.name, func(b *testing.B) {
				flops := 2 * float64(sh.m*sh.n*sh.k)
				for b.Loop() {
					kn.f(a, sh.m, bb, sh.k, sh.n, c)
				}
				b.ReportMetric(flops*float64(b.N)/b.Elapsed().Seconds()/1e9, "Gflop/s")
			})
		}
	}
}

// TestDotProductsGonum compares the product kernel with gonum's matrix product
// for shapes that exercise the 4×2 tiles and their remainders.
func TestDotProductsGonum(t *testing.T) {
	for _, sz := range [][3]int{{1, 1, 1}, {4, 2, 3}, {5, 3, 7}, {7, 9, 1}, {13, 6, 30}, {8, 8, 0}} {
		na, nb, k := sz[0], sz[1], sz[2]
		a := make([]float64, na*k)
		b := make([]float64, nb*k)
		x := uint64(12345)
		rnd := func() float64 {
			x = x*6364136223846793005 + 1442695040888963407
			return float64(x>>11)/float64(1<<53) - 0.5
		}
		for i := range a {
			a[i] = rnd()
		}
		for i := range b {
			b[i] = rnd()
		}
		const ldc = 11
		c := make([]float64, na*ldc)
		for i := range c {
			c[i] = 99
		}
		DotProducts(a, na, b, nb, k, c, ldc)
		var want mat.Dense
		if k > 0 {
			want.Mul(mat.NewDense(na, k, a), mat.NewDense(nb, k, b).T())
		}
		for i := 0; i < na; i++ {
			for j := 0; j < ldc; j++ {
				got := c[i*ldc+j]
				switch {
				case j >= nb:
					if got != 99 {
						t.Errorf("%v: c[%d][%d] = %g written outside the block", sz, i, j, got)
					}
				case k == 0:
					if got != 0 {
						t.Errorf("%v: c[%d][%d] = %g, want 0", sz, i, j, got)
					}
				default:
					if w := want.At(i, j); math.Abs(got-w) > 1e-14*(1+math.Abs(w)) {
						t.Errorf("%v: c[%d][%d] = %.17g, gonum %.17g", sz, i, j, got, w)
					}
				}
			}
		}
	}
}
