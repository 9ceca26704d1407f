package dft

import (
	"context"
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/mat"

	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/xc"
)

// functionCutoff is the value below which a basis function is treated as
// zero on a batch of grid points.
const functionCutoff = 1e-11

// Potential evaluates the exchange–correlation energy and Kohn–Sham matrix
// of one functional on one grid for one basis.
type Potential struct {
	fn      *xc.Functional
	grid    *grid.Grid
	b       *integral.Basis
	threads int
	extent  []float64 // per shell: radius beyond which it is below functionCutoff
	// Per batch: the shells that reach it (fixed for a geometry).
	batchShells [][]int32
	// group is the number of batches whose results are held before they
	// are added in order: as many as fit in groupBytes (at least 16, at
	// most 512), a property of the system, never of the thread count.
	group int
}

// groupBytes bounds the memory of the per-batch potential blocks held at
// once by Build.
const groupBytes = 64 << 20

// New prepares the exchange–correlation build. threads ≤ 0 means all cores.
func New(fn *xc.Functional, g *grid.Grid, b *integral.Basis, threads int) *Potential {
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	p := &Potential{fn: fn, grid: g, b: b, threads: threads}
	p.extent = make([]float64, len(b.Shells))
	for i := range b.Shells {
		p.extent[i] = shellExtent(b.Shells[i].L, b.Shells[i].Exponents, b.ShellCoefficients(i))
	}
	p.batchShells = make([][]int32, len(g.Batches))
	for bi, bt := range g.Batches {
		for si := range b.Shells {
			c := b.Shells[si].Center
			dx, dy, dz := c[0]-bt.Center[0], c[1]-bt.Center[1], c[2]-bt.Center[2]
			if math.Sqrt(dx*dx+dy*dy+dz*dz)-bt.Radius < p.extent[si] {
				p.batchShells[bi] = append(p.batchShells[bi], int32(si))
			}
		}
	}
	maxM := 1
	for _, sh := range p.batchShells {
		m := 0
		for _, si := range sh {
			m += b.Shells[si].NumFunctions()
		}
		maxM = max(maxM, m)
	}
	p.group = min(512, max(16, groupBytes/(16*maxM*maxM)))
	return p
}

// ExactExchange is the functional's fraction of exact exchange.
func (p *Potential) ExactExchange() float64 { return p.fn.ExactExchange() }

// shellExtent returns the distance beyond which Σ|c| r^l e^{−αr²} (an
// upper bound of every component of the shell, up to the angular factor
// ≤ 1 of normalized harmonics times a modest constant) stays below
// functionCutoff.
func shellExtent(l int, exps, coefs []float64) float64 {
	f := func(r float64) float64 {
		var s float64
		for i, a := range exps {
			s += math.Abs(coefs[i]) * math.Pow(r, float64(l)) * math.Exp(-a*r*r)
		}
		return s
	}
	r := 60.0
	for r > 0 && f(r) < functionCutoff {
		r -= 0.1
	}
	return r + 0.1
}

// batchResult is one batch's contribution, added to the totals in batch
// order.
type batchResult struct {
	fns []int       // global function indices of the block
	v   [][]float64 // per spin: len(fns)² potential block
	exc float64
	nel float64
}

// Build evaluates the exchange–correlation energy for the densities (one
// total density, or α and β) and adds the potential into v. It returns the
// energy and the integrated electron count.
func (p *Potential) Build(ctx context.Context, dens [][]float64, v [][]float64) (float64, float64, error) {
	nb := len(p.grid.Batches)
	group := p.group
	results := make([]batchResult, group)
	var exc, nel float64
	n := p.b.NBF
	for start := 0; start < nb; start += group {
		end := start + group
		if end > nb {
			end = nb
		}
		var wg sync.WaitGroup
		var mu sync.Mutex
		next := start
		workers := p.threads
		if workers > end-start {
			workers = end - start
		}
		for t := 0; t < workers; t++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				ws := &workspace{}
				for ctx.Err() == nil {
					mu.Lock()
					bi := next
					next++
					mu.Unlock()
					if bi >= end {
						return
					}
					results[bi-start] = p.batch(ws, bi, dens)
				}
			}()
		}
		wg.Wait()
		if err := ctx.Err(); err != nil {
			return 0, 0, err
		}
		for i := 0; i < end-start; i++ {
			r := &results[i]
			exc += r.exc
			nel += r.nel
			m := len(r.fns)
			for s := range r.v {
				vs := v[s]
				blk := r.v[s]
				for a := 0; a < m; a++ {
					row := r.fns[a] * n
					for b := 0; b < m; b++ {
						vs[row+r.fns[b]] += blk[a*m+b]
					}
				}
			}
			results[i] = batchResult{}
		}
	}
	return exc, nel, nil
}

