package integral

// Electron-repulsion integrals (ab|cd) = ∫∫ a(1)b(1) r₁₂⁻¹ c(2)d(2) over
// contracted Gaussian shells.
//
// Algorithm: M. Head-Gordon and J. A. Pople, J. Chem. Phys. 89, 5777 (1988)
// ("HGP"). For every pair of primitive pairs the vertical recurrence of
// S. Obara and A. Saika, J. Chem. Phys. 84, 3963 (1986), eq. (39), builds
// [e0|f0]^(0) for la ≤ |e| ≤ la+lb, lc ≤ |f| ≤ lc+ld from the Boys
// function values F_m(T); those are summed over primitives (contracted)
// and the horizontal recurrence (a,b+1ᵢ| = (a+1ᵢ,b| + (A−B)ᵢ(a,b| of HGP,
// eq. (18), moves angular momentum onto b and d on contracted quantities.
// The Cartesian result is finally mapped to the basis functions of each
// shell (shellData.trans).
//
// Shell-pair data (product exponents, centres, the exp(−αβ/ζ·AB²)
// prefactor) are computed once per pair in NewERI. Primitive pairs whose
// contribution is negligible are dropped there (eriPrimThreshold), and
// primitive quartets whose bound is negligible are skipped
// (eriQuartetThreshold). Shell quartets are reordered internally so that
// la ≥ lb, lc ≥ ld and the bra pair is the "larger" one; classes with
// l ≤ 2 on every centre use straight-line code written by internal/gen
// (eri_gen.go, with the inline Boys function of eri_boys.go), all others
// the table-driven code in eri_generic.go. The permutation back to the
// requested order and the Cartesian normalization factors are applied in
// one pass from precomputed index tables (eriPlans) for l ≤ 2.

//go:generate go run ./internal/gen -o eri_gen.go

import (
	"math"
	"runtime"
	"sort"
	"sync"
)

// eriPrimThreshold drops a primitive pair (α on A, β on B) when its charge
// bound
//
//	Q = |c_α c_β| exp(−αβ/ζ·|AB|²) (π/ζ)^{3/2} g_L (max(|PA|,|PB|)+ζ^{−1/2})^L
//
// is below it, with c the coefficients of unnormalized primitives,
// ζ = α+β, L = la+lb and g_L = Γ((L+3)/2)/Γ(3/2). Q bounds ∫|χ_α χ_β| d³r:
// every Cartesian factor |x_A| is at most |r_P|+|PA|, and
// ∫(|r|+c)^L e^{−ζr²} d³r = Σ_k C(L,k) c^{L−k} (π/ζ)^{3/2} g_k ζ^{−k/2}
// with g_k ≤ g_L. The pair then changes no integral by more than about
// this threshold times the largest Coulomb potential of a normalized
// distribution, well below the 1e-12 accuracy aimed at (common practice:
// drop primitive products below ~1e-15).
const eriPrimThreshold = 1e-15

// eriPrim is the data of one kept primitive pair.
type eriPrim struct {
	zeta float64    // ζ = α+β
	oo2z float64    // 1/(2ζ)
	p    [3]float64 // P = (αA+βB)/ζ
	pa   [3]float64 // P − A
	k    float64    // c_α c_β exp(−αβ/ζ·AB²)/ζ · √2 π^{5/4}
	// kf = k·π^{1/4}/√(2ζ) = c_α c_β exp(−αβ/ζ·AB²)(π/ζ)^{3/2}, the
	// primitive product's charge: far from each other (asymptotic Boys
	// function) two products interact as kf_p·kf_q/|PQ| (F_0 term).
	kf float64
	// bnd = Q·(4/π)^{1/4}ζ^{1/4} with Q the charge bound of
	// eriPrimThreshold: bnd_p·bnd_q bounds the primitive quartet's
	// contribution to any integral (see newERIPair).
	bnd float64
}

