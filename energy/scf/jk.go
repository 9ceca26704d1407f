package scf

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"

	"poise/energy/basis"
	"poise/energy/integral"
	"poise/energy/internal/hugepage"
)

// schwarzThreshold is the screening threshold on the Cauchy–Schwarz bound
// |(ij|kl)| ≤ Q_ij·Q_kl below which a shell quartet is skipped (Häser &
// Ahlrichs, J. Comput. Chem. 10, 104 (1989)). A quartet is also skipped
// when the rigorous far-field bound integral.FarFieldBound, which falls
// off with the distance of the two charge distributions, is below it. Both
// bounds are fixed, not density dependent, so that in-core and direct
// builds store the same quartets.
const schwarzThreshold = 1e-12

// densityThreshold is the density-weighted screening threshold of one
// build: a quartet's Coulomb (exchange) contraction is skipped when
// Q_ij·Q_kl times the largest density element it is contracted with (|D|
// over the shell pairs kl and ij for Coulomb, ik, jl, il and jk for
// exchange) is below it, and the quartet is not computed when both are
// (Häser & Ahlrichs, J. Comput. Chem. 10, 104 (1989), eq. 10). Each skipped
// contraction changes a Fock element by less than 4·densityThreshold.
const densityThreshold = 1e-12

// farFieldRange: the far-field bound (integral.FarFieldBound) is
// evaluated for quartets whose Schwarz bound is below farFieldRange times
// schwarzThreshold. Above that it could not drop a quartet in practice
// (its ratio to the Schwarz bound is about 1/(R·ζ^{1/2}) for diffuse pairs
// R bohr apart), and skipping it keeps the screening cheap. The choice
// affects only how many quartets are dropped, never the rigour.
const farFieldRange = 1e4

// Work chunks: the canonical quartets are cut, in their fixed order, into
// chunks of about equal work (integral count), at least minQuartetsPerChunk
// quartets each and at most maxChunks of them. The cut depends only on the
// basis, never on the thread count. Each chunk accumulates into its own
// buffer and chunks are summed in index order, so the result does not
// depend on the number of threads; bounding the number of chunks bounds the
// cost of that reduction (2·n² additions per chunk and matrix), which would
// otherwise grow like the number of quartets times n².
const (
	minQuartetsPerChunk = 2048
	maxChunks           = 256
)

// fullRebuildEvery is the number of builds after which an incremental
// build (of the density change since the previous build, Almlöf, Faegri &
// Korsell, J. Comput. Chem. 3, 385 (1982)) is replaced by a full one, so
// that screening errors do not accumulate.
const fullRebuildEvery = 8

// ringBytes bounds the memory of the per-chunk Coulomb and exchange buffers
// held at once by a Fock build (its ring of chunk buffers, buildFrom); an
// eighth of the memory budget when that is less (at least two buffer sets
// per thread are kept in any case).
const ringBytes = 64 << 20

// jkBuilder forms Coulomb and exchange matrices from densities, keeping the
// electron-repulsion integrals in memory when they fit, else recomputing
// them on every build (integral-direct).
type jkBuilder struct {
	b       *integral.Basis
	eri     *integral.ERIEngine
	n       int // basis functions
	threads int

	// pairs lists the significant shell pairs i ≥ j (two int32 each) in
	// canonical order; pairOff[p] is the start of pair p's block of
	// ni·nj elements in the packed pair arrays, pairOff[len] their length.
	pairs   []int32
	pairOff []int
	nf      []int // functions per shell

	// quartets lists the canonical shell quartets that survive screening,
	// as pair indices p ≥ r (bra pair p = (i, j), ket pair r = (k, l)),
	// two int32 per quartet, in the order of p, then r.
	quartets []int32
	chunks   []int // start index (in quartets) of every chunk, plus the end

	// incore holds the integral blocks of the stored quartets,
	// concatenated in quartet order: every quartet when they fit in
	// memory, the costliest ones that fit when not (semi-direct), none
	// (direct). offsets[q] is the start of quartet q's block in incore, −1
	// for a quartet computed anew in every build. totalWords counts the
	// integrals of all quartets.
	incore     []float64
	offsets    []int
	totalWords int64

	pool []jkBuffers // per-chunk accumulation buffers, reused between builds

	ringBytes int64 // bound on the memory of the per-chunk buffers

	ns      int       // shells
	schwarz []float64 // ns×ns Schwarz bounds Q

	// Incremental builds: the densities and matrices of the last build
	// and the number of incremental builds since the last full one.
	prevDens  [][]float64
	prevJ     []float64
	prevK     [][]float64
	sinceFull int

	// exact switches density-weighted screening and incremental builds
	// off (only the fixed Schwarz screening stays), for tests.
	exact bool
}

