package scf

import (
	"context"
	"runtime"
	"sync"

	"poise/energy/integral"
)

// schwarzThreshold is the screening threshold on the Cauchy–Schwarz bound
// |(ij|kl)| ≤ Q_ij·Q_kl below which a shell quartet is skipped (Häser &
// Ahlrichs, J. Comput. Chem. 10, 104 (1989)). It is fixed, not density
// dependent, so that in-core and direct builds agree exactly.
const schwarzThreshold = 1e-12

// quartetsPerChunk is the fixed amount of work (in shell quartets) handed to
// one worker at a time. Each chunk accumulates into its own buffer and chunks
// are summed in index order, so the result does not depend on the number of
// threads.
const quartetsPerChunk = 2048

// waveBytes bounds the memory of the per-chunk Coulomb and exchange buffers
// held at once by a Fock build.
const waveBytes = 64 << 20

// jkBuilder forms Coulomb and exchange matrices from densities, keeping the
// electron-repulsion integrals in memory when they fit, else recomputing
// them on every build (integral-direct).
type jkBuilder struct {
	b       *integral.Basis
	eri     *integral.ERIEngine
	n       int // basis functions
	threads int

	// quartets lists the canonical shell quartets that survive screening:
	// i ≥ j, k ≥ l, (ij) ≥ (kl), stored as four int32 per quartet.
	quartets []int32
	chunks   []int // start index (in quartets) of every chunk, plus the end

	// incore holds the integral blocks of every quartet, concatenated in
	// quartet order, when they fit in memory; otherwise nil (direct).
	incore  []float64
	offsets []int // start of each quartet's block in incore

	pool []jkBuffers // per-chunk accumulation buffers, reused between builds

}

// jkBuffers are the Coulomb and exchange accumulators of one chunk.
type jkBuffers struct {
	j []float64
	k [][]float64
}

// newJKBuilder screens shell quartets and, when memoryBytes allows, computes
// and stores all surviving integral blocks.
func newJKBuilder(ctx context.Context, b *integral.Basis, threads int, memoryBytes int64) (*jkBuilder, error) {
	if threads < 1 {
		threads = runtime.GOMAXPROCS(0)
	}
	eri := integral.NewERI(b)
	ns := eri.NumShells()
	jk := &jkBuilder{b: b, eri: eri, n: b.NBF, threads: threads}
	q := eri.SchwarzMatrix()
	nf := func(s int) int { return b.Shells[s].NumFunctions() }
	// visit calls fn for every canonical quartet that survives screening.
	visit := func(fn func(i, j, k, l int)) {
		for i := 0; i < ns; i++ {
			for j := 0; j <= i; j++ {
				qij := q[i*ns+j]
				ij := i*(i+1)/2 + j
				for k := 0; k <= i; k++ {
					lmax := k
					if k == i {
						lmax = j
					}
					for l := 0; l <= lmax; l++ {
						if k*(k+1)/2+l > ij || qij*q[k*ns+l] < schwarzThreshold {
							continue
						}
						fn(i, j, k, l)
					}
				}
			}
		}
	}
	count := 0
	visit(func(_, _, _, _ int) { count++ })
	jk.quartets = make([]int32, 0, 4*count)
	var storeWords int64
	visit(func(i, j, k, l int) {
		jk.quartets = append(jk.quartets, int32(i), int32(j), int32(k), int32(l))
		storeWords += int64(nf(i) * nf(j) * nf(k) * nf(l))
	})
	nq := len(jk.quartets) / 4
	for s := 0; s < nq; s += quartetsPerChunk {
		jk.chunks = append(jk.chunks, s)
	}
	jk.chunks = append(jk.chunks, nq)

	// Keep the integrals if they take at most half of the memory budget;
	// the rest is left for matrices, buffers and the garbage collector.
	if memoryBytes > 0 && storeWords*8 <= memoryBytes/2 {
		if err := jk.fillInCore(ctx, storeWords); err != nil {
			return nil, err
		}
	}
	return jk, nil
}

// InCore reports whether the integrals are kept in memory.
func (jk *jkBuilder) InCore() bool { return jk.incore != nil }

