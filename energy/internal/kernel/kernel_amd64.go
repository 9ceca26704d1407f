//go:build amd64 && !purego

package kernel

import "golang.org/x/sys/cpu"

// simd reports whether DotProducts, MatMul, ColumnDots, ZRows,
// ExpNonPositive, CartesianRows and CartesianDerivatives use the AVX2+FMA
// kernels of kernel_amd64.s: decided once, at initialization, from the
// processor's features (x/sys/cpu also checks that the operating system
// saves the vector registers), and never changed afterwards.
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

// cartesianRowsAVX2 is CartesianRows on raw pointers (kernel_amd64.s), the
// axes ordered by cartesianAxes: v and the derivative rows ga, gb, gc; the
// power rows pa, pb, pc and lower powers la, lb, lc of the n axes with a
// positive exponent; rad, drad and the coordinate rows da, db, dc; t and
// tea, teb, tec = t·e. variant is n, plus 4 with derivatives; np ≥ 1.
// Pointers the variant does not use may be nil.
//
//go:noescape
func cartesianRowsAVX2(v, ga, gb, gc, pa, pb, pc, la, lb, lc, rad, drad, da, db, dc *float64, t, tea, teb, tec float64, variant, np int)

// cartesianDerivsAVX2 is CartesianDerivatives on raw pointers
// (kernel_amd64.s) for nc components: out holds φ, ∂_x, ∂_y, ∂_z and the
// packed second derivatives xx, xy, xz, yy, yz, zz of component 0 (point p
// of component c at element p·ld + c of each); in[c] holds the rows x_0,
// y_0, z_0, the lower powers of x_1, y_1, z_1 and of x_2, y_2, z_2, then
// R, R′, R″ and x, y, z; k[c] holds the factors e_x, e_y, e_z,
// e_x(e_x−1), e_y(e_y−1), e_z(e_z−1) and t. variant is 0 (general, first
// derivatives), 1 (general, second too), 2 or 3 (the same for s functions:
// only R, R′, R″ and x, y, z are read); nc, np, ld ≥ 1.
//
//go:noescape
func cartesianDerivsAVX2(out *[10]*float64, in *[15]*float64, k *[7]float64, nc, ld, np, variant int)

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

// CartesianRows sets, at the np points of a batch, the value row v of one
// Cartesian component φ = t·x^{e_x} y^{e_y} z^{e_z}·R of a shell and, when g
// is not nil, its three derivative rows
//
//	g[j] = ∂_jφ = t·(e_j x_j^{e_j−1} Π_{k≠j} x_k^{e_k}·R + x^{e_x} y^{e_y} z^{e_z}·R′·x_j),
//
// from pw[a][k] = x_a^k, the powers of the coordinates of the points
// relative to the shell's centre (rows of np points, k from 0, all ones, to
// max(e_a, 1)), the radial part R = rad and R′ = drad (= R_r/r, so that
// ∂_jR = R′x_j). Factors of an exponent 0 are not multiplied in (an s
// function is t·R, and row 0 is read only as the lower power x_j^0 of an
// exponent 1), and the first term of g[j] vanishes when e_j = 0. With AVX2
// and FMA it runs the vector kernel, one point a lane and four to a
// vector, the last np mod 4 with masked loads and stores, with fused
// multiply–adds in the derivatives; otherwise cartesianRowsGo (which
// documents the order of the operations). Each point depends only on its
// own inputs.
func CartesianRows(e [3]int, t float64, pw [3][][]float64, rad, drad []float64, np int, v []float64, g *[3][]float64) {
	if !simd || np == 0 {
		cartesianRowsGo(e, t, pw, rad, drad, np, v, g)
		return
	}
	ax, n := cartesianAxes(e)
	last := np - 1
	_, _ = v[last], rad[last]
	var p, lo, d, gr [3]*float64
	var te [3]float64
	for i := 0; i < n; i++ {
		a := ax[i]
		_, _ = pw[a][e[a]][last], pw[a][e[a]-1][last]
		p[i], lo[i] = &pw[a][e[a]][0], &pw[a][e[a]-1][0]
		te[i] = t * float64(e[a])
	}
	variant := n
	if g != nil {
		_ = drad[last]
		for i, a := range ax {
			_, _ = pw[a][1][last], g[a][last]
			d[i], gr[i] = &pw[a][1][0], &g[a][0]
		}
		variant += 4
	}
	cartesianRowsAVX2(&v[0], gr[0], gr[1], gr[2], p[0], p[1], p[2], lo[0], lo[1], lo[2],
		&rad[0], firstOrNil(drad), d[0], d[1], d[2], t, te[0], te[1], te[2], variant, np)
}