// eriPair is the prepared data of a shell pair, oriented so that la ≥ lb.
type eriPair struct {
	a, b   int // shell indices; shell a has the higher angular momentum
	la, lb int
	ab     [3]float64 // A − B
	prims  []eriPrim  // sorted by decreasing bnd
	maxBnd float64    // prims[0].bnd, 0 without primitives

	// Final transformation of the pair's two shells (a first).
	na, nb  int       // Cartesian components
	sa, sb  []float64 // diagonal factors (ones for identity)
	plain   bool      // both transformations are the identity
	general bool      // one of them is a general (spherical) matrix
}

// eriQuartetThreshold skips a primitive quartet when the product of the
// pair bounds bnd is below it (see newERIPair); the pair lists are sorted so
// that the loops stop at the first such quartet.
const eriQuartetThreshold = 1e-15

// key orders pairs: the pair with the larger key goes into the bra.
func (p *eriPair) key() int { return (p.la+p.lb)*16 + p.la }

// eriShellInfo holds what the final transformation needs of a shell.
type eriShellInfo struct {
	l, ncart, nfunc int
	// scale is non-nil when trans is diagonal (Cartesian shells): the
	// diagonal. It is nil for identity and for general (pure) transforms.
	scale   []float64
	general bool // trans is a general nfunc×ncart matrix
	trans   []float64
	nz      []eriNZ // nonzero entries of trans, by row
}

// eriNZ is a nonzero entry of a transformation matrix.
type eriNZ struct {
	f, c int32 // row (final function) and column (Cartesian component)
	v    float64
}

// ERIEngine computes electron-repulsion integrals over the shells of a
// Basis. It is immutable after NewERI and safe for concurrent use; each
// goroutine needs its own ERIWorkspace.
type ERIEngine struct {
	basis   *Basis
	nshell  int
	maxL    int
	pairs   []eriPair // triangular: index i(i+1)/2+j for i ≥ j
	info    []eriShellInfo
	schwarz []float64 // nshell×nshell
}

// PairPrimitives is the number of primitive pairs of the shell pair (i, j)
// kept after primitive screening: with the angular momenta, a measure of
// the work of the pair's integrals.
func (e *ERIEngine) PairPrimitives(i, j int) int { return len(e.pair(i, j).prims) }

// NumShells is the number of shells of the basis.
func (e *ERIEngine) NumShells() int { return e.nshell }

// NewERI prepares electron-repulsion integrals for basis b: shell-pair data
// and Schwarz bounds. Shells of angular momentum above 5 are not supported
// and make NewERI panic (the basis sets poise ships stop at 5 for orbital
// basis sets).
func NewERI(b *Basis) *ERIEngine {
	e := &ERIEngine{basis: b, nshell: len(b.shells), maxL: b.MaxL}
	if b.MaxL > eriMaxL {
		panic("integral: NewERI: angular momentum above 5 is not supported")
	}
	e.info = make([]eriShellInfo, e.nshell)
	for i := range b.shells {
		e.info[i] = newERIShellInfo(&b.shells[i])
	}
	e.pairs = make([]eriPair, e.nshell*(e.nshell+1)/2)
	for i := 0; i < e.nshell; i++ {
		for j := 0; j <= i; j++ {
			p := newERIPair(b, i, j)
			ia, ib := &e.info[p.a], &e.info[p.b]
			p.na, p.nb = ia.ncart, ib.ncart
			p.sa, p.sb = eriScale(ia, p.na), eriScale(ib, p.nb)
			p.plain = ia.scale == nil && !ia.general && ib.scale == nil && !ib.general
			p.general = ia.general || ib.general
			e.pairs[i*(i+1)/2+j] = p
		}
	}
	// One slab for the primitive products of all pairs, in pair order: a
	// Fock build runs through the ket pairs in that order, and contiguous
	// data lets the hardware prefetch it once it no longer fits in cache.
	nprim := 0
	for k := range e.pairs {
		nprim += len(e.pairs[k].prims)
	}
	slab := make([]eriPrim, 0, nprim)
	for k := range e.pairs {
		p := &e.pairs[k]
		start := len(slab)
		slab = append(slab, p.prims...)
		p.prims = slab[start:len(slab):len(slab)]
	}
	e.schwarz = make([]float64, e.nshell*e.nshell)
	e.computeSchwarz()
	return e
}

