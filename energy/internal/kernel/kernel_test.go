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

// cartesianExponents are the exponents of the Cartesian components of
// angular momentum 0…l.
func cartesianExponents(l int) [][3]int {
	var es [][3]int
	for n := 0; n <= l; n++ {
		for a := n; a >= 0; a-- {
			for b := n - a; b >= 0; b-- {
				es = append(es, [3]int{a, b, n - a - b})
			}
		}
	}
	return es
}

// powerTable returns pw[a][k] = x_a^k (k ≤ kmax) over np random points in
// [−2, 2)³, by repeated multiplication as the grid code forms them.
func powerTable(r *rand.Rand, np, kmax int) [3][][]float64 {
	var pw [3][][]float64
	for a := range pw {
		pw[a] = make([][]float64, kmax+1)
		pw[a][0] = make([]float64, np)
		for p := range pw[a][0] {
			pw[a][0][p] = 1
		}
		pw[a][1] = randomSlice(r, np)
		for p := range pw[a][1] {
			pw[a][1][p] *= 2
		}
		for k := 2; k <= kmax; k++ {
			pw[a][k] = make([]float64, np)
			for p := range pw[a][k] {
				pw[a][k][p] = pw[a][k-1][p] * pw[a][1][p]
			}
		}
	}
	return pw
}

// naiveCartesian is one Cartesian component written out at point p: the
// value P·R, the first derivatives and, with d2r, the second derivatives
// (packed xx, xy, xz, yy, yz, zz) before the factor t, each with the sum of
// the absolute values of its terms.
func naiveCartesian(e [3]int, x [3]float64, rad, d1r, d2r float64) (v float64, d1 [3]float64, d2 [6]float64, s1 [3]float64, s2 [6]float64) {
	pow := func(a, k int) float64 {
		if k < 0 {
			return 0
		}
		return math.Pow(x[a], float64(k))
	}
	// mono(da) is Π_a ∂^{da_a} x_a^{e_a}.
	mono := func(da [3]int) float64 {
		m := 1.0
		for a := 0; a < 3; a++ {
			c := 1.0
			for i := 0; i < da[a]; i++ {
				c *= float64(e[a] - i)
			}
			m *= c * pow(a, e[a]-da[a])
		}
		return m
	}
	poly := mono([3]int{})
	v = poly * rad
	for j := 0; j < 3; j++ {
		var dj [3]int
		dj[j] = 1
		a, b := mono(dj)*rad, poly*d1r*x[j]
		d1[j], s1[j] = a+b, math.Abs(a)+math.Abs(b)
	}
	i := 0
	for j := 0; j < 3; j++ {
		for k := j; k < 3; k++ {
			var djk, dj, dk [3]int
			djk[j]++
			djk[k]++
			dj[j], dk[k] = 1, 1
			terms := []float64{mono(djk) * rad, mono(dj) * d1r * x[k], mono(dk) * d1r * x[j], poly * d2r * x[j] * x[k]}
			if j == k {
				terms = append(terms, poly*d1r)
			}
			for _, t := range terms {
				d2[i] += t
				s2[i] += math.Abs(t)
			}
			i++
		}
	}
	return v, d1, d2, s1, s2
}

// cartesianSizes are the point counts the Cartesian kernel tests run:
// every tail of the four-point vectors and some batch sizes.
var cartesianSizes = []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 11, 13, 37, 256}

