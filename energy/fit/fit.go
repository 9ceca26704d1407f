package fit

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/mat"

	"poise/energy/buffer"
	"poise/energy/integral"
	"poise/energy/internal/kernel"
)

// screenThreshold: a block (ab|P) is skipped (left zero) when its
// Cauchy–Schwarz bound Q_ab·Q_P is below it, the threshold of the
// four-centre Fock build.
const screenThreshold = 1e-12

// rankThreshold: eigenvectors of a density whose eigenvalue is below this
// fraction of the largest in magnitude carry no weight in an exchange
// build (an SCF density has rank N_occ; the rest is rounding).
const rankThreshold = 1e-12

// Work chunks, fixed by the sizes alone (the three-centre integrals are
// cut by orbital shell): auxiliary functions per chunk of an exchange
// build or a gradient, columns per chunk of a triangular solve, and the
// block size of the solve.
const (
	auxPerChunk     = 16
	columnsPerChunk = 256
	solveBlock      = 64
)

// Fit holds the factored three-centre integrals of an orbital basis in an
// auxiliary basis, ready for Coulomb and exchange builds.
type Fit struct {
	orb, aux *integral.Basis
	tc       *integral.ThreeCentre
	n        int // orbital functions
	naux     int // auxiliary functions
	npair    int // n(n+1)/2
	threads  int
	chol     []float64 // L, V = L Lᵀ, naux×naux row-major (lower triangle)
	b        []float64 // B = L⁻¹ I, naux rows of npair packed pairs μ ≥ ν
	buffers  *buffer.Pool
}

// New computes the three-centre integrals of the orbital basis orb in the
// auxiliary basis aux and factors them with the Coulomb metric. threads ≤ 0
// means all cores. It fails when the metric is not positive definite (a
// linearly dependent auxiliary basis).
func New(ctx context.Context, orb, aux *integral.Basis, threads int) (*Fit, error) {
	return NewPooled(ctx, orb, aux, threads, nil)
}

// NewPooled is New with B (the fit's largest array, naux·n(n+1)/2 values)
// taken from buffers and handed back when the fit is released
// (GradientReleasing, Release). A nil pool allocates.
func NewPooled(ctx context.Context, orb, aux *integral.Basis, threads int, buffers *buffer.Pool) (*Fit, error) {
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	f := &Fit{orb: orb, aux: aux, n: orb.NBF, naux: aux.NBF, threads: threads, buffers: buffers}
	f.npair = f.n * (f.n + 1) / 2
	if f.naux == 0 {
		return nil, errors.New("fit: the auxiliary basis is empty")
	}
	if l := max(orb.MaxL, aux.MaxL); l > integral.MaxShellL {
		return nil, fmt.Errorf("fit: a shell of angular momentum %d, above the %d the integrals support", l, integral.MaxShellL)
	}
	f.tc = integral.NewThreeCentre(orb, aux)
	v := f.tc.TwoCentre(threads)
	l, err := cholesky(v, f.naux)
	if err != nil {
		return nil, err
	}
	f.chol = l
	if f.b, err = f.threeCentre(ctx); err != nil {
		return nil, err
	}
	if err := solveLower(ctx, f.chol, f.naux, f.b, f.npair, threads); err != nil {
		return nil, err
	}
	return f, nil
}

// Release hands B back to the pool the fit was made with (NewPooled) when
// the fit is no longer needed; like GradientReleasing, it leaves a fit
// whose further use is an error.
func (f *Fit) Release() {
	f.buffers.Put(f.b)
	f.b = nil
}

// HeldBytes is the memory a fit of nbf orbital and naux auxiliary
// functions holds from its construction to its gradient: B and the
// metric's factor. Its Gradient needs as much again (G, the same size as
// B, and the metric's inverse); GradientReleasing forms G in B's place and
// needs only the metric's inverse more.
func HeldBytes(nbf, naux int) int64 {
	npair := int64(nbf) * int64(nbf+1) / 2
	return 8 * (int64(naux)*npair + int64(naux)*int64(naux))
}

// pairIndex is the packed index of the orbital pair μ ≥ ν.
func pairIndex(mu, nu int) int { return mu*(mu+1)/2 + nu }

