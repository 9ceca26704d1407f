package dft

import (
	"context"
	"math"
	"runtime"
	"sync"

	"poise/energy/buffer"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/internal/kernel"
	"poise/energy/xc"
)

// functionCutoff is the value below which a basis function is treated as
// zero on a batch of grid points. 1e-9 (common practice for basis-function
// screening on grids is 1e-9 to 1e-11): against 1e-11, it keeps 9 % fewer
// functions per batch for aspirin (116.5 instead of 128.6 on average;
// 16 % fewer products m²) and moves the benzene B3LYP/6-31G* energy by
// 2.4e-11 Eh, a hundredth of the SCF's own energy tolerance.
const functionCutoff = 1e-9

// primitiveCutoff is the size below which a primitive Gaussian's term in a
// basis function's radial part (or its derivative) is left out: ten orders
// of magnitude below functionCutoff, so no retained value moves by more
// than 1e-20.
const primitiveCutoff = 1e-20

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

	// CacheBytes bounds the memory of the basis-function values (and, for a
	// GGA, their first derivatives) that Build keeps from one call to the
	// next: the values depend only on the grid and the basis, which are
	// fixed for a Potential, while an SCF calls Build once per iteration.
	// Batches are taken in order while they fit; the others are evaluated
	// anew on every call. Zero means DefaultCacheBytes; a negative value
	// keeps nothing. Set it before the first Build; it does not change
	// results. The memory is freed with the Potential, or by ReleaseCache.
	CacheBytes int64
	// Buffers, if set, lends the memory of the stored values (taken on the
	// first Build, handed back by ReleaseCache), so that successive
	// geometries reuse it instead of faulting in fresh pages. The values
	// are written before they are read, so this does not change results.
	Buffers *buffer.Pool
	cache   []batchValues // per batch; vals nil until stored
	cached  []bool        // per batch: store its values
	// slab holds the stored values of all cached batches, batch bi from
	// slabOff[bi] with room for all functions of its shells: the values
	// are evaluated there in place, and it is one allocation that can be
	// backed by huge pages (buffer.Pool.Get).
	slab    []float64
	slabOff []int
	// Scratch kept from one Build to the next: the potential blocks of one
	// group of batches and the per-thread workspaces.
	results []batchResult
	wss     []*workspace
}

// groupBytes bounds the memory of the per-batch potential blocks held at
// once by Build.
const groupBytes = 64 << 20

// New prepares the exchange–correlation build. threads ≤ 0 means all cores.
// The Potential belongs to one geometry: g and b must not be changed while
// it is in use (it screens shells per batch here and keeps function values
// between Builds).
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
// order. Its buffers are reused from group to group.
type batchResult struct {
	fns []int32     // global function indices of the block
	v   [][]float64 // per spin: len(fns)² potential block
	exc float64
	nel float64
}

// Build evaluates the exchange–correlation energy for the densities (one
// total density, or α and β) and adds the potential into v. It returns the
// energy and the integrated electron count.
//
// The first Build of a Potential also stores the basis-function values of
// as many batches as CacheBytes allows (see there); later Builds reuse them.
// Build is not safe for concurrent use on one Potential.
func (p *Potential) Build(ctx context.Context, dens [][]float64, v [][]float64) (float64, float64, error) {
	p.prepareCache()
	factors := make([]densityFactor, len(dens))
	for s := range dens {
		factors[s] = factorDensity(dens[s], p.b.NBF)
	}
	nb := len(p.grid.Batches)
	group := p.group
	if len(p.results) != group {
		p.results = make([]batchResult, group)
	}
	results := p.results
	for i := range results {
		for len(results[i].v) < len(dens) {
			results[i].v = append(results[i].v, nil)
		}
		results[i].v = results[i].v[:len(dens)]
	}
	for len(p.wss) < p.threads {
		p.wss = append(p.wss, &workspace{})
	}
	wss := p.wss
	var exc, nel float64
	n := p.b.NBF
	for start := 0; start < nb; start += group {
		end := min(start+group, nb)
		var wg sync.WaitGroup
		var mu sync.Mutex
		next := start
		workers := min(p.threads, end-start)
		for t := 0; t < workers; t++ {
			wg.Add(1)
			go func(ws *workspace) {
				defer wg.Done()
				for ctx.Err() == nil {
					mu.Lock()
					bi := next
					next++
					mu.Unlock()
					if bi >= end {
						return
					}
					p.batch(ws, bi, dens, factors, &results[bi-start])
				}
			}(wss[t])
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
					row := int(r.fns[a]) * n
					br := blk[a*m : a*m+m]
					for b, x := range br {
						vs[row+int(r.fns[b])] += x
					}
				}
			}
		}
	}
	return exc, nel, nil
}

