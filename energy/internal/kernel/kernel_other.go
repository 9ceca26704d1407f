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

// CartesianRows sets, at the np points of a batch, the value row v of one
// Cartesian component φ = t·x^{e_x} y^{e_y} z^{e_z}·R of a shell and, when g
// is not nil, its three derivative rows ∂_jφ, from the powers pw[a][k] =
// x_a^k of the coordinates relative to the centre, R = rad and R′ = drad:
// here always cartesianRowsGo (see CartesianRows in kernel_amd64.go).
func CartesianRows(e [3]int, t float64, pw [3][][]float64, rad, drad []float64, np int, v []float64, g *[3][]float64) {
	cartesianRowsGo(e, t, pw, rad, drad, np, v, g)
}

// CartesianDerivatives sets, at the np points of a batch, the values,
// first and (when d2 is not nil) second derivatives of the Cartesian
// components φ_c = t_c·x^{e_x} y^{e_y} z^{e_z}·R, e = comps[c], t_c = ts[c],
// of one shell, point p of component c at element p·ld + c of each: here
// always cartesianDerivativesGo (see CartesianDerivatives in
// kernel_amd64.go).
func CartesianDerivatives(comps [][3]int, ts []float64, pw [3][][]float64, rad, d1r, d2r []float64, np int, phi []float64, d1 *[3][]float64, d2 *[6][]float64, ld int) {
	cartesianDerivativesGo(comps, ts, pw, rad, d1r, d2r, np, phi, d1, d2, ld)
}