// TestCartesianRowsKernels compares CartesianRows (the AVX2+FMA kernel
// where the processor has it) and cartesianRowsGo with the functions
// written out, for every component up to l = 4, with and without
// derivatives and every tail of the vectors; checks that the two kernels
// agree within a few units in the last place of the size of the terms
// (bit for bit for the values, which fuse nothing), that nothing past np is
// written and that the unused power rows are not read (they are nil).
func TestCartesianRowsKernels(t *testing.T) {
	r := rand.New(rand.NewPCG(23, 24))
	const sentinel = -777.0
	type rowsFunc func(e [3]int, t float64, pw [3][][]float64, rad, drad []float64, np int, v []float64, g *[3][]float64)
	kernels := []struct {
		name string
		f    rowsFunc
	}{{"dispatch", CartesianRows}, {"go", cartesianRowsGo}}
	for _, np := range cartesianSizes {
		full := powerTable(r, np, 4)
		rad, drad := randomSlice(r, np), randomSlice(r, np)
		for _, e := range cartesianExponents(4) {
			tc := 0.5 + r.Float64()
			for _, grad := range []bool{false, true} {
				// Only the rows the kernel may read: x_a^{e_a} and
				// x_a^{e_a−1} for e_a > 0 and, for the derivatives, x_a.
				var pw [3][][]float64
				for a := range pw {
					pw[a] = make([][]float64, max(e[a], 1)+1)
					if grad {
						pw[a][1] = full[a][1]
					}
					if e[a] > 0 {
						pw[a][e[a]], pw[a][e[a]-1] = full[a][e[a]], full[a][e[a]-1]
					}
				}
				var outs [2][4][]float64
				for ki, kn := range kernels {
					for j := range outs[ki] {
						outs[ki][j] = make([]float64, np+2)
						for i := range outs[ki][j] {
							outs[ki][j][i] = sentinel
						}
					}
					var g *[3][]float64
					if grad {
						g = &[3][]float64{outs[ki][1], outs[ki][2], outs[ki][3]}
					}
					kn.f(e, tc, pw, rad, drad, np, outs[ki][0], g)
					for j, o := range outs[ki] {
						if !grad && j > 0 {
							if o[0] != sentinel {
								t.Fatalf("%s %v np=%d: derivative row %d written without g", kn.name, e, np, j)
							}
							continue
						}
						if o[np] != sentinel || o[np+1] != sentinel {
							t.Fatalf("%s %v np=%d grad=%v: row %d written past np", kn.name, e, np, grad, j)
						}
					}
					for p := 0; p < np; p++ {
						x := [3]float64{full[0][1][p], full[1][1][p], full[2][1][p]}
						v, d1, _, s1, _ := naiveCartesian(e, x, rad[p], drad[p], 0)
						want, scale := [4]float64{tc * v}, [4]float64{math.Abs(tc * v)}
						for j := 0; j < 3; j++ {
							want[1+j], scale[1+j] = tc*d1[j], tc*s1[j]
						}
						for j := 0; j < 4 && (j == 0 || grad); j++ {
							// 1e-14 of the terms' size: some fifty roundings
							// of 1.1e-16 (common practice).
							if got := outs[ki][j][p]; math.Abs(got-want[j]) > 1e-14*scale[j] {
								t.Fatalf("%s %v np=%d: row %d point %d = %.17g, want %.17g (scale %g)", kn.name, e, np, j, p, got, want[j], scale[j])
							}
						}
					}
				}
				for p := 0; p < np; p++ {
					if outs[0][0][p] != outs[1][0][p] {
						t.Fatalf("%v np=%d: values differ at %d: %.17g vs %.17g", e, np, p, outs[0][0][p], outs[1][0][p])
					}
					if !grad {
						continue
					}
					x := [3]float64{full[0][1][p], full[1][1][p], full[2][1][p]}
					_, _, _, s1, _ := naiveCartesian(e, x, rad[p], drad[p], 0)
					for j := 0; j < 3; j++ {
						a, b := outs[0][1+j][p], outs[1][1+j][p]
						// A derivative is a sum of two products of up to five
						// factors; rounded with and without fusing, the two
						// differ by a few ulps of the terms' size (common
						// practice: the error bound of such a sum, about the
						// number of roundings).
						if math.Abs(a-b) > 8*ulpOf(tc*s1[j]) {
							t.Fatalf("%v np=%d: derivative %d at %d: %.17g vs %.17g (%.1f ulp of %g)", e, np, j, p, a, b, math.Abs(a-b)/ulpOf(tc*s1[j]), tc*s1[j])
						}
					}
				}
			}
		}
	}
}

// cartesianShells are the component lists the shell kernel tests run:
// the Cartesian shells of l = 0…4 (the last more than one group of ten)
// and an s and a p shell together.
func cartesianShells() [][][3]int {
	var shells [][][3]int
	for l := 0; l <= 4; l++ {
		all := cartesianExponents(l)
		shells = append(shells, all[len(cartesianExponents(l-1)):])
	}
	return append(shells, cartesianExponents(1))
}