// CacheBytesFor is the share of a run's memory budget that the stored
// basis-function values of a basis of nbf functions may take: a quarter,
// plus the part of the in-core electron-repulsion integrals' half that
// they cannot use — the half less an upper bound on their size for nbf
// functions (maxERIBytes), when that is positive. Together the two stay
// within three quarters of the budget. A budget of 0 (none given) gives
// 0, which leaves DefaultCacheBytes.
func CacheBytesFor(memoryBytes int64, nbf int) int64 {
	if memoryBytes <= 0 {
		return 0
	}
	return max(memoryBytes/4+max(memoryBytes/2-maxERIBytes(nbf), 0), 1)
}

// CacheBytesFitted is CacheBytesFor for a density-fitted calculation,
// which keeps no four-centre integrals: three quarters of the budget less
// fitBytes, what the fit holds while the values are stored
// (fit.HeldBytes; they are freed before its gradient), but at least
// the quarter of CacheBytesFor. A budget of 0 gives 0.
func CacheBytesFitted(memoryBytes, fitBytes int64) int64 {
	if memoryBytes <= 0 {
		return 0
	}
	return max(memoryBytes/4, memoryBytes/4*3-fitBytes, 1)
}

// maxERIBytes bounds the memory of the stored integrals of nbf functions:
// canonical shell quartets of shell pairs p ≥ r hold w_p·w_r values, with
// Σ_p w_p ≤ P = (nbf² + 15·nbf)/2 over the pairs i ≥ j (shells of at most
// 15 functions) and w_p ≤ 225, so at most (P² + 225·P)/2 values of 8 bytes.
func maxERIBytes(nbf int) int64 {
	n := float64(nbf)
	p := (n*n + 15*n) / 2
	b := 8 * (p*p + 225*p) / 2
	if b > 1<<62 {
		return 1 << 62
	}
	return int64(b)
}

// DefaultCacheBytes is the memory budget for stored basis-function values
// used when Potential.CacheBytes is zero.
const DefaultCacheBytes = 512 << 20

// batchValues are the basis-function values of one batch: the functions
// that are not negligible on it and, function-major (one row of np points
// per function), their values and, for a GGA, their x, y and z derivatives.
type batchValues struct {
	fns  []int32   // global indices of the kept functions
	vals []float64 // nv blocks of len(fns)×np: φ, ∂xφ, ∂yφ, ∂zφ
}

// prepareCache decides, once per Potential, which batches keep their
// function values: the first ones, in batch order, whose upper-bound size
// (all functions of the shells that reach the batch) still fits in the
// budget. The choice depends on the grid and basis only.
func (p *Potential) prepareCache() {
	if p.cache != nil {
		return
	}
	p.cache = make([]batchValues, len(p.grid.Batches))
	p.cached = make([]bool, len(p.grid.Batches))
	budget := p.CacheBytes
	if budget == 0 {
		budget = DefaultCacheBytes
	}
	nv := int64(1)
	if p.fn.IsGGA() {
		nv = 4
	}
	var used int64
	p.slabOff = make([]int, len(p.grid.Batches))
	total := 0
	for bi, bt := range p.grid.Batches {
		m := 0
		for _, si := range p.batchShells[bi] {
			m += p.b.Shells[si].NumFunctions()
		}
		size := 8*nv*int64(m)*int64(bt.End-bt.Start) + 4*int64(m)
		if used+size > budget {
			continue
		}
		used += size
		p.cached[bi] = true
		p.slabOff[bi] = total
		total += int(nv) * m * (bt.End - bt.Start)
	}
	if total > 0 {
		p.slab = p.Buffers.Get(total) // on huge pages (buffer.Pool.Get)
	}
}

// ReleaseCache frees the stored function values (for the memory of what
// follows an SCF, such as a gradient, which does not use them), handing
// their memory back to Buffers. Later Builds evaluate every batch anew
// and store nothing.
func (p *Potential) ReleaseCache() {
	if p.cache == nil { // no Build yet: decide now to store nothing
		p.cache = make([]batchValues, len(p.grid.Batches))
		p.cached = make([]bool, len(p.grid.Batches))
	}
	p.Buffers.Put(p.slab)
	p.slab, p.slabOff = nil, nil
	for bi := range p.cache {
		p.cache[bi] = batchValues{}
		p.cached[bi] = false
	}
}