func newERIShellInfo(s *shellData) eriShellInfo {
	in := eriShellInfo{l: s.l, ncart: s.ncart, nfunc: s.nfunc, trans: s.trans}
	diag, ident := s.nfunc == s.ncart, s.nfunc == s.ncart
	for r := 0; r < s.nfunc; r++ {
		for c := 0; c < s.ncart; c++ {
			v := s.trans[r*s.ncart+c]
			if r != c && v != 0 {
				diag, ident = false, false
			}
			if r == c && v != 1 {
				ident = false
			}
		}
	}
	switch {
	case ident:
	case diag:
		in.scale = make([]float64, s.ncart)
		for r := range in.scale {
			in.scale[r] = s.trans[r*s.ncart+r]
		}
	default:
		in.general = true
		for r := 0; r < s.nfunc; r++ {
			for c := 0; c < s.ncart; c++ {
				if v := s.trans[r*s.ncart+c]; v != 0 {
					in.nz = append(in.nz, eriNZ{f: int32(r), c: int32(c), v: v})
				}
			}
		}
	}
	return in
}

// newERIPair prepares the pair of shells i and j.
func newERIPair(b *Basis, i, j int) eriPair {
	sa, sb := &b.shells[i], &b.shells[j]
	p := eriPair{a: i, b: j}
	if sb.l > sa.l {
		sa, sb = sb, sa
		p.a, p.b = j, i
	}
	p.la, p.lb = sa.l, sb.l
	var ab2 float64
	for k := 0; k < 3; k++ {
		p.ab[k] = sa.center[k] - sb.center[k]
		ab2 += p.ab[k] * p.ab[k]
	}
	pre := math.Sqrt2 * math.Pow(math.Pi, 1.25)
	for u, al := range sa.exps {
		for v, be := range sb.exps {
			z := al + be
			kab := math.Exp(-al * be / z * ab2)
			c := sa.coefs[u] * sb.coefs[v]
			var pr eriPrim
			pr.zeta = z
			pr.oo2z = 0.5 / z
			var dpa, dpb float64
			for k := 0; k < 3; k++ {
				pr.p[k] = (al*sa.center[k] + be*sb.center[k]) / z
				pr.pa[k] = pr.p[k] - sa.center[k]
				dpa += pr.pa[k] * pr.pa[k]
				d := pr.p[k] - sb.center[k]
				dpb += d * d
			}
			L := float64(p.la + p.lb)
			gL := math.Gamma((L+3)/2) / math.Gamma(1.5)
			bound := math.Abs(c) * kab * math.Pow(math.Pi/z, 1.5) * gL *
				math.Pow(math.Sqrt(math.Max(dpa, dpb))+1/math.Sqrt(z), L)
			if bound < eriPrimThreshold {
				continue
			}
			pr.k = c * kab / z * pre
			pr.kf = primCharge(pr.k, z)
			// The Coulomb interaction of two charge distributions with
			// charges Q_p, Q_q and exponents ζ, η is taken to be at most
			// Q_p Q_q·2√(min(ζ,η)/π): each charge times the peak potential
			// 2√(ζ/π) (or 2√(η/π)) per unit charge of the other Gaussian,
			// whichever is smaller (a bound for s functions, where
			// (ss|ss) = Q_p Q_q·2√(ρ/π)F₀(T) with ρ ≤ min(ζ,η); polynomial
			// factors only spread the charge).
			// Since min(ζ,η) ≤ √(ζη), bnd = Q·(4/π)^{1/4} ζ^{1/4} gives
			// bnd_p·bnd_q = Q_p Q_q (2/√π)(ζη)^{1/4} ≥ that bound.
			pr.bnd = bound * math.Pow(4/math.Pi, 0.25) * math.Pow(z, 0.25)
			p.prims = append(p.prims, pr)
		}
	}
	sort.SliceStable(p.prims, func(x, y int) bool { return p.prims[x].bnd > p.prims[y].bnd })
	if len(p.prims) > 0 {
		p.maxBnd = p.prims[0].bnd
	}
	return p
}