// workspace is per-goroutine scratch.
type workspace struct {
	phi, gx, gy, gz []float64
	cart            []float64
	buf             []float64
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	s = s[:n]
	clear(s)
	return s
}

// batch computes one batch's contribution.
func (p *Potential) batch(ws *workspace, bi int, dens [][]float64) batchResult {
	g := p.grid
	bt := g.Batches[bi]
	np := bt.End - bt.Start
	shells := p.batchShells[bi]
	gga := p.fn.IsGGA()
	// Function indices of the block.
	var fns []int
	for _, si := range shells {
		off := p.b.Offsets[si]
		for f := 0; f < p.b.Shells[si].NumFunctions(); f++ {
			fns = append(fns, off+f)
		}
	}
	m := len(fns)
	res := batchResult{fns: fns}
	if m == 0 {
		return res
	}
	ws.phi = grow(ws.phi, np*m)
	if gga {
		ws.gx = grow(ws.gx, np*m)
		ws.gy = grow(ws.gy, np*m)
		ws.gz = grow(ws.gz, np*m)
	}
	p.evalFunctions(ws, bt.Start, np, shells, m, gga)

	nspin := len(dens)
	var d1 [3][]float64
	if gga {
		d1 = [3][]float64{ws.gx, ws.gy, ws.gz}
	}
	bd := batchDensity(ws.phi, d1, np, m, fns, p.b.NBF, dens)
	rho := bd.rho
	phiM := mat.NewDense(np, m, ws.phi)
	w := g.W[bt.Start:bt.End]
	e, coefA, coefB := p.potentialCoefficients(bd, w, np)
	// zcoef[s] holds, per point, the coefficients of φ (index 0) and of
	// ∇φ (1..3) in Z_pμ for spin s.
	zcoef := make([][4][]float64, nspin)
	for s := range zcoef {
		zcoef[s][0] = coefA[s]
		for pt := range coefA[s] {
			coefA[s][pt] *= 0.5
		}
		if gga {
			zcoef[s][1], zcoef[s][2], zcoef[s][3] = coefB[s][0], coefB[s][1], coefB[s][2]
		}
		for pt := 0; pt < np; pt++ {
			res.nel += w[pt] * rho[s][pt]
		}
	}
	for pt := 0; pt < np; pt++ {
		res.exc += w[pt] * e[pt]
	}
	// V = φᵀZ + Zᵀφ per spin.
	res.v = make([][]float64, nspin)
	z := make([]float64, np*m)
	for s := 0; s < nspin; s++ {
		for pt := 0; pt < np; pt++ {
			c0 := zcoef[s][0][pt]
			zr := z[pt*m : pt*m+m]
			pr := ws.phi[pt*m : pt*m+m]
			for a := range zr {
				zr[a] = c0 * pr[a]
			}
			if gga {
				cx, cy, cz := zcoef[s][1][pt], zcoef[s][2][pt], zcoef[s][3][pt]
				gxr, gyr, gzr := ws.gx[pt*m:pt*m+m], ws.gy[pt*m:pt*m+m], ws.gz[pt*m:pt*m+m]
				for a := range zr {
					zr[a] += cx*gxr[a] + cy*gyr[a] + cz*gzr[a]
				}
			}
		}
		vb := make([]float64, m*m)
		mat.NewDense(m, m, vb).Mul(phiM.T(), mat.NewDense(np, m, z))
		for a := 0; a < m; a++ {
			for b := 0; b < a; b++ {
				t := vb[a*m+b] + vb[b*m+a]
				vb[a*m+b], vb[b*m+a] = t, t
			}
			vb[a*m+a] *= 2
		}
		res.v[s] = vb
	}
	return res
}