// CachedBytes returns the memory held by stored basis-function values:
// the space set aside for them on the first Build (room for every function
// of the shells that reach each stored batch) and their function lists.
func (p *Potential) CachedBytes() int64 {
	s := 8 * int64(len(p.slab))
	for _, c := range p.cache {
		s += 4 * int64(len(c.fns))
	}
	return s
}

// workspace is per-goroutine scratch of Build.
type workspace struct {
	eval     []float64 // nv×mAll×np function values as evaluated
	fns      []int32
	keep     []int32 // positions in eval of the kept functions
	lim      []float64
	lsub     []float64 // m×r rows of the density factor
	lsubT    []float64 // r×m
	x        []float64 // r×np: L_subᵀ φ
	cart     []float64
	dsub     []float64 // m×m
	ut       []float64 // m×np: (Dφ)ᵀ
	zt       []float64 // m×np
	half     []float64 // np: ½ ∂e/∂ρ w
	mblk     []float64 // m×m
	rho      [2][]float64
	grad     [2][3][]float64
	coef     coefficients
	rhoViews [][]float64
	grdViews [][3][]float64
	rad      radialScratch
	pw       [3][16][]float64 // powers of the coordinates (evalDiagonal)
	ones     []float64        // all ones: the rows 0 of pw
}

// radialScratch holds, for the points of a batch and one shell, the squared
// distances to its center, the exponentials of one primitive and the radial
// sums f0 = Σ c e^{−αr²}, f1 = Σ −2α c e^{−αr²}, f2 = Σ 4α² c e^{−αr²}.
type radialScratch struct {
	r2, arg, ex, f0, f1, f2 []float64
}

// powers returns pw[axis][k] (k < n), scratch rows of np points, the rows
// 0 already all ones (and not to be written).
func (ws *workspace) powers(n, np int) *[3][16][]float64 {
	one := onesRow(&ws.ones, np)
	for axis := range ws.pw {
		ws.pw[axis][0] = one
		for k := 1; k < n; k++ {
			ws.pw[axis][k] = resize(ws.pw[axis][k], np)
		}
	}
	return &ws.pw
}

// onesRow returns np ones from *buf, which keeps them from one call to the
// next (filled again only when it grows).
func onesRow(buf *[]float64, np int) []float64 {
	if len(*buf) < np {
		*buf = make([]float64, np)
		for i := range *buf {
			(*buf)[i] = 1
		}
	}
	return (*buf)[:np]
}

// radial returns the scratch sized for np points with f0, f1, f2 zeroed.
func (ws *workspace) radial(np int) *radialScratch { return ws.rad.reset(np) }

func (rs *radialScratch) reset(np int) *radialScratch {
	rs.r2 = resize(rs.r2, np)
	rs.arg = resize(rs.arg, np)
	rs.ex = resize(rs.ex, np)
	rs.f0 = grow(rs.f0, np)
	rs.f1 = grow(rs.f1, np)
	rs.f2 = grow(rs.f2, np)
	return rs
}

// primitive sets ex to e^{−αr²} at the points (from r2) and reports
// whether any point has αr² ≤ lim, that is, whether the primitive counts
// anywhere; when it does not, ex is left unset.
func (rs *radialScratch) primitive(alpha, lim float64) bool {
	used := false
	for pt, r2 := range rs.r2 {
		rs.arg[pt] = -alpha * r2
		used = used || alpha*r2 <= lim
	}
	if used {
		kernel.ExpNonPositive(rs.arg, rs.ex)
	}
	return used
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	s = s[:n]
	clear(s)
	return s
}

