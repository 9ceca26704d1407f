package kernel

import "math"

// dotProductsGo sets c[i·ldc+j] = Σ_t a[i·k+t] b[j·k+t] for 0 ≤ i < na and
// 0 ≤ j < nb: the products of the rows of two row-major matrices (A·Bᵀ),
// with the contraction index contiguous in memory. It works on 4×2 tiles
// of c so that each loaded element serves several products (eight
// accumulators, which the amd64 and arm64 register files hold), and sums
// every element in the same order whatever the tile, so the result depends
// only on the inputs. It is the portable kernel behind DotProducts
// (kernel_amd64.go, kernel_other.go).
func dotProductsGo(a []float64, na int, b []float64, nb int, k int, c []float64, ldc int) {
	if na == 0 || nb == 0 {
		return
	}
	if k == 0 {
		for i := 0; i < na; i++ {
			clear(c[i*ldc : i*ldc+nb])
		}
		return
	}
	i := 0
	for ; i+4 <= na; i += 4 {
		a0 := a[i*k : i*k+k]
		a1 := a[(i+1)*k : (i+1)*k+k]
		a2 := a[(i+2)*k : (i+2)*k+k]
		a3 := a[(i+3)*k : (i+3)*k+k]
		c0 := c[i*ldc : i*ldc+nb]
		c1 := c[(i+1)*ldc : (i+1)*ldc+nb]
		c2 := c[(i+2)*ldc : (i+2)*ldc+nb]
		c3 := c[(i+3)*ldc : (i+3)*ldc+nb]
		j := 0
		for ; j+2 <= nb; j += 2 {
			b0 := b[j*k : j*k+k]
			b1 := b[(j+1)*k : (j+1)*k+k]
			b1 = b1[:len(b0)]
			a0, a1, a2, a3 := a0[:len(b0)], a1[:len(b0)], a2[:len(b0)], a3[:len(b0)]
			var s00, s01, s10, s11, s20, s21, s30, s31 float64
			for t, x0 := range b0 {
				x1 := b1[t]
				y0, y1, y2, y3 := a0[t], a1[t], a2[t], a3[t]
				s00 += y0 * x0
				s01 += y0 * x1
				s10 += y1 * x0
				s11 += y1 * x1
				s20 += y2 * x0
				s21 += y2 * x1
				s30 += y3 * x0
				s31 += y3 * x1
			}
			c0[j], c0[j+1] = s00, s01
			c1[j], c1[j+1] = s10, s11
			c2[j], c2[j+1] = s20, s21
			c3[j], c3[j+1] = s30, s31
		}
		if j < nb {
			b0 := b[j*k : j*k+k]
			a0, a1, a2, a3 := a0[:len(b0)], a1[:len(b0)], a2[:len(b0)], a3[:len(b0)]
			var s0, s1, s2, s3 float64
			for t, x0 := range b0 {
				s0 += a0[t] * x0
				s1 += a1[t] * x0
				s2 += a2[t] * x0
				s3 += a3[t] * x0
			}
			c0[j], c1[j], c2[j], c3[j] = s0, s1, s2, s3
		}
	}
	for ; i < na; i++ {
		ai := a[i*k : i*k+k]
		ci := c[i*ldc : i*ldc+nb]
		for j := range ci {
			bj := b[j*k : j*k+k]
			bj = bj[:len(ai)]
			var s float64
			for t, y := range ai {
				s += y * bj[t]
			}
			ci[j] = s
		}
	}
}

// columnDotsGo sets out[p] = Σ_a x[a·np+p] y[a·np+p] for two function-major
// m×np blocks, adding the rows in order. It is the portable kernel behind ColumnDots.
func columnDotsGo(x, y []float64, m, np int, out []float64) {
	out = out[:np]
	clear(out)
	for a := 0; a < m; a++ {
		xr := x[a*np : a*np+np]
		yr := y[a*np : a*np+np]
		for pt := range out {
			out[pt] += xr[pt] * yr[pt]
		}
	}
}

// matMulGo sets c (m×n) = a (m×k) · b (k×n), all three row-major and
// contiguous, adding the k products of every element in order. It is the
// portable kernel behind MatMul.
func matMulGo(a []float64, m int, b []float64, k, n int, c []float64) {
	for i := 0; i < m; i++ {
		ci := c[i*n : i*n+n]
		clear(ci)
		for t, x := range a[i*k : i*k+k] {
			bt := b[t*n : t*n+n]
			bt = bt[:len(ci)]
			for j, y := range bt {
				ci[j] += x * y
			}
		}
	}
}

// expNonPositiveGo sets out[i] = e^{x[i]} for x[i] ≤ 0, with values below
// −708 (whose exponential is subnormal) giving 0, by math.Exp. It is the
// portable kernel behind ExpNonPositive.
func expNonPositiveGo(x, out []float64) {
	out = out[:len(x)]
	for i, v := range x {
		if v < -708 {
			out[i] = 0
			continue
		}
		out[i] = math.Exp(v)
	}
}

// zRowsGo sets z[a·np+p] = half[p]·φ[a·np+p] + (bx[p]·gx[a·np+p] +
// by[p]·gy[a·np+p] + bz[p]·gz[a·np+p]) for m function-major rows of np
// points. It is the portable kernel behind ZRows.
func zRowsGo(phi, gx, gy, gz, half, bx, by, bz []float64, m, np int, z []float64) {
	half, bx, by, bz = half[:np], bx[:np], by[:np], bz[:np]
	for a := 0; a < m; a++ {
		zr := z[a*np : a*np+np]
		pr := phi[a*np : a*np+np]
		xr, yr, zz := gx[a*np:a*np+np], gy[a*np:a*np+np], gz[a*np:a*np+np]
		for pt := range zr {
			zr[pt] = half[pt]*pr[pt] + (bx[pt]*xr[pt] + by[pt]*yr[pt] + bz[pt]*zz[pt])
		}
	}
}

// Transpose sets dst (cols×rows) to the transpose of the row-major
// rows×cols matrix src.
func Transpose(src []float64, rows, cols int, dst []float64) {
	const tile = 32
	for r0 := 0; r0 < rows; r0 += tile {
		r1 := min(r0+tile, rows)
		for c0 := 0; c0 < cols; c0 += tile {
			c1 := min(c0+tile, cols)
			for r := r0; r < r1; r++ {
				row := src[r*cols : r*cols+cols]
				for c := c0; c < c1; c++ {
					dst[c*rows+r] = row[c]
				}
			}
		}
	}
}