// evalFunctions fills ws.phi (and gradients) for np points from start with
// the functions of the given shells (columns in shell order).
func (p *Potential) evalFunctions(ws *workspace, start, np int, shells []int32, m int, gga bool) {
	g := p.grid
	col := 0
	for _, si := range shells {
		sh := &p.b.Shells[si]
		l := sh.L
		coefs := p.b.ShellCoefficients(int(si))
		trans := p.b.ShellTransform(int(si))
		comps := integral.CartesianExponents(l)
		nc := len(comps)
		nf := sh.NumFunctions()
		ws.cart = grow(ws.cart, 4*nc)
		cv := ws.cart[:nc]
		cgx, cgy, cgz := ws.cart[nc:2*nc], ws.cart[2*nc:3*nc], ws.cart[3*nc:4*nc]
		cx, cy, cz := sh.Center[0], sh.Center[1], sh.Center[2]
		var px, py, pz [16]float64
		for pt := 0; pt < np; pt++ {
			i := start + pt
			dx, dy, dz := g.X[i]-cx, g.Y[i]-cy, g.Z[i]-cz
			r2 := dx*dx + dy*dy + dz*dz
			var rad, drad float64 // radial part and its derivative d/d(r²)·2
			for k, a := range sh.Exponents {
				ex := coefs[k] * math.Exp(-a*r2)
				rad += ex
				drad -= 2 * a * ex
			}
			if math.Abs(rad) < 1e-300 && math.Abs(drad) < 1e-300 {
				continue
			}
			px[0], py[0], pz[0] = 1, 1, 1
			for k := 1; k <= l+1; k++ {
				px[k], py[k], pz[k] = px[k-1]*dx, py[k-1]*dy, pz[k-1]*dz
			}
			for c, e := range comps {
				poly := px[e[0]] * py[e[1]] * pz[e[2]]
				cv[c] = poly * rad
				if gga {
					var ddx, ddy, ddz float64
					if e[0] > 0 {
						ddx = float64(e[0]) * px[e[0]-1] * py[e[1]] * pz[e[2]]
					}
					if e[1] > 0 {
						ddy = float64(e[1]) * px[e[0]] * py[e[1]-1] * pz[e[2]]
					}
					if e[2] > 0 {
						ddz = float64(e[2]) * px[e[0]] * py[e[1]] * pz[e[2]-1]
					}
					cgx[c] = ddx*rad + poly*drad*dx
					cgy[c] = ddy*rad + poly*drad*dy
					cgz[c] = ddz*rad + poly*drad*dz
				}
			}
			row := pt * m
			for f := 0; f < nf; f++ {
				tr := trans[f*nc : f*nc+nc]
				var s, sx, sy, sz float64
				for c, t := range tr {
					if t == 0 {
						continue
					}
					s += t * cv[c]
					if gga {
						sx += t * cgx[c]
						sy += t * cgy[c]
						sz += t * cgz[c]
					}
				}
				ws.phi[row+col+f] = s
				if gga {
					ws.gx[row+col+f] = sx
					ws.gy[row+col+f] = sy
					ws.gz[row+col+f] = sz
				}
			}
		}
		col += nf
	}
}

// batchDensities are the densities of one batch of points, per spin.
type batchDensities struct {
	rho  [][]float64    // ρ_s at the points
	grad [][3][]float64 // ∇ρ_s (GGA only)
	dsub [][]float64    // the m×m block of D_s over the batch's functions
	u    [][]float64    // U = φ·D_sub (np×m), reused by the gradient
}