// resize returns s with length n, contents unspecified.
func resize(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// values returns the kept functions of batch bi and their values (see
// batchValues), from the cache or evaluated into ws.
func (p *Potential) values(ws *workspace, bi int) ([]int32, []float64) {
	if c := &p.cache[bi]; c.vals != nil {
		return c.fns, c.vals
	}
	bt := p.grid.Batches[bi]
	np := bt.End - bt.Start
	shells := p.batchShells[bi]
	gga := p.fn.IsGGA()
	nv := 1
	if gga {
		nv = 4
	}
	mAll := 0
	for _, si := range shells {
		mAll += p.b.Shells[si].NumFunctions()
	}
	// A stored batch is evaluated in its place in the slab, others in
	// the workspace.
	var eval []float64
	if p.cached[bi] {
		off := p.slabOff[bi]
		eval = p.slab[off : off+nv*mAll*np : off+nv*mAll*np]
	} else {
		ws.eval = resize(ws.eval, nv*mAll*np)
		eval = ws.eval
	}
	p.evalFunctions(eval, ws, bt.Start, np, shells, mAll, gga)
	// Keep the functions that reach functionCutoff (value or a derivative)
	// somewhere on the batch, moving their rows down in place.
	ws.fns, ws.keep = ws.fns[:0], ws.keep[:0]
	a := 0
	for _, si := range shells {
		off := p.b.Offsets[si]
		for f := 0; f < p.b.Shells[si].NumFunctions(); f++ {
			reached := false
		scan:
			for k := 0; k < nv; k++ {
				for _, x := range eval[(k*mAll+a)*np : (k*mAll+a+1)*np] {
					if math.Abs(x) >= functionCutoff {
						reached = true
						break scan
					}
				}
			}
			if reached {
				ws.fns = append(ws.fns, int32(off+f))
				ws.keep = append(ws.keep, int32(a))
			}
			a++
		}
	}
	m := len(ws.fns)
	if m < mAll {
		for k := 0; k < nv; k++ {
			for j, src := range ws.keep {
				copy(eval[(k*m+j)*np:(k*m+j+1)*np], eval[(k*mAll+int(src))*np:(k*mAll+int(src)+1)*np])
			}
		}
	}
	fns, vals := ws.fns, eval[:nv*m*np]
	if p.cached[bi] {
		c := &p.cache[bi]
		c.fns = append([]int32(nil), fns...)
		c.vals = vals[:len(vals):len(vals)] // in place in the slab
		return c.fns, c.vals
	}
	return fns, vals
}

// batch computes one batch's contribution into res.
func (p *Potential) batch(ws *workspace, bi int, dens [][]float64, factors []densityFactor, res *batchResult) {
	bt := p.grid.Batches[bi]
	np := bt.End - bt.Start
	gga := p.fn.IsGGA()
	fns, vals := p.values(ws, bi)
	m := len(fns)
	res.fns = append(res.fns[:0], fns...)
	res.exc, res.nel = 0, 0
	nspin := len(dens)
	for s := 0; s < nspin; s++ {
		res.v[s] = resize(res.v[s], m*m)
	}
	if m == 0 {
		return
	}
	phiT := vals[:m*np]
	var d1 [3][]float64
	if gga {
		for k := range d1 {
			d1[k] = vals[(k+1)*m*np : (k+2)*m*np]
		}
	}
	n := p.b.NBF
	ws.dsub = resize(ws.dsub, m*m)
	ws.ut = resize(ws.ut, m*np)
	ws.rhoViews = ws.rhoViews[:0]
	ws.grdViews = ws.grdViews[:0]
	for s := 0; s < nspin; s++ {
		// U = D_sub φ (function-major), ρ = Σ_μ φ_μ U_μ, ∇ρ = 2 Σ_μ ∇φ_μ U_μ.
		if f := factors[s]; f.ok && 2*f.rank < m {
			// D = L Lᵀ of rank r: Xᵀ = L_subᵀ φ (r×np), U = L_sub Xᵀ, at
			// 4·np·m·r operations instead of 2·np·m².
			r := f.rank
			ws.lsub = resize(ws.lsub, m*r)
			ws.lsubT = resize(ws.lsubT, r*m)
			for a, fa := range fns {
				copy(ws.lsub[a*r:a*r+r], f.l[int(fa)*r:int(fa)*r+r])
			}
			kernel.Transpose(ws.lsub, m, r, ws.lsubT)
			ws.x = resize(ws.x, r*np)
			kernel.MatMul(ws.lsubT, r, phiT, m, np, ws.x)
			kernel.MatMul(ws.lsub, m, ws.x, r, np, ws.ut)
		} else {
			for a, fa := range fns {
				row := int(fa) * n
				dr := ws.dsub[a*m : a*m+m]
				for b, fb := range fns {
					dr[b] = dens[s][row+int(fb)]
				}
			}
			kernel.MatMul(ws.dsub, m, phiT, m, np, ws.ut)
		}
		ws.rho[s] = grow(ws.rho[s], np)
		kernel.ColumnDots(phiT, ws.ut, m, np, ws.rho[s])
		ws.rhoViews = append(ws.rhoViews, ws.rho[s])
		var gr [3][]float64
		if gga {
			for k := 0; k < 3; k++ {
				ws.grad[s][k] = grow(ws.grad[s][k], np)
				kernel.ColumnDots(d1[k], ws.ut, m, np, ws.grad[s][k])
				g := ws.grad[s][k]
				for pt := range g {
					g[pt] *= 2
				}
				gr[k] = g
			}
		}
		ws.grdViews = append(ws.grdViews, gr)
	}
	w := p.grid.W[bt.Start:bt.End]
	c := &ws.coef
	p.coefficients(c, ws.rhoViews, ws.grdViews, w, np)
	for s := 0; s < nspin; s++ {
		rho := ws.rho[s]
		for pt := 0; pt < np; pt++ {
			res.nel += w[pt] * rho[pt]
		}
	}
	for pt := 0; pt < np; pt++ {
		res.exc += w[pt] * c.e[pt]
	}
	// V = φᵀZ + Zᵀφ per spin, Z_pμ = ½a_p φ_pμ + Σ_k b_pk ∂_kφ_pμ.
	ws.zt = resize(ws.zt, m*np)
	ws.mblk = resize(ws.mblk, m*m)
	for s := 0; s < nspin; s++ {
		ca := c.a[s][:np]
		var cb [3][]float64
		if gga {
			cb = [3][]float64{c.b[s][0][:np], c.b[s][1][:np], c.b[s][2][:np]}
		}
		if gga {
			ws.half = resize(ws.half, np)
			for pt, x := range ca {
				ws.half[pt] = 0.5 * x
			}
			kernel.ZRows(phiT, d1[0], d1[1], d1[2], ws.half, cb[0], cb[1], cb[2], m, np, ws.zt)
		} else {
			for a := 0; a < m; a++ {
				zr := ws.zt[a*np : a*np+np]
				pr := phiT[a*np : a*np+np]
				for pt := range zr {
					zr[pt] = 0.5 * ca[pt] * pr[pt]
				}
			}
		}
		kernel.DotProducts(phiT, m, ws.zt, m, np, ws.mblk, m)
		vb := res.v[s]
		for a := 0; a < m; a++ {
			for b := 0; b <= a; b++ {
				t := ws.mblk[a*m+b] + ws.mblk[b*m+a]
				vb[a*m+b], vb[b*m+a] = t, t
			}
		}
	}
}

// densityFactor is D ≈ L Lᵀ with L n×rank (row-major), when ok.
type densityFactor struct {
	l    []float64
	rank int
	ok   bool
}

// factorTolerance is the largest diagonal element, relative to the largest
// of D, left in the Schur complement when the factorization of a density
// matrix stops; every element of D − L Lᵀ is at most that in size.
const factorTolerance = 1e-14

// factorDensity factors the symmetric n×n matrix d (row-major) as L Lᵀ by
// Cholesky decomposition with diagonal pivoting (N. J. Higham, Accuracy and
// Stability of Numerical Algorithms, 2nd ed., SIAM 2002, §10.3), stopping
// when the remaining diagonal is below factorTolerance times the largest
// diagonal element. A density matrix built from occupied orbitals is
// positive semidefinite with rank equal to the number of occupied orbitals,
// so L is narrow. ok is false when d is not positive semidefinite within
// that tolerance (then the batches use d itself).
func factorDensity(d []float64, n int) densityFactor {
	if n == 0 || len(d) != n*n {
		return densityFactor{}
	}
	s := append([]float64(nil), d...)
	var dmax float64
	for i := 0; i < n; i++ {
		dmax = max(dmax, math.Abs(s[i*n+i]))
	}
	tol := factorTolerance * dmax
	var cols [][]float64
	done := make([]bool, n)
	for len(cols) < n {
		j, best := -1, 0.0
		for i := 0; i < n; i++ {
			if !done[i] && s[i*n+i] > best {
				j, best = i, s[i*n+i]
			}
		}
		if j < 0 || best <= tol {
			break
		}
		done[j] = true
		col := make([]float64, n)
		inv := 1 / math.Sqrt(best)
		for i := 0; i < n; i++ {
			if !done[i] || i == j {
				col[i] = s[i*n+j] * inv
			}
		}
		col[j] = math.Sqrt(best)
		for i := 0; i < n; i++ {
			ci := col[i]
			if ci == 0 {
				continue
			}
			row := s[i*n : i*n+n]
			for k, ck := range col {
				row[k] -= ci * ck
			}
		}
		cols = append(cols, col)
	}
	// What is left must be negligible: a positive semidefinite remainder
	// has its largest elements on the diagonal.
	for i := 0; i < n; i++ {
		for k := 0; k < n; k++ {
			if math.Abs(s[i*n+k]) > tol {
				return densityFactor{}
			}
		}
	}
	r := len(cols)
	l := make([]float64, n*r)
	for k, col := range cols {
		for i, c := range col {
			l[i*r+k] = c
		}
	}
	return densityFactor{l: l, rank: r, ok: true}
}

// evalFunctions fills out, function-major, with the values (and, for a
// GGA, then the x, y and z derivatives in three more blocks) of the m
// functions of the given shells (in shell order) at np points from start:
// out[(k·m+μ)·np+p].
func (p *Potential) evalFunctions(out []float64, ws *workspace, start, np int, shells []int32, m int, gga bool) {
	g := p.grid
	col := 0
	bx, by, bz := g.X[start:start+np], g.Y[start:start+np], g.Z[start:start+np]
	for _, si := range shells {
		sh := &p.b.Shells[si]
		l := sh.L
		coefs := p.b.ShellCoefficients(int(si))
		trans := p.b.ShellTransform(int(si))
		comps := integral.CartesianExponents(l)
		nc := len(comps)
		nf := sh.NumFunctions()
		cx, cy, cz := sh.Center[0], sh.Center[1], sh.Center[2]
		// A primitive whose term in the radial part and in its derivative,
		// |c|·max(1, 2α)·e^{−αr²}, is below primitiveCutoff is left out:
		// skip it when αr² exceeds lim.
		if cap(ws.lim) < len(sh.Exponents) {
			ws.lim = make([]float64, len(sh.Exponents))
		}
		lim := ws.lim[:len(sh.Exponents)]
		for k, a := range sh.Exponents {
			lim[k] = math.Log(math.Abs(coefs[k]) * max(1, 2*a) / primitiveCutoff)
		}
		// Radial part and its derivative d/d(r²)·2 at every point, one
		// primitive at a time (exponentials by the vector kernel).
		rs := ws.radial(np)
		for pt := 0; pt < np; pt++ {
			dx, dy, dz := bx[pt]-cx, by[pt]-cy, bz[pt]-cz
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
			}
		}
		if diagonalTransform(trans, nf, nc) {
			// Cartesian shells (s, p, Cartesian d…): each function is one
			// scaled component, evaluated row by row over the points.
			evalDiagonal(out, ws, rs, bx, by, bz, sh.Center, comps, trans, col, np, m, gga)
		} else {
			evalGeneral(out, ws, rs, bx, by, bz, sh.Center, comps, trans, nf, col, np, m, gga)
		}
		col += nf
	}
}