// TestCartesianDerivativesKernels compares CartesianDerivatives (the
// AVX2+FMA kernel where the processor has it) and cartesianDerivativesGo
// with the functions written out, for the shells of cartesianShells, with
// and without second derivatives, every tail of the vectors and blocks as
// wide as the shell or wider (the other elements must stay as they were).
func TestCartesianDerivativesKernels(t *testing.T) {
	r := rand.New(rand.NewPCG(25, 26))
	const sentinel = -555.0
	type derivsFunc func(comps [][3]int, ts []float64, pw [3][][]float64, rad, d1r, d2r []float64, np int, phi []float64, d1 *[3][]float64, d2 *[6][]float64, ld int)
	kernels := []struct {
		name string
		f    derivsFunc
	}{{"dispatch", CartesianDerivatives}, {"go", cartesianDerivativesGo}}
	for _, np := range cartesianSizes {
		pw := powerTable(r, np, 4)
		rad, d1r, d2r := randomSlice(r, np), randomSlice(r, np), randomSlice(r, np)
		for _, comps := range cartesianShells() {
			nc := len(comps)
			ts := make([]float64, nc)
			for c := range ts {
				ts[c] = 0.5 + r.Float64()
			}
			for _, second := range []bool{false, true} {
				for _, ld := range []int{nc, nc + 3} {
					var outs [2][10][]float64
					for ki, kn := range kernels {
						for j := range outs[ki] {
							outs[ki][j] = make([]float64, np*ld+1)
							for i := range outs[ki][j] {
								outs[ki][j][i] = sentinel
							}
						}
						o := outs[ki]
						d1 := &[3][]float64{o[1], o[2], o[3]}
						var d2 *[6][]float64
						if second {
							d2 = &[6][]float64{o[4], o[5], o[6], o[7], o[8], o[9]}
						}
						kn.f(comps, ts, pw, rad, d1r, d2r, np, o[0], d1, d2, ld)
						for j, row := range o {
							for i, x := range row {
								if (i%ld >= nc || i >= np*ld || (j >= 4 && !second)) && x != sentinel {
									t.Fatalf("%s %v np=%d ld=%d: row %d element %d written", kn.name, comps, np, ld, j, i)
								}
							}
						}
						for c, e := range comps {
							tc := ts[c]
							for p := 0; p < np; p++ {
								x := [3]float64{pw[0][1][p], pw[1][1][p], pw[2][1][p]}
								v, dv1, dv2, s1, s2 := naiveCartesian(e, x, rad[p], d1r[p], d2r[p])
								want := append([]float64{v}, dv1[:]...)
								scale := append([]float64{math.Abs(v)}, s1[:]...)
								want, scale = append(want, dv2[:]...), append(scale, s2[:]...)
								i := p*ld + c
								for j := range want {
									if j >= 4 && !second {
										break
									}
									if got := o[j][i]; math.Abs(got-tc*want[j]) > 1e-14*tc*scale[j] {
										t.Fatalf("%s %v np=%d ld=%d: row %d point %d = %.17g, want %.17g (scale %g)", kn.name, e, np, ld, j, p, got, tc*want[j], tc*scale[j])
									}
									if ki == 0 {
										continue
									}
									a, b := outs[0][j][i], o[j][i]
									if j == 0 && a != b {
										t.Fatalf("%v np=%d: values differ at %d: %.17g vs %.17g", e, np, p, a, b)
									}
									// Second derivatives sum up to four
									// such products: twice the bound of
									// the first (common practice, as above).
									if math.Abs(a-b) > 16*ulpOf(tc*scale[j]) {
										t.Fatalf("%v np=%d: row %d at %d: %.17g vs %.17g (%.1f ulp of %g)", e, np, j, p, a, b, math.Abs(a-b)/ulpOf(tc*scale[j]), tc*scale[j])
									}
								}
							}
						}
					}
				}
			}
		}
	}
}

// TestCartesianPointwise checks that every point's results are the same,
// bit for bit, whether computed in a batch of 37 (whole vectors) or alone
// (the masked tail), and for the shell kernel whether with the whole shell
// or one component: each point depends only on its own inputs.
func TestCartesianPointwise(t *testing.T) {
	r := rand.New(rand.NewPCG(27, 28))
	const np = 37
	pw := powerTable(r, np, 3)
	rad, d1r, d2r := randomSlice(r, np), randomSlice(r, np), randomSlice(r, np)
	at := func(p int) ([3][][]float64, []float64, []float64, []float64) {
		var q [3][][]float64
		for a := range q {
			q[a] = make([][]float64, len(pw[a]))
			for k := range q[a] {
				q[a][k] = pw[a][k][p : p+1]
			}
		}
		return q, rad[p : p+1], d1r[p : p+1], d2r[p : p+1]
	}
	for _, comps := range cartesianShells()[:4] {
		nc := len(comps)
		ts := make([]float64, nc)
		for c := range ts {
			ts[c] = 1 + 0.1*float64(c)
		}
		var ds [10][]float64
		for j := range ds {
			ds[j] = make([]float64, np*nc)
		}
		CartesianDerivatives(comps, ts, pw, rad, d1r, d2r, np, ds[0], &[3][]float64{ds[1], ds[2], ds[3]},
			&[6][]float64{ds[4], ds[5], ds[6], ds[7], ds[8], ds[9]}, nc)
		for c, e := range comps {
			var rows [4][]float64
			for j := range rows {
				rows[j] = make([]float64, np)
			}
			CartesianRows(e, ts[c], pw, rad, d1r, np, rows[0], &[3][]float64{rows[1], rows[2], rows[3]})
			for p := 0; p < np; p++ {
				q, qr, q1, q2 := at(p)
				var one [10][]float64
				for j := range one {
					one[j] = make([]float64, 1)
				}
				CartesianRows(e, ts[c], q, qr, q1, 1, one[0], &[3][]float64{one[1], one[2], one[3]})
				for j := 0; j < 4; j++ {
					if one[j][0] != rows[j][p] {
						t.Fatalf("rows %v: row %d point %d = %.17g in the batch, %.17g alone", e, j, p, rows[j][p], one[j][0])
					}
				}
				CartesianDerivatives([][3]int{e}, ts[c:c+1], q, qr, q1, q2, 1, one[0], &[3][]float64{one[1], one[2], one[3]},
					&[6][]float64{one[4], one[5], one[6], one[7], one[8], one[9]}, 1)
				for j := range one {
					if got := ds[j][p*nc+c]; one[j][0] != got {
						t.Fatalf("derivatives %v: row %d point %d = %.17g in the batch, %.17g alone", e, j, p, got, one[j][0])
					}
				}
			}
		}
	}
}