// jkBuffers are the Coulomb and exchange accumulators of one chunk. The
// Coulomb matrix is accumulated in the packed pair layout (jk.pairOff):
// the ket side of the quartets of one bra pair then streams through
// contiguous memory instead of scattered rows of an n×n matrix.
type jkBuffers struct {
	j []float64
	k [][]float64
}

// newJKBuilder screens shell quartets and, when memoryBytes allows, computes
// and stores all surviving integral blocks.
func newJKBuilder(ctx context.Context, b *integral.Basis, threads int, memoryBytes int64) (*jkBuilder, error) {
	return newJKBuilderLog(ctx, b, threads, memoryBytes, nil)
}

// newJKBuilderLog is newJKBuilder with a receiver of notices (nil: none).
func newJKBuilderLog(ctx context.Context, b *integral.Basis, threads int, memoryBytes int64, log func(string)) (*jkBuilder, error) {
	return newJKBuilderConfig(ctx, b, jkConfig{threads: threads, memoryBytes: memoryBytes, log: log, farField: true, minSemiDirectWords: minSemiDirectWords})
}

// jkConfig is how a jkBuilder screens and stores its integrals.
type jkConfig struct {
	threads     int
	memoryBytes int64
	log         func(string) // receiver of notices; nil: none
	// farField switches the far-field bound on (off: Schwarz screening
	// alone, for tests).
	farField bool
	// minSemiDirectWords is the smallest semi-direct store worth keeping
	// (normally the constant minSemiDirectWords; tests lower it to store
	// part of a small basis).
	minSemiDirectWords int64
}