// threeCentre returns I_P,μν = (μν|P) over packed pairs, naux×npair.
func (f *Fit) threeCentre(ctx context.Context) ([]float64, error) {
	orb, aux := f.orb, f.aux
	ns, na := len(orb.Shells), len(aux.Shells)
	qaux := make([]float64, na)
	qmax := 0.0
	for p := range qaux {
		qaux[p] = f.tc.AuxSchwarz(p)
		qmax = math.Max(qmax, qaux[p])
	}
	// One chunk per orbital shell a, with every b ≤ a: its function pairs
	// μ ≥ ν (μ in a) are the contiguous packed range [pa0, pa1). Each
	// chunk fills a pair-major buffer (contiguous writes) and transposes
	// it into the auxiliary-major result.
	// Every element is written below (each chunk copies whole pair ranges
	// of every auxiliary row), so lent memory needs no clearing; new
	// memory comes on huge pages, which make the first touch of these
	// hundreds of MiB (a large molecule's fit) cheaper.
	out := f.buffers.Get(f.naux * f.npair)
	type work struct {
		w         *integral.ThreeCentreWorkspace
		local, tr []float64
	}
	err := parallelChunks(ctx, f.threads, ns, func(a int, wk *work) {
		oa, nfa := orb.Offsets[a], orb.Shells[a].NumFunctions()
		pa0, pa1 := pairIndex(oa, 0), pairIndex(oa+nfa-1, oa+nfa-1)+1
		np := pa1 - pa0
		local := grow(&wk.local, np*f.naux)
		clear(local)
		for b := 0; b <= a; b++ {
			qab := f.tc.OrbitalSchwarz(a, b)
			if qab*qmax < screenThreshold {
				continue
			}
			ob, nfb := orb.Offsets[b], orb.Shells[b].NumFunctions()
			for p := 0; p < na; p++ {
				if qab*qaux[p] < screenThreshold {
					continue
				}
				op, nfp := aux.Offsets[p], aux.Shells[p].NumFunctions()
				blk := f.tc.Block(wk.w, a, b, p)
				for ia := 0; ia < nfa; ia++ {
					for ib := 0; ib < nfb; ib++ {
						mu, nu := oa+ia, ob+ib
						if nu > mu {
							continue // a == b: the upper triangle repeats the lower
						}
						row := local[(pairIndex(mu, nu)-pa0)*f.naux+op:]
						copy(row[:nfp], blk[(ia*nfb+ib)*nfp:(ia*nfb+ib+1)*nfp])
					}
				}
			}
		}
		tr := grow(&wk.tr, np*f.naux)
		kernel.Transpose(local, np, f.naux, tr)
		for r := 0; r < f.naux; r++ {
			copy(out[r*f.npair+pa0:r*f.npair+pa1], tr[r*np:(r+1)*np])
		}
	}, func() *work { return &work{w: f.tc.NewWorkspace()} })
	return out, err
}

// grow returns (*buf)[:n], reallocating when it is too short.
func grow(buf *[]float64, n int) []float64 {
	if cap(*buf) < n {
		*buf = make([]float64, n)
	}
	return (*buf)[:n]
}

// parallelChunks runs fn on chunks 0…n−1 with up to threads goroutines,
// each with its own workspace from newWork (nil: none).
func parallelChunks[W any](ctx context.Context, threads, n int, fn func(c int, w W), newWork func() W) error {
	var next int
	var mu sync.Mutex
	var wg sync.WaitGroup
	for t := 0; t < min(threads, n); t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var w W
			if newWork != nil {
				w = newWork()
			}
			for ctx.Err() == nil {
				mu.Lock()
				c := next
				next++
				mu.Unlock()
				if c >= n {
					return
				}
				fn(c, w)
			}
		}()
	}
	wg.Wait()
	return ctx.Err()
}

// cholesky returns the lower-triangular L (row-major n×n) of V = L Lᵀ.
func cholesky(v []float64, n int) ([]float64, error) {
	sym := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			sym.SetSym(i, j, 0.5*(v[i*n+j]+v[j*n+i]))
		}
	}
	var ch mat.Cholesky
	if ok := ch.Factorize(sym); !ok {
		return nil, fmt.Errorf("fit: the Coulomb metric of the %d auxiliary functions is not positive definite (a linearly dependent auxiliary basis)", n)
	}
	var lt mat.TriDense
	ch.LTo(&lt)
	l := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			l[i*n+j] = lt.At(i, j)
		}
	}
	return l, nil
}

