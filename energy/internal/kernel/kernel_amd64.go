//go:build amd64 && !purego

package kernel

import "golang.org/x/sys/cpu"

// simd reports whether DotProducts, MatMul, ColumnDots, ZRows and
// ExpNonPositive use the AVX2+FMA kernels of kernel_amd64.s: decided once,
// at initialization, from the processor's features (x/sys/cpu also checks
// that the operating system saves the vector registers), and never changed
// afterwards.
var simd = cpu.X86.HasAVX2 && cpu.X86.HasFMA

// dotProductsAVX2 is DotProducts on raw pointers (kernel_amd64.s):
// na, nb ≥ 1, k ≥ 1, ldc ≥ nb, and every row in bounds.
//
//go:noescape
func dotProductsAVX2(a *float64, na int, b *float64, nb int, k int, c *float64, ldc int)

// columnDotsAVX2 is ColumnDots on raw pointers (kernel_amd64.s): m, np ≥ 1.
//
//go:noescape
func columnDotsAVX2(x, y *float64, m, np int, out *float64)

// matMulAVX2 is MatMul on raw pointers (kernel_amd64.s): m, n, k ≥ 1.
//
//go:noescape
func matMulAVX2(a *float64, m int, b *float64, k int, n int, c *float64)

// expAVX2 is ExpNonPositive on raw pointers (kernel_amd64.s): n ≥ 1.
//
//go:noescape
func expAVX2(x *float64, n int, out *float64)

// zRowsAVX2 is ZRows on raw pointers (kernel_amd64.s): m, np ≥ 1.
//
//go:noescape
func zRowsAVX2(phi, gx, gy, gz, half, bx, by, bz *float64, m, np int, z *float64)

// DotProducts sets c[i·ldc+j] = Σ_t a[i·k+t] b[j·k+t] for 0 ≤ i < na and
// 0 ≤ j < nb (A·Bᵀ with the contraction index contiguous). With AVX2 and
// FMA it runs the vector kernel: four lanes over t, 3×4 register tiles of
// c, each element reduced as (lane0+lane1)+(lane2+lane3) whatever its
// tile, so the result depends only on the inputs; otherwise
// dotProductsGo.
func DotProducts(a []float64, na int, b []float64, nb int, k int, c []float64, ldc int) {
	if !simd || na == 0 || nb == 0 || k == 0 {
		dotProductsGo(a, na, b, nb, k, c, ldc)
		return
	}
	// The bounds the assembly relies on, checked once here.
	_ = a[na*k-1]
	_ = b[nb*k-1]
	_ = c[(na-1)*ldc+nb-1]
	if ldc < nb {
		panic("kernel: DotProducts with ldc < nb")
	}
	dotProductsAVX2(&a[0], na, &b[0], nb, k, &c[0], ldc)
}

// ColumnDots sets out[p] = Σ_a x[a·np+p] y[a·np+p] for two function-major
// m×np blocks, adding the rows in order for every point (with fused
// multiply–adds when the vector kernel runs).
func ColumnDots(x, y []float64, m, np int, out []float64) {
	if !simd || m == 0 || np == 0 {
		columnDotsGo(x, y, m, np, out)
		return
	}
	_ = x[m*np-1]
	_ = y[m*np-1]
	_ = out[np-1]
	columnDotsAVX2(&x[0], &y[0], m, np, &out[0])
}

// MatMul sets c (m×n) = a (m×k) · b (k×n), all three row-major and
// contiguous; every element is the sum over the contraction index in
// order (with fused multiply–adds when the vector kernel runs: four
// columns a lane, 4×12 register tiles), so it depends only on its row of
// a and column of b.
func MatMul(a []float64, m int, b []float64, k, n int, c []float64) {
	if !simd || m == 0 || n == 0 || k == 0 {
		matMulGo(a, m, b, k, n, c)
		return
	}
	_ = a[m*k-1]
	_ = b[k*n-1]
	_ = c[m*n-1]
	matMulAVX2(&a[0], m, &b[0], k, n, &c[0])
}

// ExpNonPositive sets out[i] = e^{x[i]} for x[i] ≤ 0 (values below −708,
// whose exponential is subnormal, give 0). The vector kernel agrees with
// math.Exp to a few units in the last place; otherwise math.Exp itself.
func ExpNonPositive(x, out []float64) {
	if !simd || len(x) == 0 {
		expNonPositiveGo(x, out)
		return
	}
	_ = out[len(x)-1]
	expAVX2(&x[0], len(x), &out[0])
}

// ZRows sets z[a·np+p] = half[p]·φ[a·np+p] + (bx[p]·gx[a·np+p] +
// by[p]·gy[a·np+p] + bz[p]·gz[a·np+p]) for m function-major rows of np
// points (the GGA potential's Z of a batch), with fused multiply–adds when
// the vector kernel runs; otherwise zRowsGo.
func ZRows(phi, gx, gy, gz, half, bx, by, bz []float64, m, np int, z []float64) {
	if !simd || m == 0 || np == 0 {
		zRowsGo(phi, gx, gy, gz, half, bx, by, bz, m, np, z)
		return
	}
	n := m*np - 1
	_, _, _, _, _ = phi[n], gx[n], gy[n], gz[n], z[n]
	_, _, _, _ = half[np-1], bx[np-1], by[np-1], bz[np-1]
	zRowsAVX2(&phi[0], &gx[0], &gy[0], &gz[0], &half[0], &bx[0], &by[0], &bz[0], m, np, &z[0])
}