// primCharge is the charge kf = k·π^{1/4}/√(2ζ) = c_α c_β
// exp(−αβ/ζ·AB²)(π/ζ)^{3/2} of a primitive product with prefactor k and
// exponent ζ (see eriPrim).
func primCharge(k, zeta float64) float64 { return k * math.Pow(math.Pi, 0.25) / math.Sqrt(2*zeta) }

// pair returns the prepared data of shells i and j (either order).
func (e *ERIEngine) pair(i, j int) *eriPair {
	if i < j {
		i, j = j, i
	}
	return &e.pairs[i*(i+1)/2+j]
}

// computeSchwarz fills the Schwarz bounds, pairs split among goroutines in
// fixed chunks (each entry is computed independently, so the result does
// not depend on the number of goroutines).
func (e *ERIEngine) computeSchwarz() {
	np := len(e.pairs)
	workers := runtime.GOMAXPROCS(0)
	const chunk = 64
	var next int
	var mu sync.Mutex
	var wg sync.WaitGroup
	for t := 0; t < workers; t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := e.NewWorkspace()
			for {
				mu.Lock()
				start := next
				next += chunk
				mu.Unlock()
				if start >= np {
					return
				}
				for idx := start; idx < min(start+chunk, np); idx++ {
					i := int((math.Sqrt(float64(8*idx+1)) - 1) / 2)
					for i*(i+1)/2 > idx {
						i--
					}
					for (i+1)*(i+2)/2 <= idx {
						i++
					}
					j := idx - i*(i+1)/2
					v := e.Quartet(w, i, j, i, j)
					ni, nj := e.info[i].nfunc, e.info[j].nfunc
					n := ni * nj
					var mx float64
					for ab := 0; ab < n; ab++ {
						mx = math.Max(mx, math.Abs(v[ab*n+ab]))
					}
					s := math.Sqrt(mx)
					e.schwarz[i*e.nshell+j] = s
					e.schwarz[j*e.nshell+i] = s
				}
			}
		}()
	}
	wg.Wait()
}

// Schwarz returns sqrt(max |(ab|ab)|) over the functions a of shell i and
// b of shell j: |(ab|cd)| ≤ Schwarz(i,j)·Schwarz(k,l) for a∈i, b∈j, c∈k, d∈l.
func (e *ERIEngine) Schwarz(i, j int) float64 { return e.schwarz[i*e.nshell+j] }

// SchwarzMatrix returns a copy of the nshell×nshell matrix of Schwarz bounds
// (row-major).
func (e *ERIEngine) SchwarzMatrix() []float64 { return append([]float64(nil), e.schwarz...) }

// ERIWorkspace is the scratch memory of one goroutine. Quartet does not
// allocate once a workspace has seen the largest class.
type ERIWorkspace struct {
	boys [eriMaxM + 1]float64
	vrr  []float64 // generic vertical recursion, all levels
	acc  []float64 // contracted [e0|f0]
	h1   []float64 // horizontal recursion and transformation buffers
	h2   []float64
	out  []float64 // final integrals
}

// NewWorkspace returns scratch memory for Quartet, sized for the largest
// shell quartet of the engine's basis.
func (e *ERIEngine) NewWorkspace() *ERIWorkspace {
	w := &ERIWorkspace{}
	L := e.maxL
	// Generic vertical recursion: Lab = Lcd = 2L is the largest.
	nv := eriVRRSize(2*L, 2*L)
	na, nh := 0, 0
	for la := 0; la <= L; la++ {
		for lb := 0; lb <= la; lb++ {
			for lc := 0; lc <= L; lc++ {
				for ld := 0; ld <= lc; ld++ {
					a, h := eriHRRSizes(la, lb, lc, ld)
					na = max(na, a)
					nh = max(nh, h)
				}
			}
		}
	}
	nc := basisNCart(L)
	nh = max(nh, nc*nc*nc*nc)
	w.vrr = make([]float64, nv)
	w.acc = make([]float64, na)
	w.h1 = make([]float64, nh)
	w.h2 = make([]float64, nh)
	w.out = make([]float64, nh)
	return w
}

func basisNCart(l int) int { return (l + 1) * (l + 2) / 2 }