// newJKBuilderConfig screens shell quartets and stores what cfg allows.
func newJKBuilderConfig(ctx context.Context, b *integral.Basis, cfg jkConfig) (*jkBuilder, error) {
	threads, memoryBytes, log, farField := cfg.threads, cfg.memoryBytes, cfg.log, cfg.farField
	if threads < 1 {
		threads = runtime.GOMAXPROCS(0)
	}
	eri := integral.NewERI(b)
	ns := eri.NumShells()
	jk := &jkBuilder{b: b, eri: eri, n: b.NBF, threads: threads, ns: ns, ringBytes: ringBytes}
	if memoryBytes > 0 && memoryBytes/8 < ringBytes {
		jk.ringBytes = memoryBytes / 8
	}
	q := eri.SchwarzMatrix()
	jk.schwarz = q
	jk.nf = make([]int, ns)
	for s := range jk.nf {
		jk.nf[s] = b.Shells[s].NumFunctions()
	}
	nf := jk.nf
	// Significant shell pairs i ≥ j in canonical order (index i(i+1)/2+j):
	// a pair whose bound times the largest bound is below the threshold
	// takes part in no quartet.
	qmax := 0.0
	for _, v := range q {
		qmax = max(qmax, v)
	}
	var pairQ []float64
	jk.pairOff = []int{0}
	for i := 0; i < ns; i++ {
		for j := 0; j <= i; j++ {
			if qij := q[i*ns+j]; qij*qmax >= schwarzThreshold {
				jk.pairs = append(jk.pairs, int32(i), int32(j))
				pairQ = append(pairQ, qij)
				jk.pairOff = append(jk.pairOff, jk.pairOff[len(jk.pairOff)-1]+nf[i]*nf[j])
			}
		}
	}
	// Distance-dependent bounds of the pairs (far-field bound, see
	// integral.FarFieldBound): a quartet survives when both the Schwarz
	// and the far-field bound reach the threshold. The far-field bound is
	// only evaluated where it can matter, for Schwarz products below
	// farFieldRange times the threshold.
	allCharges := eri.PairCharges()
	charges := make([]integral.PairCharge, len(pairQ))
	for p := range charges {
		i, j := int(jk.pairs[2*p]), int(jk.pairs[2*p+1])
		charges[p] = allCharges[i*(i+1)/2+j]
	}
	keep := func(p, r int) bool {
		s := pairQ[p] * pairQ[r]
		if s < schwarzThreshold {
			return false
		}
		return !farField || s >= farFieldRange*schwarzThreshold ||
			integral.FarFieldBound(&charges[p], &charges[r]) >= schwarzThreshold
	}
	// Canonical quartets (ij) ≥ (kl) that survive screening, in the order
	// of (ij), then (kl).
	count := 0
	for p := range pairQ {
		for r := 0; r <= p; r++ {
			if keep(p, r) {
				count++
			}
		}
	}
	jk.quartets = make([]int32, 0, 2*count)
	weights := make([]int64, 0, count) // integrals per quartet, to cut chunks of equal work
	var storeWords int64
	for p := range pairQ {
		nij := jk.pairOff[p+1] - jk.pairOff[p]
		for r := 0; r <= p; r++ {
			if !keep(p, r) {
				continue
			}
			jk.quartets = append(jk.quartets, int32(p), int32(r))
			w := int64(nij * (jk.pairOff[r+1] - jk.pairOff[r]))
			weights = append(weights, w)
			storeWords += w
		}
	}
	jk.chunks = cutChunks(weights, storeWords)
	jk.totalWords = storeWords

	// Keep the integrals if they take at most half of the memory budget;
	// the rest is left for matrices, buffers and the garbage collector.
	// When they do not fit, keep the costliest to compute per word that do
	// (semi-direct) and compute the others anew in every build.
	// The quartet offsets of a semi-direct store count against its half.
	budget := memoryBytes / 2 / 8
	semiBudget := budget - int64(len(weights)+1)
	switch {
	case memoryBytes > 0 && storeWords <= budget:
		if err := jk.fillInCore(ctx, selectAll(weights)); err != nil {
			return nil, err
		}
	case memoryBytes > 0 && semiBudget >= max(cfg.minSemiDirectWords, 1):
		if err := jk.fillInCore(ctx, jk.selectCostliest(weights, semiBudget)); err != nil {
			return nil, err
		}
		if log != nil {
			stored := int64(len(jk.incore))
			log(fmt.Sprintf("the electron-repulsion integrals need %s, more than half of the memory budget of %s (--memory): keeping the %.0f%% of them (%s) that take longest to compute in memory and computing the rest anew in every SCF iteration (semi-direct)",
				mebibytes(storeWords*8), mebibytes(memoryBytes), 100*float64(stored)/float64(storeWords), mebibytes(stored*8)))
		}
	case log != nil && memoryBytes > 0 && storeWords > 0:
		log(fmt.Sprintf("the electron-repulsion integrals need %s, more than half of the memory budget of %s (--memory): computing them anew in every SCF iteration (integral-direct)",
			mebibytes(storeWords*8), mebibytes(memoryBytes)))
	}
	return jk, nil
}

// minSemiDirectWords is the smallest store (in float64 words) worth
// keeping when not every integral fits: below it (a budget under about
// 2 MiB after the quartet offsets) the SCF is integral-direct.
const minSemiDirectWords = 1 << 18

// selectAll returns the offsets that store every quartet's block (of
// weights[q] words) in order.
func selectAll(weights []int64) []int {
	offsets := make([]int, len(weights)+1)
	off := 0
	for q, w := range weights {
		offsets[q] = off
		off += int(w)
	}
	offsets[len(weights)] = off
	return offsets
}

// quartetWords is the number of integrals in quartet q's block.
func (jk *jkBuilder) quartetWords(q int) int {
	p, r := jk.quartets[2*q], jk.quartets[2*q+1]
	return (jk.pairOff[p+1] - jk.pairOff[p]) * (jk.pairOff[r+1] - jk.pairOff[r])
}

// costPerIntegral estimates the cost of computing quartet q per integral
// of its block (see selectCostliest).
func (jk *jkBuilder) costPerIntegral(q int) float64 {
	i, j, k, l := jk.quartetShells(q)
	prims := float64(jk.eri.PairPrimitives(i, j) * jk.eri.PairPrimitives(k, l))
	lsum := jk.b.Shells[i].L + jk.b.Shells[j].L + jk.b.Shells[k].L + jk.b.Shells[l].L
	return prims * float64(1+lsum) / float64(jk.quartetWords(q))
}

