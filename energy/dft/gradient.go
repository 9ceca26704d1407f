package dft

import (
	"context"
	"fmt"
	"math"
	"sync"

	"poise/energy/integral"
	"poise/energy/internal/kernel"
)

// Gradient returns the derivative of the exchange–correlation energy with
// respect to the nuclear coordinates, ∂E_xc/∂R_A for natoms atoms (Eh/bohr),
// for fixed density matrices dens (one total density, or α and β, as for
// Build). It is the derivative of the quadrature Σ_p w_p e(r_p) through the
// basis functions, which move with their atoms, at fixed grid points and
// weights (B. G. Johnson, P. M. W. Gill, J. A. Pople, J. Chem. Phys. 98,
// 5612 (1993), eqs. 8–12):
//
//	∂E/∂R_Aj = −2 Σ_p Σ_{μ∈A} [ ∂_jφ_μ T_pμ + Σ_k w_p g_pk ∂_j∂_kφ_μ U_pμ ]
//	U_pμ = Σ_ν D_μν φ_ν,   T_pμ = Σ_ν D_μν (w_p ∂e/∂ρ φ_ν + Σ_k w_p g_pk ∂_kφ_ν),
//
// per spin, with g_pk = ∂e/∂(∂_kρ) (2 ∂e/∂σ ∂_kρ for a closed shell,
// 2 ∂e/∂σ_σσ ∂_kρ_σ + ∂e/∂σ_αβ ∂_kρ_σ' per spin).
//
// The grid itself moves with the atoms in poise (each atom's points and
// Becke cell functions), and the derivative of that motion is left out:
// in the limit of an exact quadrature the motion of the points and the
// derivative of the cell functions cancel, and on a finite grid what
// remains is of the order of the grid error. The gradient package's tests
// show it below 1e-5 Eh/bohr against central differences of the energy on
// the default grid (about 1e-6 for water and formaldehyde at level 3). The
// price is a translational-invariance error of the same size: Σ_A ∂E/∂R_A
// is not exactly zero.
func (p *Potential) Gradient(ctx context.Context, dens [][]float64, natoms int) ([][3]float64, error) {
	n := p.b.NBF
	if len(dens) != 1 && len(dens) != 2 {
		return nil, fmt.Errorf("dft gradient: %d density matrices, want 1 or 2", len(dens))
	}
	for _, d := range dens {
		if len(d) != n*n {
			return nil, fmt.Errorf("dft gradient: density has %d elements, want %d", len(d), n*n)
		}
	}
	for si := range p.b.Shells {
		if a := p.b.Shells[si].Atom; a < 0 || a >= natoms {
			return nil, fmt.Errorf("dft gradient: shell %d sits on atom %d, outside 0…%d", si, a, natoms-1)
		}
	}
	for _, bt := range p.grid.Batches {
		if bt.Atom < 0 || bt.Atom >= natoms {
			return nil, fmt.Errorf("dft gradient: grid batch of atom %d, outside 0…%d", bt.Atom, natoms-1)
		}
	}
	factors := make([]densityFactor, len(dens))
	for s := range dens {
		factors[s] = factorDensity(dens[s], n)
	}
	nb := len(p.grid.Batches)
	const group = 512 // batches per group (small per-atom results): fixed, independent of threads
	results := make([][]float64, group)
	for i := range results {
		results[i] = make([]float64, 3*natoms)
	}
	total := make([]float64, 3*natoms)
	for start := 0; start < nb; start += group {
		end := min(start+group, nb)
		var wg sync.WaitGroup
		var mu sync.Mutex
		next := start
		workers := min(p.threads, end-start)
		for t := 0; t < workers; t++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				ws := &gradWorkspace{}
				for ctx.Err() == nil {
					mu.Lock()
					bi := next
					next++
					mu.Unlock()
					if bi >= end {
						return
					}
					r := results[bi-start]
					clear(r)
					p.gradBatch(ws, bi, dens, factors, r)
				}
			}()
		}
		wg.Wait()
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		for i := 0; i < end-start; i++ {
			for k, v := range results[i] {
				total[k] += v
			}
		}
	}
	out := make([][3]float64, natoms)
	for a := range out {
		out[a] = [3]float64{total[3*a], total[3*a+1], total[3*a+2]}
	}
	return out, nil
}