// Quartet returns the integrals (ab|cd) for a in shell i, b in j, c in k,
// d in l over the final basis functions, row-major [a][b][c][d]. The shells
// may come in any order. The slice belongs to w and is valid until the next
// call with w.
func (e *ERIEngine) Quartet(w *ERIWorkspace, i, j, k, l int) []float64 {
	return e.quartetPairs(w, e.pair(i, j), e.pair(k, l), i, k)
}

// quartetPairs is Quartet for prepared pairs: bra holds the request's
// shells (i, ·) and ket (k, ·), in either stored order. ThreeCentre calls
// it with pairs it prepares itself (an auxiliary shell paired with a unit
// shell).
func (e *ERIEngine) quartetPairs(w *ERIWorkspace, bra, ket *eriPair, i, k int) []float64 {
	swBra, swKet := bra.a != i, ket.a != k // pair stored in the other order
	swap := ket.key() > bra.key()          // ket computed as the bra
	if swap {
		bra, ket = ket, bra
	}
	cart := e.cartesian(w, bra, ket)
	if bra.plain && ket.plain && !swBra && !swKet && !swap {
		return cart[:bra.na*bra.nb*ket.na*ket.nb]
	}
	if !bra.general && !ket.general && bra.la <= eriPlanMaxL && ket.la <= eriPlanMaxL {
		flags := 0
		if swBra {
			flags |= 1
		}
		if swKet {
			flags |= 2
		}
		if swap {
			flags |= 4
		}
		plan := &eriPlans[eriClass(bra.la, bra.lb, ket.la, ket.lb)*8+flags]
		dst := w.out[:len(plan.idx)]
		if &cart[0] == &dst[0] {
			dst = w.h1[:len(plan.idx)]
		}
		src := cart[:len(plan.idx)]
		sc := plan.scale[:len(plan.idx)]
		for i, o := range plan.idx {
			dst[o] = src[i] * sc[i]
		}
		return dst
	}
	if bra.general || ket.general {
		// pos[x] is the position (0…3 in the request) of canonical shell x.
		pos := [4]int{0, 1, 2, 3}
		if swBra {
			pos[0], pos[1] = 1, 0
		}
		if swKet {
			pos[2], pos[3] = 3, 2
		}
		if swap {
			pos = [4]int{pos[2], pos[3], pos[0], pos[1]}
		}
		return e.finish(w, cart, [4]int{bra.a, bra.b, ket.a, ket.b}, pos)
	}
	return eriScatterPairs(w, cart, bra, ket, swBra, swKet, swap)
}

// eriPlanMaxL is the highest angular momentum per shell for which the
// final permutation and scaling of Cartesian shells is tabulated.
const eriPlanMaxL = 2

// eriPlan maps canonical Cartesian integrals of a class to the requested
// order: dst[idx[i]] = src[i]·scale[i].
type eriPlan struct {
	idx   []int32
	scale []float64
}

// eriPlans[eriClass(la,lb,lc,ld)*8 + flags] is the plan for Cartesian
// shells (and s shells of either kind) with l ≤ eriPlanMaxL; flags bit 0:
// the request's first pair is stored b-first, bit 1: likewise the second
// pair, bit 2: the request's first pair is the canonical ket. Read-only
// after initialization.
var eriPlans = func() []eriPlan {
	plans := make([]eriPlan, eriNumClass*8)
	var scale [eriPlanMaxL + 1][]float64
	for l := range scale {
		t := shellTransform(l, false)
		n := basisNCart(l)
		scale[l] = make([]float64, n)
		for i := range scale[l] {
			scale[l][i] = t[i*n+i]
		}
	}
	for la := 0; la <= eriPlanMaxL; la++ {
		for lb := 0; lb <= la; lb++ {
			for lc := 0; lc <= eriPlanMaxL; lc++ {
				for ld := 0; ld <= lc; ld++ {
					for flags := 0; flags < 8; flags++ {
						plans[eriClass(la, lb, lc, ld)*8+flags] = newERIPlan(
							[4][]float64{scale[la], scale[lb], scale[lc], scale[ld]},
							flags&1 != 0, flags&2 != 0, flags&4 != 0)
					}
				}
			}
		}
	}
	return plans
}()

