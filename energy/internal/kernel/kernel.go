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

// cartesianAxes orders the axes as the Cartesian row kernels take them:
// the n axes with a positive exponent first, then the others, each group
// in axis order.
func cartesianAxes(e [3]int) (ax [3]int, n int) {
	for a := 0; a < 3; a++ {
		if e[a] > 0 {
			ax[n] = a
			n++
		}
	}
	k := n
	for a := 0; a < 3; a++ {
		if e[a] <= 0 {
			ax[k] = a
			k++
		}
	}
	return ax, n
}

// cartesianRowsGo is the portable kernel behind CartesianRows. With the n
// axes of positive exponent first (a, b, c) and P = p_a·p_b·p_c over those
// axes only (p_a = x_a^{e_a}, l_a = x_a^{e_a−1}), every point gets
//
//	v   = t·(P·R)
//	g_j = tPD·x_j + (t·e_j)·(Q_j·R)   (axes with e_j > 0)
//	g_j = tPD·x_j                     (the others)
//
// with tPD = t·(P·R′) and Q_a = l_a, or l_a·p_b and p_a·l_b, or
// l_a·(p_b·p_c), (p_a·l_b)·p_c and (p_a·p_b)·l_c for n = 1, 2, 3; the vector
// kernel fuses the last multiply–add of g_j. For an s function (n = 0)
// there is no polynomial: v = t·R and g_j = (t·R′)·x_j.
func cartesianRowsGo(e [3]int, t float64, pw [3][][]float64, rad, drad []float64, np int, v []float64, g *[3][]float64) {
	if np == 0 {
		return
	}
	ax, n := cartesianAxes(e)
	rad, v = rad[:np], v[:np]
	var p, lo, d, gr [3][]float64
	var te [3]float64
	for i, a := range ax {
		if i < n {
			p[i], lo[i] = pw[a][e[a]][:np], pw[a][e[a]-1][:np]
			te[i] = t * float64(e[a])
		}
		if g != nil {
			d[i], gr[i] = pw[a][1][:np], g[a][:np]
		}
	}
	if g == nil {
		switch n {
		case 0:
			for pt, r := range rad {
				v[pt] = t * r
			}
		case 1:
			for pt, r := range rad {
				v[pt] = t * (p[0][pt] * r)
			}
		case 2:
			for pt, r := range rad {
				v[pt] = t * (p[0][pt] * p[1][pt] * r)
			}
		default:
			for pt, r := range rad {
				v[pt] = t * (p[0][pt] * p[1][pt] * p[2][pt] * r)
			}
		}
		return
	}
	drad = drad[:np]
	switch n {
	case 0:
		for pt, r := range rad {
			v[pt] = t * r
			tpd := t * drad[pt]
			gr[0][pt] = tpd * d[0][pt]
			gr[1][pt] = tpd * d[1][pt]
			gr[2][pt] = tpd * d[2][pt]
		}
	case 1:
		for pt, r := range rad {
			pp := p[0][pt]
			v[pt] = t * (pp * r)
			tpd := t * (pp * drad[pt])
			gr[0][pt] = tpd*d[0][pt] + te[0]*(lo[0][pt]*r)
			gr[1][pt] = tpd * d[1][pt]
			gr[2][pt] = tpd * d[2][pt]
		}
	case 2:
		for pt, r := range rad {
			pa, pb := p[0][pt], p[1][pt]
			pp := pa * pb
			v[pt] = t * (pp * r)
			tpd := t * (pp * drad[pt])
			gr[0][pt] = tpd*d[0][pt] + te[0]*(lo[0][pt]*pb*r)
			gr[1][pt] = tpd*d[1][pt] + te[1]*(pa*lo[1][pt]*r)
			gr[2][pt] = tpd * d[2][pt]
		}
	default:
		for pt, r := range rad {
			pa, pb, pc := p[0][pt], p[1][pt], p[2][pt]
			ab := pa * pb
			pp := ab * pc
			v[pt] = t * (pp * r)
			tpd := t * (pp * drad[pt])
			gr[0][pt] = tpd*d[0][pt] + te[0]*(lo[0][pt]*(pb*pc)*r)
			gr[1][pt] = tpd*d[1][pt] + te[1]*(pa*lo[1][pt]*pc*r)
			gr[2][pt] = tpd*d[2][pt] + te[2]*(ab*lo[2][pt]*r)
		}
	}
}

// cartesianDerivativesGo is the portable kernel behind
// CartesianDerivatives: cartesianComponentGo for each component in turn,
// component c in column c.
func cartesianDerivativesGo(comps [][3]int, ts []float64, pw [3][][]float64, rad, d1r, d2r []float64, np int, phi []float64, d1 *[3][]float64, d2 *[6][]float64, ld int) {
	if np == 0 {
		return
	}
	for c, e := range comps {
		d1c := [3][]float64{d1[0][c:], d1[1][c:], d1[2][c:]}
		var d2c *[6][]float64
		if d2 != nil {
			d2c = &[6][]float64{d2[0][c:], d2[1][c:], d2[2][c:], d2[3][c:], d2[4][c:], d2[5][c:]}
		}
		cartesianComponentGo(e, ts[c], pw, rad, d1r, d2r, np, phi[c:], &d1c, d2c, ld)
	}
}