// selectCostliest returns the offsets of a semi-direct store of at most
// budget words: the quartets with the highest estimated cost per integral
// are stored (in quartet order), every other quartet gets offset −1.
//
// The cost estimate of a quartet is its number of primitive quartets
// times (1 + its total angular momentum), per integral of its block:
// contracted core shells (six primitives in 6-31G*) make a few integrals
// expensive, while a d shell's many integrals come cheaply from one
// primitive quartet. On aspirin in 6-31G* the costliest 38 % of the
// integrals by this estimate took 70 % of the time to compute them all,
// against 76 % for the best possible choice by measured time (measured
// when the store was introduced).
//
// The choice is deterministic: estimates are binned on a fine logarithmic
// scale, whole bins are taken from the top, and the bin that does not fit
// whole is taken in quartet order. Which quartets are stored never
// changes a result: a stored integral is the same number the direct
// build computes.
func (jk *jkBuilder) selectCostliest(weights []int64, budget int64) []int {
	const binsPerOctave = 8
	const minBin, maxBin = -60 * binsPerOctave, 60 * binsPerOctave
	nq := len(weights)
	bins := make([]int16, nq)
	hist := make([]int64, maxBin-minBin+1)
	for q := 0; q < nq; q++ {
		cost := jk.costPerIntegral(q)
		bin := minBin // an estimate of zero (no primitive survives) comes last
		if cost > 0 {
			bin = min(max(int(math.Floor(binsPerOctave*math.Log2(cost))), minBin), maxBin)
		}
		bins[q] = int16(bin - minBin)
		hist[bin-minBin] += weights[q]
	}
	// Whole bins from the top while they fit; the next one in part.
	cut, left := len(hist), budget
	for cut > 0 && hist[cut-1] <= left {
		cut--
		left -= hist[cut]
	}
	offsets := make([]int, nq+1)
	off := 0
	for q := 0; q < nq; q++ {
		take := int(bins[q]) >= cut
		if !take && cut > 0 && int(bins[q]) == cut-1 && weights[q] <= left {
			take = true
			left -= weights[q]
		}
		if take {
			offsets[q] = off
			off += int(weights[q])
		} else {
			offsets[q] = -1
		}
	}
	offsets[nq] = off
	return offsets
}

// mebibytes formats a size in MiB.
func mebibytes(b int64) string {
	m := float64(b) / (1 << 20)
	if m < 10 {
		return fmt.Sprintf("%.1f MiB", m)
	}
	return fmt.Sprintf("%.0f MiB", m)
}

// cutChunks cuts quartets of the given weights (in order) into chunks of
// about equal total weight: as many as the quartet count allows with
// minQuartetsPerChunk each, at most maxChunks. It returns the start of
// every chunk plus the end.
func cutChunks(weights []int64, total int64) []int {
	nq := len(weights)
	nc := min(maxChunks, max(1, (nq+minQuartetsPerChunk-1)/minQuartetsPerChunk))
	chunks := []int{0}
	var acc int64
	c := 1
	for q := 0; q < nq && c < nc; q++ {
		acc += weights[q]
		// Close chunk c−1 once its share of the work is reached.
		if acc*int64(nc) >= total*int64(c) && q+1 < nq {
			chunks = append(chunks, q+1)
			c++
		}
	}
	return append(chunks, nq)
}

// InCore reports whether all the integrals are kept in memory.
func (jk *jkBuilder) InCore() bool { return int64(len(jk.incore)) == jk.totalWords }

// StoredFraction is the fraction of the integrals kept in memory: 1 in
// core, 0 integral-direct, in between semi-direct.
func (jk *jkBuilder) StoredFraction() float64 {
	if jk.totalWords == 0 {
		return 1 // nothing to compute
	}
	return float64(len(jk.incore)) / float64(jk.totalWords)
}

// quartetShells returns the shells i, j, k, l of quartet q.
func (jk *jkBuilder) quartetShells(q int) (i, j, k, l int) {
	p, r := jk.quartets[2*q], jk.quartets[2*q+1]
	return int(jk.pairs[2*p]), int(jk.pairs[2*p+1]), int(jk.pairs[2*r]), int(jk.pairs[2*r+1])
}