// gradWorkspace is per-goroutine scratch of the gradient.
type gradWorkspace struct {
	phi    []float64    // np×m values
	d1     [3][]float64 // np×m first derivatives x, y, z
	d2     [6][]float64 // np×m second derivatives xx, xy, xz, yy, yz, zz
	cart   []float64
	lim    []float64 // per primitive of a shell: screening bound on αr²
	rad    radialScratch
	pw     [3][16][]float64 // powers of the coordinates (evalDerivDiagonal)
	ones   []float64        // all ones: the rows 0 of pw
	ts     []float64        // the scales of a shell's functions (evalDerivDiagonal)
	t      []float64        // np×m: T = Z'D
	zp     []float64        // np×m: Z'
	colSum []float64        // 3m
	bd     batchDensities   // densities of the batch and their scratch
	coef   coefficients     // the functional on the batch
}

// gradBatch adds one batch's contribution to out (3·natoms).
func (p *Potential) gradBatch(ws *gradWorkspace, bi int, dens [][]float64, factors []densityFactor, out []float64) {
	g := p.grid
	bt := g.Batches[bi]
	np := bt.End - bt.Start
	shells := p.batchShells[bi]
	gga := p.fn.IsGGA()
	// Functions of the block and their atoms.
	var fns []int
	var fnAtom []int
	for _, si := range shells {
		sh := &p.b.Shells[si]
		off := p.b.Offsets[si]
		for f := 0; f < sh.NumFunctions(); f++ {
			fns = append(fns, off+f)
			fnAtom = append(fnAtom, sh.Atom)
		}
	}
	m := len(fns)
	if m == 0 {
		return
	}
	// Every element is written below: no clearing needed.
	ws.phi = resize(ws.phi, np*m)
	for k := range ws.d1 {
		ws.d1[k] = resize(ws.d1[k], np*m)
	}
	if gga {
		for k := range ws.d2 {
			ws.d2[k] = resize(ws.d2[k], np*m)
		}
	}
	evalFunctionDerivatives(p.b, ws, bt.Start, np, shells, m, gga, g.X, g.Y, g.Z)

	nspin := len(dens)
	w := g.W[bt.Start:bt.End]
	var d1 [3][]float64
	if gga {
		d1 = ws.d1
	}
	bd := &ws.bd
	batchDensity(bd, ws.phi, d1, np, m, fns, p.b.NBF, dens, factors)
	us := bd.u
	// Per spin and point: a = w ∂e/∂ρ_s, b_k = w ∂e/∂(∂_kρ_s).
	_, coefA, coefB := p.potentialCoefficients(&ws.coef, bd, w, np)

	// Fixed-point derivatives per function: colSum[3c+j] accumulates
	// Σ_p [∂_jφ_pc T_pc + Σ_k b_pk ∂_j∂_kφ_pc U_pc] over points and spins,
	// point by point along the rows of the row-major blocks.
	ws.zp = grow(ws.zp, np*m)
	ws.t = grow(ws.t, np*m)
	ws.colSum = grow(ws.colSum, 3*m)
	colSum := ws.colSum
	for s := 0; s < nspin; s++ {
		// Z'_pν = a_p φ_pν + Σ_k b_pk ∂_kφ_pν; T = Z' D.
		for pt := 0; pt < np; pt++ {
			a := coefA[s][pt]
			zr := ws.zp[pt*m : pt*m+m]
			pr := ws.phi[pt*m : pt*m+m]
			if gga {
				b0, b1, b2 := coefB[s][0][pt], coefB[s][1][pt], coefB[s][2][pt]
				xr, yr, zz := ws.d1[0][pt*m:pt*m+m], ws.d1[1][pt*m:pt*m+m], ws.d1[2][pt*m:pt*m+m]
				for c := range zr {
					zr[c] = a*pr[c] + b0*xr[c] + b1*yr[c] + b2*zz[c]
				}
			} else {
				for c := range zr {
					zr[c] = a * pr[c]
				}
			}
		}
		bd.mulD(s, ws.zp, np, m, ws.t) // T = Z'D
		u := us[s]
		for pt := 0; pt < np; pt++ {
			lo, hi := pt*m, pt*m+m
			tr := ws.t[lo:hi]
			xr, yr, zr := ws.d1[0][lo:hi], ws.d1[1][lo:hi], ws.d1[2][lo:hi]
			if !gga {
				for c, tv := range tr {
					cs := colSum[3*c : 3*c+3]
					cs[0] += xr[c] * tv
					cs[1] += yr[c] * tv
					cs[2] += zr[c] * tv
				}
				continue
			}
			b0, b1, b2 := coefB[s][0][pt], coefB[s][1][pt], coefB[s][2][pt]
			ur := u[lo:hi]
			hxx, hxy, hxz := ws.d2[0][lo:hi], ws.d2[1][lo:hi], ws.d2[2][lo:hi]
			hyy, hyz, hzz := ws.d2[3][lo:hi], ws.d2[4][lo:hi], ws.d2[5][lo:hi]
			for c, tv := range tr {
				uv := ur[c]
				cs := colSum[3*c : 3*c+3]
				cs[0] += xr[c]*tv + uv*(b0*hxx[c]+b1*hxy[c]+b2*hxz[c])
				cs[1] += yr[c]*tv + uv*(b0*hxy[c]+b1*hyy[c]+b2*hyz[c])
				cs[2] += zr[c]*tv + uv*(b0*hxz[c]+b1*hyz[c]+b2*hzz[c])
			}
		}
	}
	for c := 0; c < m; c++ {
		a := fnAtom[c]
		for j := 0; j < 3; j++ {
			out[3*a+j] -= 2 * colSum[3*c+j]
		}
	}
}