// evalGeneral is evalFunctions for one shell whose radial sums are in rs,
// for any transform from Cartesian components to functions, point by point.
func evalGeneral(out []float64, ws *workspace, rs *radialScratch, bx, by, bz []float64, center [3]float64, comps [][3]int, trans []float64, nf, col, np, m int, gga bool) {
	nc := len(comps)
	l := 0
	for _, e := range comps {
		l = max(l, e[0]+e[1]+e[2])
	}
	if cap(ws.cart) < 4*nc {
		ws.cart = make([]float64, 4*nc)
	}
	cv := ws.cart[:nc]
	cgx, cgy, cgz := ws.cart[nc:2*nc], ws.cart[2*nc:3*nc], ws.cart[3*nc:4*nc]
	cx, cy, cz := center[0], center[1], center[2]
	var px, py, pz [16]float64
	for pt := 0; pt < np; pt++ {
		dx, dy, dz := bx[pt]-cx, by[pt]-cy, bz[pt]-cz
		rad, drad := rs.f0[pt], rs.f1[pt]
		if math.Abs(rad) < 1e-300 && math.Abs(drad) < 1e-300 {
			for f := 0; f < nf; f++ {
				out[(col+f)*np+pt] = 0
				if gga {
					out[(m+col+f)*np+pt] = 0
					out[(2*m+col+f)*np+pt] = 0
					out[(3*m+col+f)*np+pt] = 0
				}
			}
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
			out[(col+f)*np+pt] = s
			if gga {
				out[(m+col+f)*np+pt] = sx
				out[(2*m+col+f)*np+pt] = sy
				out[(3*m+col+f)*np+pt] = sz
			}
		}
	}
}