// packPairs copies the shell-pair blocks of the n×n matrix m into the
// packed pair layout.
func (jk *jkBuilder) packPairs(m []float64) []float64 {
	n := jk.n
	out := make([]float64, jk.pairOff[len(jk.pairOff)-1])
	for p := 0; p < len(jk.pairOff)-1; p++ {
		i, j := jk.pairs[2*p], jk.pairs[2*p+1]
		oi, oj, nj := jk.b.Offsets[i], jk.b.Offsets[j], jk.nf[j]
		blk := out[jk.pairOff[p]:jk.pairOff[p+1]]
		for a := 0; a < jk.nf[i]; a++ {
			copy(blk[a*nj:(a+1)*nj], m[(oi+a)*n+oj:(oi+a)*n+oj+nj])
		}
	}
	return out
}

// unpackPairs adds the packed pair blocks to the n×n matrix m.
func (jk *jkBuilder) unpackPairs(packed, m []float64) {
	n := jk.n
	for p := 0; p < len(jk.pairOff)-1; p++ {
		i, j := jk.pairs[2*p], jk.pairs[2*p+1]
		oi, oj, nj := jk.b.Offsets[i], jk.b.Offsets[j], jk.nf[j]
		blk := packed[jk.pairOff[p]:jk.pairOff[p+1]]
		for a := 0; a < jk.nf[i]; a++ {
			row := m[(oi+a)*n+oj : (oi+a)*n+oj+nj]
			for b, v := range blk[a*nj : (a+1)*nj] {
				row[b] += v
			}
		}
	}
}

// fillInCore computes and stores the integral blocks of the quartets
// whose offsets (from selectAll or selectCostliest; offsets[nq] is the
// total) are not −1.
func (jk *jkBuilder) fillInCore(ctx context.Context, offsets []int) error {
	nq := len(jk.quartets) / 2
	words := offsets[nq]
	if words == 0 {
		return nil
	}
	store := make([]float64, words)
	hugepage.Advise(store)
	err := jk.parallelChunks(ctx, func(w *integral.ERIWorkspace, c int) {
		for q := jk.chunks[c]; q < jk.chunks[c+1]; q++ {
			if off := offsets[q]; off >= 0 {
				i, j, k, l := jk.quartetShells(q)
				copy(store[off:], jk.eri.Quartet(w, i, j, k, l))
			}
		}
	})
	if err != nil {
		return err
	}
	jk.incore, jk.offsets = store, offsets
	return nil
}

// parallelChunks runs fn for every chunk on up to jk.threads goroutines,
// each with its own ERI workspace.
func (jk *jkBuilder) parallelChunks(ctx context.Context, fn func(w *integral.ERIWorkspace, c int)) error {
	nc := len(jk.chunks) - 1
	var next int
	var mu sync.Mutex
	var wg sync.WaitGroup
	workers := jk.threads
	if workers > nc {
		workers = nc
	}
	for t := 0; t < workers; t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := jk.eri.NewWorkspace()
			for {
				if ctx.Err() != nil {
					return
				}
				mu.Lock()
				c := next
				next++
				mu.Unlock()
				if c >= nc {
					return
				}
				fn(w, c)
			}
		}()
	}
	wg.Wait()
	return ctx.Err()
}