// evalFunctionDerivatives fills ws.phi, ws.d1 and, with second set, ws.d2
// for np points from start with the functions of the given shells (columns
// in shell order).
func evalFunctionDerivatives(b *integral.Basis, ws *gradWorkspace, start, np int, shells []int32, m int, second bool, gx, gy, gz []float64) {
	col := 0
	for _, si := range shells {
		sh := &b.Shells[si]
		l := sh.L
		coefs := b.ShellCoefficients(int(si))
		trans := b.ShellTransform(int(si))
		comps := integral.CartesianExponents(l)
		nc := len(comps)
		nf := sh.NumFunctions()
		ws.cart = grow(ws.cart, 10*nc)
		cv := ws.cart[:nc]
		var c1 [3][]float64
		var c2 [6][]float64
		for k := 0; k < 3; k++ {
			c1[k] = ws.cart[(1+k)*nc : (2+k)*nc]
		}
		for k := 0; k < 6; k++ {
			c2[k] = ws.cart[(4+k)*nc : (5+k)*nc]
		}
		cx, cy, cz := sh.Center[0], sh.Center[1], sh.Center[2]
		// A primitive whose terms |c|·max(1, 2α, 4α²)·e^{−αr²} in rad, d1r
		// and d2r are all below primitiveCutoff is left out (as in
		// evalFunctions): skip it when αr² exceeds lim.
		if cap(ws.lim) < len(sh.Exponents) {
			ws.lim = make([]float64, len(sh.Exponents))
		}
		lim := ws.lim[:len(sh.Exponents)]
		for k, a := range sh.Exponents {
			lim[k] = math.Log(math.Abs(coefs[k]) * max(1, 2*a, 4*a*a) / primitiveCutoff)
		}
		// rad = Σ c e^{−αr²}; d1r = Σ −2α c e^{−αr²}; d2r = Σ 4α² c e^{−αr²}:
		// ∂_j rad = d1r r_j, ∂_j∂_k rad = d1r δ_jk + d2r r_j r_k; at every
		// point, one primitive at a time (exponentials by the vector kernel).
		rs := ws.rad.reset(np)
		for pt := 0; pt < np; pt++ {
			i := start + pt
			dx, dy, dz := gx[i]-cx, gy[i]-cy, gz[i]-cz
			rs.r2[pt] = dx*dx + dy*dy + dz*dz
		}
		for k, a := range sh.Exponents {
			if !rs.primitive(a, lim[k]) {
				continue
			}
			c := coefs[k]
			for pt, x := range rs.ex {
				if a*rs.r2[pt] > lim[k] {
					continue
				}
				ex := c * x
				rs.f0[pt] += ex
				rs.f1[pt] -= 2 * a * ex
				rs.f2[pt] += 4 * a * a * ex
			}
		}
		if diagonalTransform(trans, nf, nc) {
			// Cartesian shells (s, p, Cartesian d…): one scaled component
			// per function, evaluated component by component over the points.
			evalDerivDiagonal(ws, rs, gx[start:start+np], gy[start:start+np], gz[start:start+np], sh.Center, comps, trans, col, np, m, second)
			col += nf
			continue
		}
		var pw [3][16]float64
		for pt := 0; pt < np; pt++ {
			i := start + pt
			r := [3]float64{gx[i] - cx, gy[i] - cy, gz[i] - cz}
			rad, d1r, d2r := rs.f0[pt], rs.f1[pt], rs.f2[pt]
			if math.Abs(rad) < 1e-300 && math.Abs(d1r) < 1e-300 {
				// Zeros (the blocks are not cleared beforehand).
				row := pt * m
				for f := 0; f < nf; f++ {
					ws.phi[row+col+f] = 0
					for k := 0; k < 3; k++ {
						ws.d1[k][row+col+f] = 0
					}
					if second {
						for k := 0; k < 6; k++ {
							ws.d2[k][row+col+f] = 0
						}
					}
				}
				continue
			}
			for k := 0; k < 3; k++ {
				pw[k][0] = 1
				for e := 1; e <= l; e++ {
					pw[k][e] = pw[k][e-1] * r[k]
				}
			}
			for c, e := range comps {
				// Monomial P = Πx_k^{e_k}, its derivatives P_j and P_jk.
				var mono [3]float64 // x_k^{e_k}
				var dm [3]float64   // e_k x_k^{e_k−1}
				var ddm [3]float64  // e_k(e_k−1) x_k^{e_k−2}
				for k := 0; k < 3; k++ {
					ek := e[k]
					mono[k] = pw[k][ek]
					if ek >= 1 {
						dm[k] = float64(ek) * pw[k][ek-1]
					}
					if ek >= 2 {
						ddm[k] = float64(ek*(ek-1)) * pw[k][ek-2]
					}
				}
				poly := mono[0] * mono[1] * mono[2]
				cv[c] = poly * rad
				var pj [3]float64
				pj[0] = dm[0] * mono[1] * mono[2]
				pj[1] = mono[0] * dm[1] * mono[2]
				pj[2] = mono[0] * mono[1] * dm[2]
				for j := 0; j < 3; j++ {
					c1[j][c] = pj[j]*rad + poly*d1r*r[j]
				}
				if second {
					for j := 0; j < 3; j++ {
						for k := j; k < 3; k++ {
							var pjk float64
							if j == k {
								switch j {
								case 0:
									pjk = ddm[0] * mono[1] * mono[2]
								case 1:
									pjk = mono[0] * ddm[1] * mono[2]
								default:
									pjk = mono[0] * mono[1] * ddm[2]
								}
							} else {
								q := [3]float64{mono[0], mono[1], mono[2]}
								q[j] = dm[j]
								q[k] = dm[k]
								pjk = q[0] * q[1] * q[2]
							}
							v := pjk*rad + (pj[j]*r[k]+pj[k]*r[j])*d1r + poly*d2r*r[j]*r[k]
							if j == k {
								v += poly * d1r
							}
							c2[j*(5-j)/2+k][c] = v // packed xx xy xz yy yz zz
						}
					}
				}
			}
			row := pt * m
			for f := 0; f < nf; f++ {
				tr := trans[f*nc : f*nc+nc]
				var s float64
				var s1 [3]float64
				var s2 [6]float64
				for c, t := range tr {
					if t == 0 {
						continue
					}
					s += t * cv[c]
					for k := 0; k < 3; k++ {
						s1[k] += t * c1[k][c]
					}
					if second {
						for k := 0; k < 6; k++ {
							s2[k] += t * c2[k][c]
						}
					}
				}
				ws.phi[row+col+f] = s
				for k := 0; k < 3; k++ {
					ws.d1[k][row+col+f] = s1[k]
				}
				if second {
					for k := 0; k < 6; k++ {
						ws.d2[k][row+col+f] = s2[k]
					}
				}
			}
		}
		col += nf
	}
}