// solveLower overwrites x (n rows of w columns, row-major) with L⁻¹x, L
// lower triangular n×n. Columns are solved in fixed chunks of
// columnsPerChunk, each by blocked forward substitution; every element's
// operations depend only on the shapes.
func solveLower(ctx context.Context, l []float64, n int, x []float64, w int, threads int) error {
	// Contiguous copies of the sub-diagonal blocks L[r0:r1, 0:r0].
	nblk := (n + solveBlock - 1) / solveBlock
	lblk := make([][]float64, nblk)
	for k := range lblk {
		r0, r1 := k*solveBlock, min((k+1)*solveBlock, n)
		blk := make([]float64, (r1-r0)*r0)
		for i := r0; i < r1; i++ {
			copy(blk[(i-r0)*r0:(i-r0+1)*r0], l[i*n:i*n+r0])
		}
		lblk[k] = blk
	}
	nchunk := (w + columnsPerChunk - 1) / columnsPerChunk
	type work struct{ buf, tmp []float64 }
	return parallelChunks(ctx, threads, nchunk, func(c int, wk *work) {
		c0, c1 := c*columnsPerChunk, min((c+1)*columnsPerChunk, w)
		cw := c1 - c0
		buf := wk.buf[:n*cw]
		for i := 0; i < n; i++ {
			copy(buf[i*cw:(i+1)*cw], x[i*w+c0:i*w+c1])
		}
		for k := 0; k < nblk; k++ {
			r0, r1 := k*solveBlock, min((k+1)*solveBlock, n)
			if r0 > 0 {
				tmp := wk.tmp[:(r1-r0)*cw]
				kernel.MatMul(lblk[k], r1-r0, buf[:r0*cw], r0, cw, tmp)
				for i := range tmp {
					buf[r0*cw+i] -= tmp[i]
				}
			}
			for i := r0; i < r1; i++ {
				row := buf[i*cw : (i+1)*cw]
				for j := r0; j < i; j++ {
					lij := l[i*n+j]
					src := buf[j*cw : (j+1)*cw]
					for t := range row {
						row[t] -= lij * src[t]
					}
				}
				inv := 1 / l[i*n+i]
				for t := range row {
					row[t] *= inv
				}
			}
		}
		for i := 0; i < n; i++ {
			copy(x[i*w+c0:i*w+c1], buf[i*cw:(i+1)*cw])
		}
	}, func() *work {
		return &work{buf: make([]float64, n*columnsPerChunk), tmp: make([]float64, solveBlock*columnsPerChunk)}
	})
}

// packDensity returns D over packed pairs with the off-diagonal elements
// doubled, so that Σ_μν D_μν X_μν = Σ_pairs packed·X for symmetric X.
func (f *Fit) packDensity(d []float64) []float64 {
	n := f.n
	out := make([]float64, f.npair)
	for mu := 0; mu < n; mu++ {
		for nu := 0; nu < mu; nu++ {
			out[pairIndex(mu, nu)] = d[mu*n+nu] + d[nu*n+mu]
		}
		out[pairIndex(mu, mu)] = d[mu*n+mu]
	}
	return out
}

// fitted returns t_R = Σ_pairs B_R,pair·packed (B·D with packed D).
func (f *Fit) fitted(ctx context.Context, packed []float64) ([]float64, error) {
	t := make([]float64, f.naux)
	nchunk := (f.naux + auxPerChunk - 1) / auxPerChunk
	err := parallelChunks(ctx, f.threads, nchunk, func(c int, _ struct{}) {
		for r := c * auxPerChunk; r < min((c+1)*auxPerChunk, f.naux); r++ {
			row := f.b[r*f.npair : (r+1)*f.npair]
			var s float64
			for i, v := range row {
				s += v * packed[i]
			}
			t[r] = s
		}
	}, nil)
	return t, err
}

// Coulomb returns the fitted Coulomb matrix J_μν = Σ_λσ (μν|λσ) D_λσ of the
// symmetric n×n density d.
func (f *Fit) Coulomb(ctx context.Context, d []float64) ([]float64, error) {
	if f.b == nil {
		return nil, errReleased
	}
	t, err := f.fitted(ctx, f.packDensity(d))
	if err != nil {
		return nil, err
	}
	jp := make([]float64, f.npair)
	nchunk := (f.npair + columnsPerChunk - 1) / columnsPerChunk
	err = parallelChunks(ctx, f.threads, nchunk, func(c int, _ struct{}) {
		c0, c1 := c*columnsPerChunk, min((c+1)*columnsPerChunk, f.npair)
		out := jp[c0:c1]
		for r, tr := range t {
			row := f.b[r*f.npair+c0 : r*f.npair+c1]
			for i, v := range row {
				out[i] += tr * v
			}
		}
	}, nil)
	if err != nil {
		return nil, err
	}
	return f.unpack(jp), nil
}

// unpack returns the symmetric n×n matrix of packed pairs.
func (f *Fit) unpack(p []float64) []float64 {
	n := f.n
	out := make([]float64, n*n)
	for mu := 0; mu < n; mu++ {
		for nu := 0; nu <= mu; nu++ {
			v := p[pairIndex(mu, nu)]
			out[mu*n+nu], out[nu*n+mu] = v, v
		}
	}
	return out
}

// unpackRow writes row r of B (one auxiliary function) as a full
// symmetric n×n matrix into dst.
func (f *Fit) unpackRow(r int, dst []float64) {
	n := f.n
	row := f.b[r*f.npair : (r+1)*f.npair]
	for mu := 0; mu < n; mu++ {
		base := mu * (mu + 1) / 2
		for nu := 0; nu <= mu; nu++ {
			v := row[base+nu]
			dst[mu*n+nu], dst[nu*n+mu] = v, v
		}
	}
}