// build returns J[D_total] and K[D_s] for every spin density D_s given
// (one density for restricted, two for unrestricted). dens are n×n
// row-major symmetric matrices; J uses their sum. With wantK false only J
// is formed.
//
// Successive builds of one SCF are incremental: the matrices of the
// density change since the previous build are added to the previous
// matrices; the change shrinks as the SCF converges, and density-weighted
// screening skips ever more quartets. Every fullRebuildEvery builds the
// matrices are built from the full densities again.
func (jk *jkBuilder) build(ctx context.Context, dens [][]float64, wantK bool) (J []float64, K [][]float64, err error) {
	nk := 0
	if wantK {
		nk = len(dens)
	}
	incremental := !jk.exact && jk.prevDens != nil && len(jk.prevDens) == len(dens) && len(jk.prevK) == nk &&
		jk.sinceFull < fullRebuildEvery
	use := dens
	if incremental {
		use = make([][]float64, len(dens))
		for s, d := range dens {
			use[s] = make([]float64, len(d))
			for i, v := range d {
				use[s][i] = v - jk.prevDens[s][i]
			}
		}
	}
	J, K, err = jk.buildFrom(ctx, use, wantK)
	if err != nil {
		return nil, nil, err
	}
	if incremental {
		for i := range J {
			J[i] += jk.prevJ[i]
		}
		for s := range K {
			for i := range K[s] {
				K[s][i] += jk.prevK[s][i]
			}
		}
		jk.sinceFull++
	} else {
		jk.sinceFull = 0
	}
	jk.prevDens = make([][]float64, len(dens))
	for s, d := range dens {
		jk.prevDens[s] = append([]float64(nil), d...)
	}
	jk.prevJ = append(jk.prevJ[:0], J...)
	jk.prevK = make([][]float64, len(K))
	for s := range K {
		jk.prevK[s] = append([]float64(nil), K[s]...)
	}
	return J, K, nil
}

// reset makes the next build a full one.
func (jk *jkBuilder) reset() { jk.prevDens, jk.prevJ, jk.prevK, jk.sinceFull = nil, nil, nil, 0 }