func (jk *jkBuilder) fillInCore(ctx context.Context, words int64) error {
	nq := len(jk.quartets) / 4
	jk.offsets = make([]int, nq+1)
	off := 0
	for q := 0; q < nq; q++ {
		jk.offsets[q] = off
		i, j, k, l := jk.quartets[4*q], jk.quartets[4*q+1], jk.quartets[4*q+2], jk.quartets[4*q+3]
		off += jk.b.Shells[i].NumFunctions() * jk.b.Shells[j].NumFunctions() * jk.b.Shells[k].NumFunctions() * jk.b.Shells[l].NumFunctions()
	}
	jk.offsets[nq] = off
	store := make([]float64, words)
	err := jk.parallelChunks(ctx, func(w *integral.ERIWorkspace, c int) {
		for q := jk.chunks[c]; q < jk.chunks[c+1]; q++ {
			i, j, k, l := jk.quartets[4*q], jk.quartets[4*q+1], jk.quartets[4*q+2], jk.quartets[4*q+3]
			v := jk.eri.Quartet(w, int(i), int(j), int(k), int(l))
			copy(store[jk.offsets[q]:jk.offsets[q+1]], v)
		}
	})
	if err != nil {
		return err
	}
	jk.incore = store
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
func (jk *jkBuilder) build(ctx context.Context, dens [][]float64, wantK bool) (J []float64, K [][]float64, err error) {
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
	// One buffer set per chunk in flight; chunks are reduced in index order.
	nc := len(jk.chunks) - 1
	// Chunks in flight at once: as many buffer sets as fit in
	// waveBytes (at least 2·threads), so that workers rarely wait for the
	// in-order reduction. The grouping never changes the result.
	wave := max(2*jk.threads, int(waveBytes/int64(8*n*n*(1+nk))))
	if wave > nc {
		wave = nc
	}
	// Buffers are kept between builds (an SCF builds once per iteration,
	// never concurrently) so that their pages are touched only once.
	if len(jk.pool) < wave || (len(jk.pool) > 0 && len(jk.pool[0].k) != nk) {
		jk.pool = make([]jkBuffers, wave)
		for i := range jk.pool {
			jk.pool[i].j = make([]float64, n*n)
			jk.pool[i].k = make([][]float64, nk)
			for s := range jk.pool[i].k {
				jk.pool[i].k[s] = make([]float64, n*n)
			}
		}
	}
	pool := jk.pool
	J = make([]float64, n*n)
	K = make([][]float64, nk)
	for s := range K {
		K[s] = make([]float64, n*n)
	}
	for start := 0; start < nc; start += wave {
		end := start + wave
		if end > nc {
			end = nc
		}
		var wg sync.WaitGroup
		var next = start
		var mu sync.Mutex
		workers := jk.threads
		if workers > end-start {
			workers = end - start
		}
		for t := 0; t < workers; t++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				var w *integral.ERIWorkspace
				if jk.incore == nil {
					w = jk.eri.NewWorkspace()
				}
				for ctx.Err() == nil {
					mu.Lock()
					c := next
					next++
					mu.Unlock()
					if c >= end {
						return
					}
					bf := &pool[c-start]
					clear(bf.j)
					for _, k := range bf.k {
						clear(k)
					}
					jk.contractChunk(w, c, dtot, dens[:nk], bf.j, bf.k)
				}
			}()
		}
		wg.Wait()
		if err := ctx.Err(); err != nil {
			return nil, nil, err
		}
		for c := start; c < end; c++ {
			bf := &pool[c-start]
			for i, v := range bf.j {
				J[i] += v
			}
			for s := range bf.k {
				for i, v := range bf.k[s] {
					K[s][i] += v
				}
			}
		}
	}
	symmetrize(J, n)
	for s := range K {
		symmetrize(K[s], n)
	}
	return J, K, nil
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
// j and k. Each unique integral v of degeneracy s (the number of distinct
// index permutations it stands for) adds s/2·v·D to two Coulomb elements and
// s/4·v·D to four exchange elements; symmetrizing the sums afterwards gives
// J and K exactly (the scheme of the libint2 Hartree–Fock example).
func (jk *jkBuilder) contractChunk(w *integral.ERIWorkspace, c int, dtot []float64, dens [][]float64, jm []float64, km [][]float64) {
	n := jk.n
	offs := jk.b.Offsets
	for q := jk.chunks[c]; q < jk.chunks[c+1]; q++ {
		si, sj, sk, sl := int(jk.quartets[4*q]), int(jk.quartets[4*q+1]), int(jk.quartets[4*q+2]), int(jk.quartets[4*q+3])
		var v []float64
		if jk.incore != nil {
			v = jk.incore[jk.offsets[q]:jk.offsets[q+1]]
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
		if si != sk || sj != sl {
			deg *= 2
		}
		ni, nj, nk, nl := jk.b.Shells[si].NumFunctions(), jk.b.Shells[sj].NumFunctions(), jk.b.Shells[sk].NumFunctions(), jk.b.Shells[sl].NumFunctions()
		oi, oj, ok, ol := offs[si], offs[sj], offs[sk], offs[sl]
		hj := 0.5 * deg
		hk := 0.25 * deg
		idx := 0
		for a := 0; a < ni; a++ {
			fa := oi + a
			for b := 0; b < nj; b++ {
				fb := oj + b
				dab := dtot[fa*n+fb]
				var jab float64
				for cc := 0; cc < nk; cc++ {
					fc := ok + cc
					rowC := fc * n
					for d := 0; d < nl; d++ {
						fd := ol + d
						val := v[idx]
						idx++
						if val == 0 {
							continue
						}
						jab += dtot[rowC+fd] * val
						jm[rowC+fd] += hj * dab * val
						for s, ds := range dens {
							ks := km[s]
							x := hk * val
							ks[fa*n+fc] += x * ds[fb*n+fd]
							ks[fb*n+fd] += x * ds[fa*n+fc]
							ks[fa*n+fd] += x * ds[fb*n+fc]
							ks[fb*n+fc] += x * ds[fa*n+fd]
						}
					}
				}
				jm[fa*n+fb] += hj * jab
			}
		}
	}
}