// diagonalTransform reports whether the nf×nc transform of a shell is
// diagonal (one scaled Cartesian component per function).
func diagonalTransform(trans []float64, nf, nc int) bool {
	if nf != nc {
		return false
	}
	for f := 0; f < nf; f++ {
		for c := 0; c < nc; c++ {
			if c != f && trans[f*nc+c] != 0 {
				return false
			}
		}
	}
	return true
}

// evalDiagonal is evalFunctions for one shell with a diagonal transform
// (as evalGeneral, faster),
// whose radial sums are in rs: function c is t_c x^{e0} y^{e1} z^{e2} R(r),
// computed one function row at a time over the points by the vector
// kernel kernel.CartesianRows. The results agree with the general path to
// rounding (the kernel groups the factors differently and fuses
// multiply–adds); each depends only on its point's inputs.
func evalDiagonal(out []float64, ws *workspace, rs *radialScratch, bx, by, bz []float64, center [3]float64, comps [][3]int, trans []float64, col, np, m int, gga bool) {
	nc := len(comps)
	l := 0
	for _, e := range comps {
		l = max(l, e[0]+e[1]+e[2])
	}
	// Points where the radial part and its derivative vanish give zeros.
	rad, drad := rs.f0[:np], rs.f1[:np]
	for pt := range rad {
		if math.Abs(rad[pt]) < 1e-300 && math.Abs(drad[pt]) < 1e-300 {
			rad[pt], drad[pt] = 0, 0
		}
	}
	// Powers x^k, y^k, z^k of the coordinates relative to the center.
	pw := ws.powers(max(l, 1)+1, np)
	for axis, bc := range [3][]float64{bx[:np], by[:np], bz[:np]} {
		d := pw[axis][1]
		for pt, v := range bc {
			d[pt] = v - center[axis]
		}
		for k := 2; k <= l; k++ {
			prev, cur := pw[axis][k-1], pw[axis][k]
			for pt, v := range d {
				cur[pt] = prev[pt] * v
			}
		}
	}
	tab := [3][][]float64{pw[0][:], pw[1][:], pw[2][:]}
	for c, e := range comps {
		t := trans[c*nc+c]
		v := out[(col+c)*np : (col+c+1)*np]
		if !gga {
			kernel.CartesianRows(e, t, tab, rad, drad, np, v, nil)
			continue
		}
		// ∂_j φ = t (e_j x_j^{e_j−1} Π_{k≠j} x_k^{e_k} R + P R' r_j).
		var g [3][]float64
		for j := range g {
			g[j] = out[((j+1)*m+col+c)*np : ((j+1)*m+col+c+1)*np]
		}
		kernel.CartesianRows(e, t, tab, rad, drad, np, v, &g)
	}
}