// buildFrom forms J and K of the given densities, without reference to
// earlier builds.
func (jk *jkBuilder) buildFrom(ctx context.Context, dens [][]float64, wantK bool) (J []float64, K [][]float64, err error) {
	n := jk.n
	nd := len(dens)
	dtot := dens[0]
	if nd > 1 {
		dtot = make([]float64, n*n)
		for _, d := range dens {
			for i := range d {
				dtot[i] += d[i]
			}
		}
	}
	nk := 0
	if wantK {
		nk = nd
	}
	dmax := jk.pairMax(dtot, dens[:nk])
	dpair := jk.packPairs(dtot)
	np := len(dpair)
	// One buffer set per chunk in flight; chunks are reduced in index order.
	nc := len(jk.chunks) - 1
	// Chunks in flight at once: as many buffer sets as fit in
	// ringBytes (at least 2·threads).
	nbuf := max(2*jk.threads, int(jk.ringBytes/int64(8*(np+n*n*nk)+8)))
	if nbuf > nc {
		nbuf = nc
	}
	// Buffers are kept between builds (an SCF builds once per iteration,
	// never concurrently) so that their pages are touched only once.
	if len(jk.pool) < nbuf || (len(jk.pool) > 0 && len(jk.pool[0].k) != nk) {
		jk.pool = make([]jkBuffers, nbuf)
		for i := range jk.pool {
			jk.pool[i].j = make([]float64, np)
			jk.pool[i].k = make([][]float64, nk)
			for s := range jk.pool[i].k {
				jk.pool[i].k[s] = make([]float64, n*n)
			}
		}
	}
	pool := jk.pool
	Jp := make([]float64, np)
	K = make([][]float64, nk)
	for s := range K {
		K[s] = make([]float64, n*n)
	}
	// The buffer sets form a ring: chunk c accumulates into pool[c mod
	// nbuf] and may start once chunk c − nbuf has been added to the sums.
	// Chunks are added in index order, by one worker at a time: whichever
	// finishes a chunk and finds the next one due done adds it (and any
	// finished ones after it) while the others go on computing. So the
	// sums do not depend on the number of threads or on which chunk
	// finishes first, and no worker waits for a whole group of chunks (a
	// small ring, under a small memory budget, costs little).
	var (
		mu        sync.Mutex
		cond      = sync.NewCond(&mu)
		next      int // next chunk to start
		committed int // chunks added to the sums
		reducing  bool
		done      = make([]bool, nbuf)
		wg        sync.WaitGroup
	)
	add := func(bf *jkBuffers) {
		for i, v := range bf.j {
			Jp[i] += v
		}
		for s := range bf.k {
			ks := K[s]
			for i, v := range bf.k[s] {
				ks[i] += v
			}
		}
	}
	workers := min(jk.threads, nc)
	for t := 0; t < workers; t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var w *integral.ERIWorkspace
			if !jk.InCore() {
				w = jk.eri.NewWorkspace()
			}
			mu.Lock()
			defer mu.Unlock()
			for {
				for next < nc && next >= committed+nbuf && ctx.Err() == nil {
					cond.Wait()
				}
				if next >= nc || ctx.Err() != nil {
					return
				}
				c := next
				next++
				mu.Unlock()
				bf := &pool[c%nbuf]
				clear(bf.j)
				for _, k := range bf.k {
					clear(k)
				}
				jk.contractChunk(w, c, dpair, dens[:nk], dmax, bf.j, bf.k)
				mu.Lock()
				done[c%nbuf] = true
				if reducing {
					continue // the worker adding chunks will take this one
				}
				reducing = true
				for committed < nc && done[committed%nbuf] {
					b := committed % nbuf
					mu.Unlock()
					add(&pool[b])
					mu.Lock()
					done[b] = false
					committed++
					cond.Broadcast()
				}
				reducing = false
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	J = make([]float64, n*n)
	jk.unpackPairs(Jp, J)
	symmetrize(J, n)
	for s := range K {
		symmetrize(K[s], n)
	}
	return J, K, nil
}

// pairMax returns the ns×ns matrix of the largest |D| element over each
// shell pair, taken over the total density and the exchange densities.
func (jk *jkBuilder) pairMax(dtot []float64, dens [][]float64) []float64 {
	n, ns := jk.n, jk.ns
	offs := jk.b.Offsets
	out := make([]float64, ns*ns)
	for a := 0; a < ns; a++ {
		na := jk.b.Shells[a].NumFunctions()
		for b := 0; b <= a; b++ {
			nb := jk.b.Shells[b].NumFunctions()
			m := 0.0
			for i := offs[a]; i < offs[a]+na; i++ {
				for j := offs[b]; j < offs[b]+nb; j++ {
					m = max(m, math.Abs(dtot[i*n+j]))
					for _, d := range dens {
						m = max(m, math.Abs(d[i*n+j]))
					}
				}
			}
			out[a*ns+b], out[b*ns+a] = m, m
		}
	}
	return out
}

// symmetrize replaces m by (m + mᵀ)/2.
func symmetrize(m []float64, n int) {
	for i := 0; i < n; i++ {
		for j := 0; j < i; j++ {
			v := 0.5 * (m[i*n+j] + m[j*n+i])
			m[i*n+j] = v
			m[j*n+i] = v
		}
	}
}

// contractChunk adds the contributions of one chunk of unique quartets to
// jp (Coulomb, packed pair layout, from the packed total density dp) and
// km (exchange of each density of dens, n×n). Each unique integral v of
// degeneracy s (the number of distinct index permutations it stands for)
// adds s/2·v·D to two Coulomb elements and s/4·v·D to four exchange
// elements; symmetrizing the sums afterwards gives J and K exactly (the
// scheme of the libint2 Hartree–Fock example).
func (jk *jkBuilder) contractChunk(w *integral.ERIWorkspace, c int, dp []float64, dens [][]float64, dmax []float64, jp []float64, km [][]float64) {
	n := jk.n
	ns := jk.ns
	offs := jk.b.Offsets
	wantK := len(dens) > 0
	for q := jk.chunks[c]; q < jk.chunks[c+1]; q++ {
		p, r := int(jk.quartets[2*q]), int(jk.quartets[2*q+1])
		si, sj, sk, sl := int(jk.pairs[2*p]), int(jk.pairs[2*p+1]), int(jk.pairs[2*r]), int(jk.pairs[2*r+1])
		// Density-weighted screening, separately for the Coulomb and the
		// exchange contractions: far apart, a quartet often matters for
		// one of them only.
		doJ, doK := true, wantK
		if !jk.exact {
			qq := jk.schwarz[si*ns+sj] * jk.schwarz[sk*ns+sl]
			doJ = qq*max(dmax[si*ns+sj], dmax[sk*ns+sl]) >= densityThreshold
			doK = wantK && qq*max(dmax[si*ns+sk], dmax[sj*ns+sl], dmax[si*ns+sl], dmax[sj*ns+sk]) >= densityThreshold
			if !doJ && !doK {
				continue
			}
		}
		ni, nj, nk, nl := jk.nf[si], jk.nf[sj], jk.nf[sk], jk.nf[sl]
		var v []float64
		if jk.incore != nil && jk.offsets[q] >= 0 {
			off := jk.offsets[q]
			v = jk.incore[off : off+ni*nj*nk*nl]
		} else {
			v = jk.eri.Quartet(w, si, sj, sk, sl)
		}
		deg := 1.0
		if si != sj {
			deg *= 2
		}
		if sk != sl {
			deg *= 2
		}
		if p != r {
			deg *= 2
		}
		nkl := nk * nl
		hj := 0.5 * deg
		hk := 0.25 * deg
		if doJ {
			// Coulomb: J_ij += D_kl·(ij|kl), J_kl += D_ij·(ij|kl), both
			// blocks contiguous in the packed layout.
			dij := dp[jk.pairOff[p] : jk.pairOff[p]+ni*nj]
			jij := jp[jk.pairOff[p] : jk.pairOff[p]+ni*nj]
			dkl := dp[jk.pairOff[r] : jk.pairOff[r]+nkl]
			jkl := jp[jk.pairOff[r] : jk.pairOff[r]+nkl]
			for ab := range dij {
				row := v[ab*nkl : (ab+1)*nkl]
				h := hj * dij[ab]
				var jab float64
				for x, val := range row {
					jab += dkl[x] * val
					jkl[x] += h * val
				}
				jij[ab] += hj * jab
			}
		}
		if !doK {
			continue
		}
		oi, oj, ok, ol := offs[si], offs[sj], offs[sk], offs[sl]
		for s, ds := range dens {
			ks := km[s]
			idx := 0
			for a := 0; a < ni; a++ {
				fa := oi + a
				kA, dA := ks[fa*n:(fa+1)*n], ds[fa*n:(fa+1)*n]
				kAd, dAd := kA[ol:ol+nl], dA[ol:ol+nl]
				for b := 0; b < nj; b++ {
					fb := oj + b
					kB, dB := ks[fb*n:(fb+1)*n], ds[fb*n:(fb+1)*n]
					kBd, dBd := kB[ol:ol+nl], dB[ol:ol+nl]
					for cc := 0; cc < nk; cc++ {
						fc := ok + cc
						row := v[idx : idx+nl]
						idx += nl
						dAc, dBc := dA[fc], dB[fc]
						var sA, sB float64
						for d, val := range row {
							x := hk * val
							sA += x * dBd[d]
							kBd[d] += x * dAc
							kAd[d] += x * dBc
							sB += x * dAd[d]
						}
						kA[fc] += sA
						kB[fc] += sB
					}
				}
			}
		}
	}
}

// JKBuilder forms the Coulomb and exchange matrices of one basis, the
// two-electron part of a Fock matrix. Run uses the same code inside; the
// type is exported so that benchmarks can time a Fock build alone.
type JKBuilder struct{ jk *jkBuilder }

// NewJKBuilder screens the shell quartets of shells and, when they fit in
// half of opt.MemoryBytes, computes and stores the integrals. Only
// opt.Threads and opt.MemoryBytes are used (defaults as for Run).
func NewJKBuilder(ctx context.Context, shells []basis.Shell, opt Options) (*JKBuilder, error) {
	opt = withDefaults(opt)
	jk, err := newJKBuilderLog(ctx, integral.NewBasis(shells), opt.Threads, opt.MemoryBytes, opt.Log)
	if err != nil {
		return nil, err
	}
	return &JKBuilder{jk: jk}, nil
}

// InCore reports whether the integrals are kept in memory.
func (b *JKBuilder) InCore() bool { return b.jk.InCore() }

// Build returns the Coulomb matrix of the total density and the exchange
// matrix of every density in dens (n×n row-major, symmetric; one total
// density for restricted, α and β for unrestricted). Every call is a full
// build, never an incremental one.
func (b *JKBuilder) Build(ctx context.Context, dens [][]float64) (J []float64, K [][]float64, err error) {
	for _, d := range dens {
		if len(d) != b.jk.n*b.jk.n {
			return nil, nil, fmt.Errorf("scf: density has %d elements, want %d×%d", len(d), b.jk.n, b.jk.n)
		}
	}
	b.jk.reset()
	return b.jk.build(ctx, dens, true)
}