// cartesianComponentGo sets the value, first and (with d2) second
// derivatives of one Cartesian component t·x^{e_x} y^{e_y} z^{e_z}·R at
// element p·ld of phi, d1[j], d2[i] for the np points. With, per axis,
// x_0 = x^{e}, x_1 = e·x^{e−1} and x_2 = e(e−1)·x^{e−2} (0 where the
// exponent is too small), the monomial P = x_0·(y_0 z_0), its derivatives
// p_x = x_1·(y_0 z_0), p_y = y_1·(x_0 z_0), p_z = z_1·(x_0 y_0), and
// T = t·R, T1 = t·R′, T2 = t·R″ (R′ = d1r, R″ = d2r), every point gets
//
//	φ       = P·T
//	∂_jφ    = (P·T1)·x_j + p_j·T
//	∂_j∂_jφ = ((x_2·O_j)·T + P·T1) + (u_j + s_j)·x_j
//	∂_j∂_kφ = (((x_1 y_1)·O_jk)·T + s_k·x_j) + u_j·x_k    (j < k)
//
// with s_j = p_j·T1, u_j = (P·T2)·x_j + s_j, O_x = y_0 z_0 (and so on) and
// O_jk the zeroth power of the third axis, each sum in that order; the
// vector kernel fuses every product into the sum that follows it. For an s
// function (all exponents 0) P = 1 and the terms in p_j and x_2 vanish:
// φ = T, ∂_jφ = T1·x_j, ∂_j∂_jφ = T1 + u_j·x_j, ∂_j∂_kφ = u_j·x_k.
func cartesianComponentGo(e [3]int, t float64, pw [3][][]float64, rad, d1r, d2r []float64, np int, phi []float64, d1 *[3][]float64, d2 *[6][]float64, ld int) {
	if np == 0 {
		return
	}
	rx, ry, rz := pw[0][1][:np], pw[1][1][:np], pw[2][1][:np]
	rad, d1r = rad[:np], d1r[:np]
	if d2 != nil {
		d2r = d2r[:np]
	}
	if e == [3]int{} {
		for pt, r := range rad {
			o := pt * ld
			x, y, z := rx[pt], ry[pt], rz[pt]
			td1 := t * d1r[pt]
			phi[o] = t * r
			d1[0][o] = td1 * x
			d1[1][o] = td1 * y
			d1[2][o] = td1 * z
			if d2 == nil {
				continue
			}
			td2 := t * d2r[pt]
			ux, uy, uz := td2*x, td2*y, td2*z
			d2[0][o] = td1 + ux*x
			d2[1][o] = ux * y
			d2[2][o] = ux * z
			d2[3][o] = td1 + uy*y
			d2[4][o] = uy * z
			d2[5][o] = td1 + uz*z
		}
		return
	}
	var p0, p1, p2 [3][]float64
	var k1, k2 [3]float64
	for a := 0; a < 3; a++ {
		p0[a], p1[a], p2[a] = pw[a][e[a]][:np], pw[a][0][:np], pw[a][0][:np]
		if e[a] >= 1 {
			p1[a], k1[a] = pw[a][e[a]-1][:np], float64(e[a])
		}
		if e[a] >= 2 {
			p2[a], k2[a] = pw[a][e[a]-2][:np], float64(e[a]*(e[a]-1))
		}
	}
	for pt, r := range rad {
		o := pt * ld
		x0, y0, z0 := p0[0][pt], p0[1][pt], p0[2][pt]
		x1, y1, z1 := k1[0]*p1[0][pt], k1[1]*p1[1][pt], k1[2]*p1[2][pt]
		yz, xz, xy := y0*z0, x0*z0, x0*y0
		poly := x0 * yz
		px, py, pz := x1*yz, y1*xz, z1*xy
		trad := t * r
		td1 := t * d1r[pt]
		tpd1 := poly * td1
		x, y, z := rx[pt], ry[pt], rz[pt]
		phi[o] = poly * trad
		d1[0][o] = tpd1*x + px*trad
		d1[1][o] = tpd1*y + py*trad
		d1[2][o] = tpd1*z + pz*trad
		if d2 == nil {
			continue
		}
		tpd2 := poly * (t * d2r[pt])
		sx, sy, sz := px*td1, py*td1, pz*td1
		ux, uy, uz := tpd2*x+sx, tpd2*y+sy, tpd2*z+sz
		x2, y2, z2 := k2[0]*p2[0][pt], k2[1]*p2[1][pt], k2[2]*p2[2][pt]
		d2[0][o] = (x2*yz*trad + tpd1) + (ux+sx)*x
		d2[1][o] = (x1*y1*z0*trad + sy*x) + ux*y
		d2[2][o] = (x1*z1*y0*trad + sz*x) + ux*z
		d2[3][o] = (y2*xz*trad + tpd1) + (uy+sy)*y
		d2[4][o] = (y1*z1*x0*trad + sz*y) + uy*z
		d2[5][o] = (z2*xy*trad + tpd1) + (uz+sz)*z
	}
}