// batchDensities are the densities of one batch of points, per spin, and
// the scratch they are formed in (kept from one batch to the next by the
// gradient's workspace, so that a batch allocates nothing).
type batchDensities struct {
	rho  [][]float64    // ρ_s at the points
	grad [][3][]float64 // ∇ρ_s (GGA only)
	dsub [][]float64    // the m×m block of D_s over the batch's functions, or nil
	lsub [][]float64    // else D_s ≈ L Lᵀ: the m×r rows of L of the functions
	rank []int
	u    [][]float64 // U = φ·D_sub (np×m), reused by the gradient
	// Scratch of mulD, and the per-spin buffers behind dsub and lsub
	// (which are nil when not in use).
	lt, y      []float64
	dbuf, lbuf [][]float64
}

// mulD sets out (np×m) to x·D_sub of spin s for a point-major np×m block x.
func (bd *batchDensities) mulD(s int, x []float64, np, m int, out []float64) {
	if bd.dsub[s] != nil {
		kernel.DotProducts(x, np, bd.dsub[s], m, m, out, m) // D symmetric
		return
	}
	r := bd.rank[s]
	l := bd.lsub[s]
	bd.lt = resize(bd.lt, r*m)
	kernel.Transpose(l, m, r, bd.lt)
	bd.y = resize(bd.y, np*r)
	kernel.DotProducts(x, np, bd.lt, r, m, bd.y, r) // x L
	kernel.DotProducts(bd.y, np, l, m, r, out, m)
}