// ulpOf is the spacing of the floating-point numbers at |x| (the smallest
// subnormal for 0).
func ulpOf(x float64) float64 {
	x = math.Abs(x)
	return math.Nextafter(x, math.Inf(1)) - x
}

// BenchmarkCartesianRows times CartesianRows with derivatives over a batch
// of 256 points for an s, a p and the two kinds of Cartesian d components
// (xx and xy), and the values alone for a d component, for the
// dispatching kernel and the portable one.
func BenchmarkCartesianRows(b *testing.B) {
	r := rand.New(rand.NewPCG(29, 30))
	const np = 256
	pw := powerTable(r, np, 3)
	rad, drad := randomSlice(r, np), randomSlice(r, np)
	v := make([]float64, np)
	g := [3][]float64{make([]float64, np), make([]float64, np), make([]float64, np)}
	for _, c := range []struct {
		name string
		e    [3]int
		grad bool
	}{{"s", [3]int{}, true}, {"px", [3]int{1, 0, 0}, true}, {"dxx", [3]int{2, 0, 0}, true}, {"dxy", [3]int{1, 1, 0}, true}, {"dxyValues", [3]int{1, 1, 0}, false}} {
		gp := &g
		if !c.grad {
			gp = nil
		}
		for _, kn := range []struct {
			name string
			f    func(e [3]int, t float64, pw [3][][]float64, rad, drad []float64, np int, v []float64, g *[3][]float64)
		}{{"dispatch", CartesianRows}, {"go", cartesianRowsGo}} {
			b.Run(c.name+"/"+kn.name, func(b *testing.B) {
				for b.Loop() {
					kn.f(c.e, 1.1, pw, rad, drad, np, v, gp)
				}
				b.ReportMetric(b.Elapsed().Seconds()*1e9/float64(b.N)/np, "ns/point")
			})
		}
	}
}

// BenchmarkCartesianDerivatives times CartesianDerivatives with second
// derivatives over a batch of 256 points written into point-major blocks
// 60 functions wide, for an s, a p and a Cartesian d shell, for the
// dispatching kernel and the portable one.
func BenchmarkCartesianDerivatives(b *testing.B) {
	r := rand.New(rand.NewPCG(31, 32))
	const np, ld = 256, 60
	pw := powerTable(r, np, 3)
	rad, d1r, d2r := randomSlice(r, np), randomSlice(r, np), randomSlice(r, np)
	var o [10][]float64
	for j := range o {
		o[j] = make([]float64, np*ld)
	}
	d1 := &[3][]float64{o[1], o[2], o[3]}
	d2 := &[6][]float64{o[4], o[5], o[6], o[7], o[8], o[9]}
	ts := []float64{1.1, 1.2, 1.3, 1.4, 1.5, 1.6}
	for _, l := range []int{0, 1, 2} {
		comps := cartesianShells()[l]
		for _, kn := range []struct {
			name string
			f    func(comps [][3]int, ts []float64, pw [3][][]float64, rad, d1r, d2r []float64, np int, phi []float64, d1 *[3][]float64, d2 *[6][]float64, ld int)
		}{{"dispatch", CartesianDerivatives}, {"go", cartesianDerivativesGo}} {
			b.Run(fmt.Sprintf("%c/%s", "spd"[l], kn.name), func(b *testing.B) {
				for b.Loop() {
					kn.f(comps, ts, pw, rad, d1r, d2r, np, o[0], d1, d2, ld)
				}
				b.ReportMetric(b.Elapsed().Seconds()*1e9/float64(b.N)/np/float64(len(comps)), "ns/point/function")
			})
		}
	}
}