// batchDensity forms ρ_s = Σ_μν D_μν φ_μ φ_ν and, when d1 (the first
// derivatives of the functions, np×m each) is given, ∇ρ_s = 2 Σ_μν D_μν
// φ_μ ∇φ_ν at the np points whose function values (np×m) are phi, for the
// m functions fns of a basis of n.
func batchDensity(phi []float64, d1 [3][]float64, np, m int, fns []int, n int, dens [][]float64) batchDensities {
	nspin := len(dens)
	gga := d1[0] != nil
	out := batchDensities{
		rho:  make([][]float64, nspin),
		grad: make([][3][]float64, nspin),
		dsub: make([][]float64, nspin),
		u:    make([][]float64, nspin),
	}
	phiM := mat.NewDense(np, m, phi)
	for s := 0; s < nspin; s++ {
		dsub := make([]float64, m*m)
		for a := 0; a < m; a++ {
			row := fns[a] * n
			for b := 0; b < m; b++ {
				dsub[a*m+b] = dens[s][row+fns[b]]
			}
		}
		u := make([]float64, np*m)
		mat.NewDense(np, m, u).Mul(phiM, mat.NewDense(m, m, dsub))
		r := make([]float64, np)
		var gr [3][]float64
		if gga {
			for k := range gr {
				gr[k] = make([]float64, np)
			}
		}
		for pt := 0; pt < np; pt++ {
			ur := u[pt*m : pt*m+m]
			pr := phi[pt*m : pt*m+m]
			var sr float64
			for a, uv := range ur {
				sr += uv * pr[a]
			}
			r[pt] = sr
			if gga {
				for k := 0; k < 3; k++ {
					dr := d1[k][pt*m : pt*m+m]
					var sk float64
					for a, uv := range ur {
						sk += uv * dr[a]
					}
					gr[k][pt] = 2 * sk
				}
			}
		}
		out.rho[s], out.grad[s], out.dsub[s], out.u[s] = r, gr, dsub, u
	}
	return out
}

// potentialCoefficients evaluates the functional at the points of a batch
// and returns the energy density e and, per spin, a_s = w ∂e/∂ρ_s and (GGA)
// the vector b_s = w ∂e/∂(∇ρ_s): 2 ∂e/∂σ ∇ρ for a total density,
// 2 ∂e/∂σ_ss ∇ρ_s + ∂e/∂σ_αβ ∇ρ_s' for spin densities.
func (p *Potential) potentialCoefficients(bd batchDensities, w []float64, np int) (e []float64, a [][]float64, b [][3][]float64) {
	gga := p.fn.IsGGA()
	rho, grad := bd.rho, bd.grad
	nspin := len(rho)
	e = make([]float64, np)
	a = make([][]float64, nspin)
	b = make([][3][]float64, nspin)
	for s := 0; s < nspin; s++ {
		a[s] = make([]float64, np)
		if gga {
			for k := 0; k < 3; k++ {
				b[s][k] = make([]float64, np)
			}
		}
	}
	if nspin == 1 {
		var sigma, vsigma []float64
		if gga {
			sigma = make([]float64, np)
			vsigma = make([]float64, np)
			for pt := 0; pt < np; pt++ {
				gx, gy, gz := grad[0][0][pt], grad[0][1][pt], grad[0][2][pt]
				sigma[pt] = gx*gx + gy*gy + gz*gz
			}
		}
		p.fn.EvalUnpolarized(np, rho[0], sigma, e, a[0], vsigma)
		for pt := 0; pt < np; pt++ {
			a[0][pt] *= w[pt]
			if gga {
				f := 2 * w[pt] * vsigma[pt]
				for k := 0; k < 3; k++ {
					b[0][k][pt] = f * grad[0][k][pt]
				}
			}
		}
		return e, a, b
	}
	var saa, sab, sbb, vaa, vab, vbb []float64
	if gga {
		saa, sab, sbb = make([]float64, np), make([]float64, np), make([]float64, np)
		vaa, vab, vbb = make([]float64, np), make([]float64, np), make([]float64, np)
		for pt := 0; pt < np; pt++ {
			ax, ay, az := grad[0][0][pt], grad[0][1][pt], grad[0][2][pt]
			bx, by, bz := grad[1][0][pt], grad[1][1][pt], grad[1][2][pt]
			saa[pt] = ax*ax + ay*ay + az*az
			sab[pt] = ax*bx + ay*by + az*bz
			sbb[pt] = bx*bx + by*by + bz*bz
		}
	}
	p.fn.EvalPolarized(np, rho[0], rho[1], saa, sab, sbb, e, a[0], a[1], vaa, vab, vbb)
	for pt := 0; pt < np; pt++ {
		a[0][pt] *= w[pt]
		a[1][pt] *= w[pt]
		if gga {
			for k := 0; k < 3; k++ {
				ga, gb := grad[0][k][pt], grad[1][k][pt]
				b[0][k][pt] = w[pt] * (2*vaa[pt]*ga + vab[pt]*gb)
				b[1][k][pt] = w[pt] * (2*vbb[pt]*gb + vab[pt]*ga)
			}
		}
	}
	return e, a, b
}