// evalDerivDiagonal is evalFunctionDerivatives for one shell with a
// diagonal transform whose radial sums are in rs (as the general path,
// faster, agreeing with it to rounding): function c is t_c P(r) R(r) with
// the monomial P = x^{e0} y^{e1} z^{e2}, evaluated at the np points gx, gy,
// gz by the vector kernel kernel.CartesianDerivatives (all the functions of
// a few points at a time) into columns col… of the point-major blocks of
// width m.
func evalDerivDiagonal(ws *gradWorkspace, rs *radialScratch, gx, gy, gz []float64, center [3]float64, comps [][3]int, trans []float64, col, np, m int, second bool) {
	nc := len(comps)
	l := 0
	for _, e := range comps {
		l = max(l, e[0]+e[1]+e[2])
	}
	// Points where the radial part and its first derivative vanish give
	// zeros, as in the general path.
	f0, f1, f2 := rs.f0[:np], rs.f1[:np], rs.f2[:np]
	for pt := range f0 {
		if math.Abs(f0[pt]) < 1e-300 && math.Abs(f1[pt]) < 1e-300 {
			f0[pt], f1[pt], f2[pt] = 0, 0, 0
		}
	}
	n := max(l, 1) + 1
	one := onesRow(&ws.ones, np)
	for axis, bc := range [3][]float64{gx[:np], gy[:np], gz[:np]} {
		ws.pw[axis][0] = one
		for k := 1; k < n; k++ {
			ws.pw[axis][k] = resize(ws.pw[axis][k], np)
		}
		d := ws.pw[axis][1]
		for pt, v := range bc {
			d[pt] = v - center[axis]
		}
		for k := 2; k < n; k++ {
			prev, cur := ws.pw[axis][k-1], ws.pw[axis][k]
			for pt, v := range d {
				cur[pt] = prev[pt] * v
			}
		}
	}
	tab := [3][][]float64{ws.pw[0][:], ws.pw[1][:], ws.pw[2][:]}
	ws.ts = ws.ts[:0]
	for c := range comps {
		ws.ts = append(ws.ts, trans[c*nc+c])
	}
	d1 := [3][]float64{ws.d1[0][col:], ws.d1[1][col:], ws.d1[2][col:]}
	if !second {
		kernel.CartesianDerivatives(comps, ws.ts, tab, f0, f1, f2, np, ws.phi[col:], &d1, nil, m)
		return
	}
	var d2 [6][]float64
	for k := range d2 {
		d2[k] = ws.d2[k][col:]
	}
	kernel.CartesianDerivatives(comps, ws.ts, tab, f0, f1, f2, np, ws.phi[col:], &d1, &d2, m)
}