func newERIPlan(sc [4][]float64, swBra, swKet, swap bool) eriPlan {
	n := [4]int{len(sc[0]), len(sc[1]), len(sc[2]), len(sc[3])}
	// Request positions of canonical A, B, C, D.
	pos := [4]int{0, 1, 2, 3}
	if swBra {
		pos[0], pos[1] = 1, 0
	}
	if swKet {
		pos[2], pos[3] = 3, 2
	}
	if swap {
		pos = [4]int{pos[2], pos[3], pos[0], pos[1]}
	}
	var dims [4]int
	for x := 0; x < 4; x++ {
		dims[pos[x]] = n[x]
	}
	rs := [4]int{dims[1] * dims[2] * dims[3], dims[2] * dims[3], dims[3], 1}
	total := n[0] * n[1] * n[2] * n[3]
	p := eriPlan{idx: make([]int32, 0, total), scale: make([]float64, 0, total)}
	for a := 0; a < n[0]; a++ {
		for b := 0; b < n[1]; b++ {
			for c := 0; c < n[2]; c++ {
				for d := 0; d < n[3]; d++ {
					p.idx = append(p.idx, int32(a*rs[pos[0]]+b*rs[pos[1]]+c*rs[pos[2]]+d*rs[pos[3]]))
					p.scale = append(p.scale, sc[0][a]*sc[1][b]*sc[2][c]*sc[3][d])
				}
			}
		}
	}
	return p
}

// eriScatterPairs applies the diagonal factors of Cartesian shells and the
// permutation back to the requested order.
func eriScatterPairs(w *ERIWorkspace, cart []float64, bra, ket *eriPair, swBra, swKet, swap bool) []float64 {
	// The request is (first pair | second pair); first is bra unless swap.
	// swBra and swKet refer to the request's pairs (i,j) and (k,l).
	first, second := bra, ket
	swFirst, swSecond := swBra, swKet
	if swap {
		first, second = ket, bra
	}
	n2 := second.na * second.nb
	total := first.na * first.nb * n2
	// Output strides of the canonical a and b of each pair.
	var f1, f2, s1, s2 int
	if swSecond {
		s1, s2 = 1, second.na
	} else {
		s1, s2 = second.nb, 1
	}
	if swFirst {
		f1, f2 = n2, first.na*n2
	} else {
		f1, f2 = first.nb*n2, n2
	}
	var out [4]int // strides of A, B, C, D
	if swap {
		out = [4]int{s1, s2, f1, f2}
	} else {
		out = [4]int{f1, f2, s1, s2}
	}
	n := [4]int{bra.na, bra.nb, ket.na, ket.nb}
	sc := [4][]float64{bra.sa, bra.sb, ket.sa, ket.sb}
	src := [4]int{bra.nb * ket.na * ket.nb, ket.na * ket.nb, ket.nb, 1}
	dst := w.out[:total]
	if &cart[0] == &dst[0] {
		dst = w.h1[:total]
		if &cart[0] == &w.h1[0] {
			dst = w.h2[:total]
		}
	}
	var ax [4]eriAxis
	m := 0
	for x := 0; x < 4; x++ {
		if n[x] > 1 {
			ax[m] = eriAxis{n: n[x], src: src[x], out: out[x], scale: sc[x]}
			m++
		}
	}
	eriScatterAxes(dst, cart, &ax, m)
	return dst
}

// cartesian returns (AB|CD) over axially normalized Cartesian components
// for a canonical quartet, row-major.
func (e *ERIEngine) cartesian(w *ERIWorkspace, bra, ket *eriPair) []float64 {
	if f := eriGenTable[eriClass(bra.la, bra.lb, ket.la, ket.lb)]; f != nil {
		return f(w, bra, ket)
	}
	return e.generic(w, bra, ket)
}

// eriClass indexes canonical classes (la ≥ lb, lc ≥ ld).
func eriClass(la, lb, lc, ld int) int {
	return ((la*(eriMaxL+1)+lb)*(eriMaxL+1)+lc)*(eriMaxL+1) + ld
}