// batchDensity sets bd to ρ_s = Σ_μν D_μν φ_μ φ_ν and, when d1 (the
// first derivatives of the functions, np×m each) is given, ∇ρ_s = 2 Σ_μν
// D_μν φ_μ ∇φ_ν at the np points whose function values (np×m) are phi,
// for the m functions fns of a basis of n. Where factors[s] is a usable
// factor of D_s of rank r with 2r < m, products with D_sub go through it.
// bd's earlier contents are overwritten; its buffers are reused.
func batchDensity(bd *batchDensities, phi []float64, d1 [3][]float64, np, m int, fns []int, n int, dens [][]float64, factors []densityFactor) {
	nspin := len(dens)
	gga := d1[0] != nil
	if len(bd.rho) != nspin {
		*bd = batchDensities{
			rho:  make([][]float64, nspin),
			grad: make([][3][]float64, nspin),
			dsub: make([][]float64, nspin),
			lsub: make([][]float64, nspin),
			rank: make([]int, nspin),
			u:    make([][]float64, nspin),
			dbuf: make([][]float64, nspin),
			lbuf: make([][]float64, nspin),
		}
	}
	for s := 0; s < nspin; s++ {
		bd.dsub[s], bd.lsub[s], bd.rank[s] = nil, nil, 0
		if f := factors[s]; f.ok && 2*f.rank < m {
			r := f.rank
			bd.lbuf[s] = resize(bd.lbuf[s], m*r)
			l := bd.lbuf[s]
			for a, fa := range fns {
				copy(l[a*r:a*r+r], f.l[fa*r:fa*r+r])
			}
			bd.lsub[s], bd.rank[s] = l, r
		} else {
			bd.dbuf[s] = resize(bd.dbuf[s], m*m)
			dsub := bd.dbuf[s]
			for a := 0; a < m; a++ {
				row := fns[a] * n
				for b := 0; b < m; b++ {
					dsub[a*m+b] = dens[s][row+fns[b]]
				}
			}
			bd.dsub[s] = dsub
		}
		bd.u[s] = resize(bd.u[s], np*m)
		u := bd.u[s]
		bd.mulD(s, phi, np, m, u)
		bd.rho[s] = resize(bd.rho[s], np)
		r := bd.rho[s]
		if gga {
			for k := range bd.grad[s] {
				bd.grad[s][k] = resize(bd.grad[s][k], np)
			}
		}
		gr := bd.grad[s]
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
	}
}

// potentialCoefficients evaluates the functional at the points of a batch
// and returns the energy density e and, per spin, a_s = w ∂e/∂ρ_s and (GGA)
// the vector b_s = w ∂e/∂(∇ρ_s): 2 ∂e/∂σ ∇ρ for a total density,
// 2 ∂e/∂σ_ss ∇ρ_s + ∂e/∂σ_αβ ∇ρ_s' for spin densities.
// c is the scratch they are formed in.
func (p *Potential) potentialCoefficients(c *coefficients, bd *batchDensities, w []float64, np int) (e []float64, a [][]float64, b [][3][]float64) {
	p.coefficients(c, bd.rho, bd.grad, w, np)
	nspin := len(bd.rho)
	return c.e, c.a[:nspin], c.b[:nspin]
}

// coefficients holds the output of the functional on one batch (see
// potentialCoefficients) and its scratch, reused from batch to batch.
type coefficients struct {
	e       []float64
	a       [][]float64
	b       [][3][]float64
	scratch [6][]float64
}

// coefficients fills c for the densities rho (per spin) and, for a GGA,
// their gradients grad at np points of weights w.
func (p *Potential) coefficients(c *coefficients, rho [][]float64, grad [][3][]float64, w []float64, np int) {
	gga := p.fn.IsGGA()
	nspin := len(rho)
	c.e = resize(c.e, np)
	for len(c.a) < 2 {
		c.a = append(c.a, nil)
		c.b = append(c.b, [3][]float64{})
	}
	for s := 0; s < nspin; s++ {
		c.a[s] = resize(c.a[s], np)
		if gga {
			for k := 0; k < 3; k++ {
				c.b[s][k] = resize(c.b[s][k], np)
			}
		}
	}
	e, a, b := c.e, c.a, c.b
	if nspin == 1 {
		var sigma, vsigma []float64
		if gga {
			c.scratch[0] = resize(c.scratch[0], np)
			c.scratch[1] = resize(c.scratch[1], np)
			sigma, vsigma = c.scratch[0], c.scratch[1]
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
		return
	}
	var saa, sab, sbb, vaa, vab, vbb []float64
	if gga {
		for k := range c.scratch {
			c.scratch[k] = resize(c.scratch[k], np)
		}
		saa, sab, sbb = c.scratch[0], c.scratch[1], c.scratch[2]
		vaa, vab, vbb = c.scratch[3], c.scratch[4], c.scratch[5]
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
}
