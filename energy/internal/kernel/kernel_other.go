//go:build !amd64 || purego

package kernel

// simd reports whether the kernels use the vector versions of
// kernel_amd64.s; in this build they never do.
const simd = false

// DotProducts sets c[i·ldc+j] = Σ_t a[i·k+t] b[j·k+t] for 0 ≤ i < na and
// 0 ≤ j < nb (A·Bᵀ with the contraction index contiguous): here always
// the portable kernel dotProductsGo.
func DotProducts(a []float64, na int, b []float64, nb int, k int, c []float64, ldc int) {
	dotProductsGo(a, na, b, nb, k, c, ldc)
}

// ColumnDots sets out[p] = Σ_a x[a·np+p] y[a·np+p] for two function-major
// m×np blocks: here always the portable kernel columnDotsGo.
func ColumnDots(x, y []float64, m, np int, out []float64) {
	columnDotsGo(x, y, m, np, out)
}

// MatMul sets c (m×n) = a (m×k) · b (k×n), all three row-major and
// contiguous: here always the portable kernel matMulGo.
func MatMul(a []float64, m int, b []float64, k, n int, c []float64) {
	matMulGo(a, m, b, k, n, c)
}

// ExpNonPositive sets out[i] = e^{x[i]} for x[i] ≤ 0 (values below −708
// give 0): here always expNonPositiveGo.
func ExpNonPositive(x, out []float64) {
	expNonPositiveGo(x, out)
}

// ZRows sets z[a·np+p] = half[p]·φ[a·np+p] + (bx[p]·gx[a·np+p] +
// by[p]·gy[a·np+p] + bz[p]·gz[a·np+p]) for m function-major rows of np
// points: here always zRowsGo.
func ZRows(phi, gx, gy, gz, half, bx, by, bz []float64, m, np int, z []float64) {
	zRowsGo(phi, gx, gy, gz, half, bx, by, bz, m, np, z)
}