// factor returns the eigenvectors of the symmetric density d that carry
// weight, as the rows of vt (r×n), with their eigenvalues. It fails for a
// density that is not symmetric.
func factor(d []float64, n int) (vt, lambda []float64, err error) {
	sym := mat.NewSymDense(n, nil)
	var big, asym float64
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			a, b := d[i*n+j], d[j*n+i]
			big = math.Max(big, math.Abs(a))
			asym = math.Max(asym, math.Abs(a-b))
			sym.SetSym(i, j, 0.5*(a+b))
		}
	}
	if asym > 1e-10*math.Max(big, 1) {
		return nil, nil, fmt.Errorf("fit: exchange of a non-symmetric density (asymmetry %.1e)", asym)
	}
	if big == 0 {
		return nil, nil, nil
	}
	var es mat.EigenSym
	if !es.Factorize(sym, true) {
		return nil, nil, fmt.Errorf("fit: eigenvalue decomposition of a %d×%d density failed", n, n)
	}
	vals := es.Values(nil)
	var v mat.Dense
	es.VectorsTo(&v)
	lmax := 0.0
	for _, x := range vals {
		lmax = math.Max(lmax, math.Abs(x))
	}
	for k, x := range vals {
		if math.Abs(x) <= rankThreshold*lmax {
			continue
		}
		lambda = append(lambda, x)
		for i := 0; i < n; i++ {
			vt = append(vt, v.At(i, k))
		}
	}
	return vt, lambda, nil
}

// Exchange returns the fitted exchange matrix K_μν = Σ_λσ (μλ|νσ) D_λσ of
// the symmetric n×n density d.
func (f *Fit) Exchange(ctx context.Context, d []float64) ([]float64, error) {
	if f.b == nil {
		return nil, errReleased
	}
	n := f.n
	vt, lambda, err := factor(d, n)
	if err != nil {
		return nil, err
	}
	k := make([]float64, n*n)
	r := len(lambda)
	if r == 0 {
		return k, nil
	}
	nchunk := (f.naux + auxPerChunk - 1) / auxPerChunk
	// Chunks in waves of one per thread, each with its own buffers; each
	// wave's results are added to k in chunk order.
	type work struct{ bf, y, yw, kc []float64 }
	wave := min(max(1, f.threads), nchunk)
	slots := make([]work, wave)
	for i := range slots {
		slots[i] = work{bf: make([]float64, n*n), y: make([]float64, n*auxPerChunk*r),
			yw: make([]float64, n*auxPerChunk*r), kc: make([]float64, n*n)}
	}
	for start := 0; start < nchunk; start += wave {
		end := min(start+wave, nchunk)
		err := parallelChunks(ctx, f.threads, end-start, func(c int, _ struct{}) {
			wk := &slots[c]
			p0 := (start + c) * auxPerChunk
			p1 := min(p0+auxPerChunk, f.naux)
			cs := p1 - p0
			ld := cs * r
			y, yw := wk.y[:n*ld], wk.yw[:n*ld]
			for p := p0; p < p1; p++ {
				f.unpackRow(p, wk.bf)
				kernel.DotProducts(wk.bf, n, vt, r, n, y[(p-p0)*r:], ld)
			}
			for m := 0; m < n; m++ {
				for q := 0; q < cs; q++ {
					row, out := y[m*ld+q*r:m*ld+q*r+r], yw[m*ld+q*r:m*ld+q*r+r]
					for i, l := range lambda {
						out[i] = row[i] * l
					}
				}
			}
			lowerProducts(y, yw, n, ld, wk.kc)
		}, nil)
		if err != nil {
			return nil, err
		}
		for c := 0; c < end-start; c++ {
			kc := slots[c].kc
			for i := 0; i < n; i++ {
				row, src := k[i*n:i*n+i+1], kc[i*n:i*n+i+1]
				for j, v := range src {
					row[j] += v
				}
			}
		}
	}
	for i := 0; i < n; i++ {
		for j := 0; j < i; j++ {
			k[j*n+i] = k[i*n+j]
		}
	}
	return k, nil
}

// triBlock is the row block of lowerProducts.
const triBlock = 64

// lowerProducts sets c[i·n+j] = Σ_t a[i·k+t] b[j·k+t] for j ≤ i (A·Bᵀ of
// two n×k row-major matrices, a symmetric product of which the lower
// triangle suffices), in row blocks of triBlock: about half the work of
// the full product. Elements above the diagonal inside a block are written
// too; others are left alone.
func lowerProducts(a, b []float64, n, k int, c []float64) {
	for i0 := 0; i0 < n; i0 += triBlock {
		i1 := min(i0+triBlock, n)
		kernel.DotProducts(a[i0*k:], i1-i0, b, i1, k, c[i0*n:], n)
	}
}