// eriGenFunc computes a canonical quartet of one class with straight-line
// code and returns the Cartesian integrals (in w.out).
type eriGenFunc func(w *ERIWorkspace, bra, ket *eriPair) []float64

// finish maps canonical Cartesian integrals over shells sh (A, B, C, D) to
// the final functions and the requested order: canonical shell x sits at
// position pos[x] of the request.
func (e *ERIEngine) finish(w *ERIWorkspace, cart []float64, sh, pos [4]int) []float64 {
	var in [4]*eriShellInfo
	var n [4]int // current dimensions
	anyGeneral := false
	for x := 0; x < 4; x++ {
		in[x] = &e.info[sh[x]]
		n[x] = in[x].ncart
		anyGeneral = anyGeneral || in[x].general
	}
	src := cart
	if anyGeneral {
		buf := [2][]float64{w.h1, w.h2}
		if &cart[0] == &w.h1[0] {
			buf = [2][]float64{w.h2, w.h1}
		}
		bi := 0
		for x := 0; x < 4; x++ {
			if !in[x].general {
				continue
			}
			pre, post := 1, 1
			for y := 0; y < x; y++ {
				pre *= n[y]
			}
			for y := x + 1; y < 4; y++ {
				post *= n[y]
			}
			dst := buf[bi]
			eriTransformSparse(dst, src, pre, in[x].ncart, in[x].nfunc, post, in[x].nz)
			n[x] = in[x].nfunc
			src = dst
			bi ^= 1
		}
	}
	natural := pos == [4]int{0, 1, 2, 3}
	noScale := in[0].scale == nil && in[1].scale == nil && in[2].scale == nil && in[3].scale == nil
	total := n[0] * n[1] * n[2] * n[3]
	if natural && noScale {
		return src[:total]
	}
	// Strides of the request.
	var dims [4]int
	for x := 0; x < 4; x++ {
		dims[pos[x]] = n[x]
	}
	var rs [4]int
	rs[3] = 1
	rs[2] = dims[3]
	rs[1] = dims[2] * dims[3]
	rs[0] = dims[1] * dims[2] * dims[3]
	out := w.out[:total]
	if &src[0] == &out[0] {
		out = w.h1[:total]
		if &src[0] == &w.h1[0] {
			out = w.h2[:total]
		}
	}
	// Collapse the axes of length 1 (s shells, whose factor is 1) and
	// scatter over the others.
	var ax [4]eriAxis
	k := 0
	ss := [4]int{n[1] * n[2] * n[3], n[2] * n[3], n[3], 1} // source strides
	for x := 0; x < 4; x++ {
		if n[x] == 1 {
			continue
		}
		ax[k] = eriAxis{n: n[x], src: ss[x], out: rs[pos[x]], scale: eriScale(in[x], n[x])}
		k++
	}
	eriScatterAxes(out, src, &ax, k)
	return out
}

// eriScatterAxes scatters over the first k axes (those of length > 1).
func eriScatterAxes(out, src []float64, ax *[4]eriAxis, k int) {
	switch k {
	case 0:
		out[0] = src[0]
	case 1:
		eriScatter1(out, src, &ax[0])
	case 2:
		eriScatter2(out, src, &ax[0], &ax[1])
	case 3:
		eriScatter3(out, src, &ax[0], &ax[1], &ax[2])
	default:
		eriScatter4(out, src, ax)
	}
}

// eriAxis is one index of a quartet of integrals during the final scatter.
type eriAxis struct {
	n, src, out int       // length, stride in the source, stride in the output
	scale       []float64 // per-component factor, length n
}

func eriScatter1(out, src []float64, a *eriAxis) {
	for i, f := range a.scale[:a.n] {
		out[i*a.out] = src[i*a.src] * f
	}
}

func eriScatter2(out, src []float64, a, b *eriAxis) {
	sb := b.scale[:b.n]
	for i, fa := range a.scale[:a.n] {
		so, oo := i*a.src, i*a.out
		for _, fb := range sb {
			out[oo] = src[so] * fa * fb
			so += b.src
			oo += b.out
		}
	}
}