// CartesianDerivatives sets, at the np points of a batch, the values φ_c,
// first derivatives ∂_jφ_c and, when d2 is not nil, second derivatives
// ∂_j∂_kφ_c (packed xx, xy, xz, yy, yz, zz) of the Cartesian components
// φ_c = t_c·x^{e_x} y^{e_y} z^{e_z}·R, e = comps[c], t_c = ts[c], of one
// shell: point p of component c at element p·ld + c of phi, d1[j] and d2[i]
// (adjacent columns of point-major blocks ld wide). The inputs are
// pw[a][k] = x_a^k as for CartesianRows (rows 0 to max(e_a, 1)), the
// radial part R = rad, R′ = d1r and R″ = d2r (read only with d2), with
// ∂_jR = R′x_j and ∂_j∂_kR = R′δ_jk + R″x_j x_k. An s shell (all exponents
// 0) has its own loop without the polynomial. With AVX2 and FMA it runs
// the vector kernel, one point a lane and four to a vector, all the
// components of those points before the next four (so that each point's
// part of a block is written while it is in the first-level cache), with
// fused multiply–adds;
// otherwise cartesianDerivativesGo (cartesianComponentGo documents the
// order of the operations). Each point depends only on its own inputs.
func CartesianDerivatives(comps [][3]int, ts []float64, pw [3][][]float64, rad, d1r, d2r []float64, np int, phi []float64, d1 *[3][]float64, d2 *[6][]float64, ld int) {
	nc := len(comps)
	if !simd || np == 0 || nc == 0 {
		cartesianDerivativesGo(comps, ts, pw, rad, d1r, d2r, np, phi, d1, d2, ld)
		return
	}
	if ld < nc {
		panic("kernel: CartesianDerivatives with ld < len(comps)")
	}
	_ = ts[nc-1]
	last, lastOut := np-1, (np-1)*ld+nc-1
	_, _, _, _ = phi[lastOut], d1[0][lastOut], d1[1][lastOut], d1[2][lastOut]
	variant := 0
	var r2 *float64
	if d2 != nil {
		for j := 0; j < 6; j++ {
			_ = d2[j][lastOut]
		}
		_ = d2r[last]
		r2 = &d2r[0]
		variant = 1
	}
	_, _ = rad[last], d1r[last]
	for a := 0; a < 3; a++ {
		_ = pw[a][1][last]
	}
	s := true
	for _, e := range comps {
		s = s && e == [3]int{}
	}
	if s {
		variant += 2
	}
	// The components in groups of up to ten, their rows and factors on
	// the stack.
	const group = 10
	var in [group][15]*float64
	var k [group][7]float64
	for c0 := 0; c0 < nc; c0 += group {
		n := min(group, nc-c0)
		for c := 0; c < n; c++ {
			e, row, kc := comps[c0+c], &in[c], &k[c]
			*kc = [7]float64{6: ts[c0+c]}
			row[9], row[10], row[11] = &rad[0], &d1r[0], r2
			for a := 0; a < 3; a++ {
				row[12+a] = &pw[a][1][0]
				if s {
					continue
				}
				ea := e[a]
				lo1, lo2 := pw[a][0], pw[a][0]
				if ea >= 1 {
					lo1, kc[a] = pw[a][ea-1], float64(ea)
				}
				if ea >= 2 {
					lo2, kc[3+a] = pw[a][ea-2], float64(ea*(ea-1))
				}
				_, _, _ = pw[a][ea][last], lo1[last], lo2[last]
				row[a], row[3+a], row[6+a] = &pw[a][ea][0], &lo1[0], &lo2[0]
			}
		}
		out := [10]*float64{&phi[c0], &d1[0][c0], &d1[1][c0], &d1[2][c0]}
		if d2 != nil {
			for j := 0; j < 6; j++ {
				out[4+j] = &d2[j][c0]
			}
		}
		cartesianDerivsAVX2(&out, &in[0], &k[0], n, ld, np, variant)
	}
}

// firstOrNil is &s[0], or nil for an empty s.
func firstOrNil(s []float64) *float64 {
	if len(s) == 0 {
		return nil
	}
	return &s[0]
}