func eriScatter3(out, src []float64, a, b, c *eriAxis) {
	sb, sc := b.scale[:b.n], c.scale[:c.n]
	for i, fa := range a.scale[:a.n] {
		for j, fb := range sb {
			fab := fa * fb
			so, oo := i*a.src+j*b.src, i*a.out+j*b.out
			for _, fc := range sc {
				out[oo] = src[so] * fab * fc
				so += c.src
				oo += c.out
			}
		}
	}
}

func eriScatter4(out, src []float64, ax *[4]eriAxis) {
	a, b, c, d := &ax[0], &ax[1], &ax[2], &ax[3]
	sb, sc, sd := b.scale[:b.n], c.scale[:c.n], d.scale[:d.n]
	for i, fa := range a.scale[:a.n] {
		for j, fb := range sb {
			fab := fa * fb
			for k, fc := range sc {
				fabc := fab * fc
				so, oo := i*a.src+j*b.src+k*c.src, i*a.out+j*b.out+k*c.out
				for _, fd := range sd {
					out[oo] = src[so] * fabc * fd
					so += d.src
					oo += d.out
				}
			}
		}
	}
}

// eriScale returns the diagonal scale of a shell's n current components
// (ones for identity and for general transforms, which have already been
// applied).
func eriScale(in *eriShellInfo, n int) []float64 {
	if in.scale == nil {
		return eriOnes[:n]
	}
	return in.scale[:n]
}

// eriOnes is a read-only vector of ones.
var eriOnes = func() []float64 {
	v := make([]float64, basisNCart(eriMaxL+2))
	for i := range v {
		v[i] = 1
	}
	return v
}()

// eriTransformSparse applies the nf×nc matrix with nonzero entries nz to
// the middle index of src viewed as [pre][nc][post], writing dst as
// [pre][nf][post].
func eriTransformSparse(dst, src []float64, pre, nc, nf, post int, nz []eriNZ) {
	if post == 1 {
		for p := 0; p < pre; p++ {
			d := dst[p*nf : (p+1)*nf]
			s := src[p*nc : (p+1)*nc]
			clear(d)
			for _, z := range nz {
				d[z.f] += z.v * s[z.c]
			}
		}
		return
	}
	for p := 0; p < pre; p++ {
		d := dst[p*nf*post : (p+1)*nf*post]
		s := src[p*nc*post : (p+1)*nc*post]
		clear(d)
		for _, z := range nz {
			dd := d[int(z.f)*post : int(z.f+1)*post]
			ss := s[int(z.c)*post : int(z.c+1)*post]
			ss = ss[:len(dd)]
			for q := range dd {
				dd[q] += z.v * ss[q]
			}
		}
	}
}

// Tensor returns the full nbf⁴ tensor of integrals (ab|cd), row-major. It
// is meant for tests and very small systems.
func (e *ERIEngine) Tensor() []float64 {
	nbf := e.basis.NBF
	off := e.basis.Offsets
	t := make([]float64, nbf*nbf*nbf*nbf)
	w := e.NewWorkspace()
	for i := 0; i < e.nshell; i++ {
		for j := 0; j <= i; j++ {
			for k := 0; k <= i; k++ {
				lmax := k
				if k == i {
					lmax = j
				}
				for l := 0; l <= lmax; l++ {
					v := e.Quartet(w, i, j, k, l)
					ni, nj, nk, nl := e.info[i].nfunc, e.info[j].nfunc, e.info[k].nfunc, e.info[l].nfunc
					idx := 0
					for a := off[i]; a < off[i]+ni; a++ {
						for b := off[j]; b < off[j]+nj; b++ {
							for c := off[k]; c < off[k]+nk; c++ {
								for d := off[l]; d < off[l]+nl; d++ {
									x := v[idx]
									idx++
									ab, ba, cd, dc := a*nbf+b, b*nbf+a, c*nbf+d, d*nbf+c
									n2 := nbf * nbf
									t[ab*n2+cd], t[ba*n2+cd], t[ab*n2+dc], t[ba*n2+dc] = x, x, x, x
									t[cd*n2+ab], t[dc*n2+ab], t[cd*n2+ba], t[dc*n2+ba] = x, x, x, x
								}
							}
						}
					}
				}
			}
		}
	}
	return t
}
