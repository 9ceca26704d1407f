package integral

// Three-centre and two-centre Coulomb integrals between an orbital basis
// and an auxiliary (fitting) basis, and their nuclear derivatives, for
// density fitting (resolution of the identity) of the Coulomb and exchange
// matrices.
//
// Method. A three-centre integral is a four-centre one with a "unit" s
// shell, the constant function 1 (exponent 0, coefficient 1, no
// normalization), beside the auxiliary shell:
//
//	(ab|P) = (ab|P·1),   (P|Q) = (P·1|Q·1).
//
// The Head-Gordon–Pople recursions of eri.go (M. Head-Gordon and J. A.
// Pople, J. Chem. Phys. 89, 5777 (1988); S. Obara and A. Saika, J. Chem.
// Phys. 84, 3963 (1986)) hold unchanged for a zero exponent: the product of
// P with the unit shell is P itself (ζ = α_P, K = 1). Each auxiliary shell
// gets its own unit shell at its centre, and only the pairs (orbital,
// orbital) and (auxiliary, unit) are ever prepared, so no Schwarz factor,
// pair bound or normalization is formed for a unit shell alone.
//
// Derivatives reuse deriv_eri.go: the derivative with respect to the unit
// shell's centre is exactly zero (the derivative of a constant; its raised
// companion has coefficient 2·0·c = 0), so when the unit shell is the
// fourth, translationally inferred centre its contribution is dropped
// rather than formed as a difference of the other three. Three-centre
// classes with orbital l ≤ derivGenMaxL and auxiliary l ≤
// deriv3GenMaxAuxL have their own generated code (deriv3GenTable in
// deriv_gen.go): always the orbital pair in the bra and (P·1) in the ket,
// whose product centre is P's centre, so the ket needs no horizontal
// recursion and its vertical recursion no QC terms; only the orbital
// centres are differentiated, ∂/∂C = −(∂/∂A + ∂/∂B) (the unit shell's
// derivative being zero), which spares the raised auxiliary class.

import (
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"poise/energy/basis"
)

// twoGradPairsPerChunk is the same for auxiliary shell pairs in
// TwoCentreGradient and TwoCentre.
const twoGradPairsPerChunk = 256

// ThreeCentre evaluates Coulomb integrals between an orbital basis and an
// auxiliary (fitting) basis. It is immutable after NewThreeCentre and safe
// for concurrent use; each goroutine needs its own ThreeCentreWorkspace.
type ThreeCentre struct {
	orb, aux   *Basis
	norb, naux int    // shells
	comb       *Basis // orbital shells, auxiliary shells, one unit shell per auxiliary shell
	eng        *ERIEngine
	orbPairs   []eriPair // triangular over orbital shells, index i(i+1)/2+j
	auxPairs   []eriPair // auxiliary shell p with its unit shell
	auxSchwarz []float64
	orbSchwarz []float64 // triangular over orbital shells, as orbPairs
	atom       []int     // atom of every shell of comb
	// orbDiag is the diagonal of an orbital shell's transformation when it
	// is diagonal (Cartesian shells), nil otherwise.
	orbDiag [][]float64
}

// MaxShellL is the highest angular momentum of a shell that the
// electron-repulsion code (four-, three- and two-centre) handles.
const MaxShellL = eriMaxL

// ThreeCentreWorkspace is the scratch memory of one goroutine.
type ThreeCentreWorkspace struct {
	w *ERIWorkspace
}

// NewThreeCentre prepares three- and two-centre Coulomb integrals between
// the orbital basis orb and the auxiliary basis aux (both from NewBasis).
// Shells of angular momentum above 5 are not supported and make it panic,
// as NewERI does.
func NewThreeCentre(orb, aux *Basis) *ThreeCentre {
	if orb.MaxL > eriMaxL || aux.MaxL > eriMaxL {
		panic("integral: NewThreeCentre: angular momentum above 5 is not supported")
	}
	t := &ThreeCentre{orb: orb, aux: aux, norb: len(orb.shells), naux: len(aux.shells)}
	nc := t.norb + 2*t.naux
	comb := &Basis{
		Shells: make([]basis.Shell, 0, nc),
		shells: make([]shellData, 0, nc),
		MaxL:   max(orb.MaxL, aux.MaxL),
	}
	comb.Shells = append(comb.Shells, orb.Shells...)
	comb.Shells = append(comb.Shells, aux.Shells...)
	comb.shells = append(comb.shells, orb.shells...)
	comb.shells = append(comb.shells, aux.shells...)
	for p := range aux.shells {
		s := aux.Shells[p]
		comb.Shells = append(comb.Shells, basis.Shell{
			L: 0, Center: s.Center, Atom: s.Atom,
			Exponents: []float64{0}, Coefficients: []float64{1},
		})
		comb.shells = append(comb.shells, unitShell(aux.shells[p].center))
	}
	comb.Offsets, comb.NBF = basis.Offsets(comb.Shells)
	t.comb = comb
	e := &ERIEngine{basis: comb, nshell: nc, maxL: comb.MaxL}
	e.info = make([]eriShellInfo, nc)
	for i := range comb.shells {
		e.info[i] = newERIShellInfo(&comb.shells[i])
	}
	t.eng = e
	t.atom = make([]int, nc)
	for i := range comb.Shells {
		t.atom[i] = comb.Shells[i].Atom
	}
	t.orbDiag = make([][]float64, t.norb)
	for i := range orb.shells {
		t.orbDiag[i] = transformDiagonal(&orb.shells[i])
	}
	t.orbPairs = make([]eriPair, t.norb*(t.norb+1)/2)
	for i := 0; i < t.norb; i++ {
		for j := 0; j <= i; j++ {
			t.orbPairs[i*(i+1)/2+j] = t.preparePair(i, j)
		}
	}
	t.auxPairs = make([]eriPair, t.naux)
	for p := 0; p < t.naux; p++ {
		t.auxPairs[p] = t.preparePair(t.norb+p, t.norb+t.naux+p)
	}
	// Schwarz factors: sqrt(max |(P|P)|) of the auxiliary shells and
	// sqrt(max |(ab|ab)|) of the orbital shell pairs.
	t.auxSchwarz = make([]float64, t.naux)
	w := t.NewWorkspace()
	for p := 0; p < t.naux; p++ {
		t.auxSchwarz[p] = diagonalRoot(t.pairBlock(w, p, p), aux.shells[p].nfunc)
	}
	t.orbSchwarz = make([]float64, len(t.orbPairs))
	for i := 0; i < t.norb; i++ {
		for j := 0; j <= i; j++ {
			pr := t.orbPair(i, j)
			t.orbSchwarz[i*(i+1)/2+j] = diagonalRoot(t.eng.quartetPairs(w.w, pr, pr, i, i), orb.shells[i].nfunc*orb.shells[j].nfunc)
		}
	}
	return t
}

// diagonalRoot returns sqrt(max_x |v[x·n+x]|) of an n×n block.
func diagonalRoot(v []float64, n int) float64 {
	var mx float64
	for x := 0; x < n; x++ {
		mx = math.Max(mx, math.Abs(v[x*n+x]))
	}
	return math.Sqrt(mx)
}

// transformDiagonal returns the diagonal of the shell's transformation if
// it is square and diagonal, nil otherwise.
func transformDiagonal(s *shellData) []float64 {
	n := s.ncart
	if s.nfunc != n {
		return nil
	}
	d := make([]float64, n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if v := s.trans[i*n+j]; i == j {
				d[i] = v
			} else if v != 0 {
				return nil
			}
		}
	}
	return d
}

// unitShell is the constant function 1 at centre c as a shell: exponent 0,
// coefficient 1, no normalization.
func unitShell(c [3]float64) shellData {
	return shellData{l: 0, center: c, exps: []float64{0}, coefs: []float64{1}, ncart: 1, nfunc: 1, trans: []float64{1}}
}

// preparePair prepares the energy pair of shells i and j of comb as NewERI
// does.
func (t *ThreeCentre) preparePair(i, j int) eriPair {
	e := t.eng
	p := newERIPair(t.comb, i, j)
	ia, ib := &e.info[p.a], &e.info[p.b]
	p.na, p.nb = ia.ncart, ib.ncart
	p.sa, p.sb = eriScale(ia, p.na), eriScale(ib, p.nb)
	p.plain = ia.scale == nil && !ia.general && ib.scale == nil && !ib.general
	p.general = ia.general || ib.general
	return p
}

// NewWorkspace returns scratch memory for Block and the other evaluations.
func (t *ThreeCentre) NewWorkspace() *ThreeCentreWorkspace {
	return &ThreeCentreWorkspace{w: t.eng.NewWorkspace()}
}

func (t *ThreeCentre) orbPair(a, b int) *eriPair {
	if a < b {
		a, b = b, a
	}
	return &t.orbPairs[a*(a+1)/2+b]
}

// Block returns (ab|P) = ∫∫ φ_a(1)φ_b(1) r₁₂⁻¹ χ_P(2) for orbital shells a,
// b and auxiliary shell p: na·nb·np values, index (ia·nb + ib)·np + ip,
// over the final functions of the shells (the conventions of Quartet). The
// slice belongs to w and is valid until the next call with w.
func (t *ThreeCentre) Block(w *ThreeCentreWorkspace, a, b, p int) []float64 {
	return t.eng.quartetPairs(w.w, t.orbPair(a, b), &t.auxPairs[p], a, t.norb+p)
}

// pairBlock returns (P|Q) for auxiliary shells p and q, [P][Q].
func (t *ThreeCentre) pairBlock(w *ThreeCentreWorkspace, p, q int) []float64 {
	return t.eng.quartetPairs(w.w, &t.auxPairs[p], &t.auxPairs[q], t.norb+p, t.norb+q)
}

// AuxSchwarz returns sqrt(max |(P|P)|) over the functions P of auxiliary
// shell p: |(ab|P)| ≤ OrbitalSchwarz(a, b)·AuxSchwarz(p).
func (t *ThreeCentre) AuxSchwarz(p int) float64 { return t.auxSchwarz[p] }

// OrbitalSchwarz returns sqrt(max |(ab|ab)|) over the function pairs of
// orbital shells a and b (the factor ERIEngine.Schwarz gives).
func (t *ThreeCentre) OrbitalSchwarz(a, b int) float64 {
	if a < b {
		a, b = b, a
	}
	return t.orbSchwarz[a*(a+1)/2+b]
}

// NumOrbitalShells is the number of orbital shells.
func (t *ThreeCentre) NumOrbitalShells() int { return t.norb }

// NumAuxShells is the number of auxiliary shells.
func (t *ThreeCentre) NumAuxShells() int { return t.naux }

// TwoCentre returns the naux×naux Coulomb metric (P|Q) over the auxiliary
// functions, row-major. Shell pairs are split among threads goroutines
// (threads ≤ 0: GOMAXPROCS); every entry is computed independently, so the
// result does not depend on their number.
func (t *ThreeCentre) TwoCentre(threads int) []float64 {
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	n := t.aux.NBF
	out := make([]float64, n*n)
	off := t.aux.Offsets
	t.forAuxPairs(threads, func(w *ThreeCentreWorkspace, _ int, p, q int) {
		v := t.pairBlock(w, p, q)
		np, nq := t.aux.shells[p].nfunc, t.aux.shells[q].nfunc
		for i := 0; i < np; i++ {
			for j := 0; j < nq; j++ {
				x := v[i*nq+j]
				out[(off[p]+i)*n+off[q]+j] = x
				out[(off[q]+j)*n+off[p]+i] = x
			}
		}
	})
	return out
}

// forAuxPairs calls f for every auxiliary shell pair p ≥ q, the pairs
// (triangular order) cut into fixed chunks handed to threads goroutines;
// f receives the chunk index.
func (t *ThreeCentre) forAuxPairs(threads int, f func(w *ThreeCentreWorkspace, chunk, p, q int)) {
	np := t.naux * (t.naux + 1) / 2
	nc := (np + twoGradPairsPerChunk - 1) / twoGradPairsPerChunk
	var next atomic.Int64
	var wg sync.WaitGroup
	for th := 0; th < min(threads, max(nc, 1)); th++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := t.NewWorkspace()
			for {
				c := int(next.Add(1)) - 1
				if c >= nc {
					return
				}
				start := c * twoGradPairsPerChunk
				p, q := triDecode(start)
				for x := start; x < min(start+twoGradPairsPerChunk, np); x++ {
					f(w, c, p, q)
					q++
					if q > p {
						p++
						q = 0
					}
				}
			}
		}()
	}
	wg.Wait()
}

// threeDerivWork is the scratch memory of one gradient goroutine.
type threeDerivWork struct {
	dw         *derivWork
	gf, t1, t2 []float64 // G block over final functions and transformation buffers
}

func (t *ThreeCentre) newDerivWork(d *eriDeriv) *threeDerivWork {
	nc := basisNCart(max(t.orb.MaxL, t.aux.MaxL))
	n := nc * nc * nc
	return &threeDerivWork{dw: d.newWork(),
		gf: make([]float64, n), t1: make([]float64, n), t2: make([]float64, n)}
}

// newDeriv returns the derivative context over the combined shells (the
// pairs are prepared by derivPairs).
func (t *ThreeCentre) newDeriv() *eriDeriv {
	return &eriDeriv{e: t.eng, b: t.comb, maxL: t.comb.MaxL}
}

// derivPairs returns the derivative pairs of the orbital basis
// (triangular) and of the auxiliary shells with their unit shells.
func (t *ThreeCentre) derivPairs(orbital bool) (orb, aux []derivPair) {
	if orbital {
		orb = make([]derivPair, t.norb*(t.norb+1)/2)
		for i := 0; i < t.norb; i++ {
			for j := 0; j <= i; j++ {
				orb[i*(i+1)/2+j] = newDerivPair(t.comb, i, j)
			}
		}
	}
	aux = make([]derivPair, t.naux)
	for p := 0; p < t.naux; p++ {
		aux[p] = newDerivPair(t.comb, t.norb+p, t.norb+t.naux+p)
	}
	return orb, aux
}

// transformCartesian applies the transpose of a shell transformation
// (nf×nc, row-major) to the middle index of src viewed as
// [pre][nf][post], writing dst as [pre][nc][post].
func transformCartesian(dst, src []float64, pre, nf, nc, post int, trans []float64) {
	for p := 0; p < pre; p++ {
		d := dst[p*nc*post : (p+1)*nc*post]
		clear(d)
		for f := 0; f < nf; f++ {
			s := src[(p*nf+f)*post : (p*nf+f+1)*post]
			tr := trans[f*nc : (f+1)*nc]
			for c, x := range tr {
				if x == 0 {
					continue
				}
				dd := d[c*post : (c+1)*post]
				for q, v := range s {
					dd[q] += x * v
				}
			}
		}
	}
}

// quartetDeriv computes the derivatives of the canonical quartet
// (bra|ket), contracted with gam laid out over the canonical Cartesian
// components, for centres A, B, C.
func (t *ThreeCentre) quartetDeriv(d *eriDeriv, dw *derivWork, bra, ket *derivPair, gam []float64, gmax float64) (gA, gB, gC [3]float64) {
	if f := derivGenFunc(bra, ket); f != nil {
		thr := derivQuartetPrimThreshold
		if gmax < 1 {
			thr /= gmax
		}
		r := f(dw, bra, ket, gam, thr)
		return [3]float64(r[0:3]), [3]float64(r[3:6]), [3]float64(r[6:9])
	}
	d.cartesianDerivGeneric(dw, bra, ket)
	var nc [4]int
	sh := [4]int{bra.a, bra.b, ket.a, ket.b}
	for x := 0; x < 4; x++ {
		nc[x] = t.comb.shells[sh[x]].ncart
	}
	gA = derivContractCentre(bra.la, 1, nc[1]*nc[2]*nc[3], gam, dw.up[0], dw.down[0])
	gB = derivContractCentre(bra.lb, nc[0], nc[2]*nc[3], gam, dw.up[1], dw.down[1])
	gC = derivContractCentre(ket.la, nc[0]*nc[1], nc[3], gam, dw.up[2], dw.down[2])
	return gA, gB, gC
}

// deriv3GenFunc returns the generated three-centre derivative code for
// the orbital pair orb and the auxiliary shell with its unit shell aux
// (derivPairs), nil if there is none.
func deriv3GenFunc(orb, aux *derivPair) func(bra, ket *derivPair, g []float64, thr float64) [9]float64 {
	if orb.la > derivGenMaxL || aux.la > deriv3GenMaxAuxL {
		return nil
	}
	return deriv3GenTable[(orb.la*(derivGenMaxL+1)+orb.lb)*(deriv3GenMaxAuxL+1)+aux.la]
}

// addDeriv adds the centre derivatives of the canonical quartet with
// shells sh to g (3 per atom). The fourth centre follows from
// translational invariance unless it is a unit shell (derivative zero).
func (t *ThreeCentre) addDeriv(g []float64, sh [4]int, gA, gB, gC [3]float64) {
	unit := t.norb + t.naux
	for x := 0; x < 3; x++ {
		g[3*t.atom[sh[0]]+x] += gA[x]
		if sh[1] < unit {
			g[3*t.atom[sh[1]]+x] += gB[x]
		}
		g[3*t.atom[sh[2]]+x] += gC[x]
		if sh[3] < unit {
			g[3*t.atom[sh[3]]+x] -= gA[x] + gB[x] + gC[x]
		}
	}
}

// Gradient returns g[A][k] = Σ_P Σ_{μ,ν} G_{P,μν} ∂(μν|P)/∂R_{A,k} for
// every atom A (the shells' Atom fields; max(natoms, 1 + highest atom
// index) rows). G is symmetric in μν and packed: G[P·npair + μ(μ+1)/2 + ν]
// for μ ≥ ν, npair = nbf(nbf+1)/2, over the final orbital and auxiliary
// functions; the sum runs over all μ, ν (off-diagonal packed elements
// count twice).
//
// Triples (ab|P) whose estimate Q_ab·Q_P·max|G| (Schwarz factors of the
// pair and of P, largest G of the block) is below derivScreenThreshold are
// skipped, as are those on a single atom (rigid translation). Every
// auxiliary shell, with all orbital shell pairs, is one chunk (so that G
// is read row by row, in order), processed by threads goroutines (≤ 0: all
// cores) and summed in chunk order, so the result does not depend on
// threads.
func (t *ThreeCentre) Gradient(G []float64, natoms, threads int) [][3]float64 {
	nbf := t.orb.NBF
	npair := nbf * (nbf + 1) / 2
	if len(G) != t.aux.NBF*npair {
		panic(fmt.Sprintf("integral: ThreeCentre.Gradient: G has %d entries, want %d×%d", len(G), t.aux.NBF, npair))
	}
	natoms = t.comb.derivNumAtoms(natoms)
	d := t.newDeriv()
	dOrb, dAux := t.derivPairs(true)
	np := t.norb * (t.norb + 1) / 2
	return reduceChunks(t.naux, natoms, threads,
		func() *threeDerivWork { return t.newDerivWork(d) },
		func(tw *threeDerivWork, p int, g []float64) {
			a, b := 0, 0
			for x := 0; x < np; x++ {
				t.tripleGradient(d, tw, G, npair, a, b, p, &dOrb[x], &dAux[p], g)
				b++
				if b > a {
					a++
					b = 0
				}
			}
		})
}

// tripleGradient adds the contribution of orbital shells a ≥ b with the
// auxiliary shell p to g.
func (t *ThreeCentre) tripleGradient(d *eriDeriv, tw *threeDerivWork, G []float64, npair, a, b, p int, dp, dq *derivPair, g []float64) {
	ps := t.norb + p
	if t.atom[a] == t.atom[b] && t.atom[a] == t.atom[ps] {
		return
	}
	orb := t.orb
	sa, sb := &orb.shells[a], &orb.shells[b]
	fac := 2.0
	if a == b {
		fac = 1
	}
	oa, ob := orb.Offsets[a], orb.Offsets[b]
	fa, fb, ca, cb := sa.nfunc, sb.nfunc, sa.ncart, sb.ncart
	sp := &t.aux.shells[p]
	fp, cp := sp.nfunc, sp.ncart
	op := t.aux.Offsets[p]
	// G block over final functions [P][a][b].
	gf := tw.gf[:fp*fa*fb]
	var gmax float64
	for i := 0; i < fp; i++ {
		row := G[(op+i)*npair:]
		for x := 0; x < fa; x++ {
			mu := oa + x
			dst := gf[(i*fa+x)*fb : (i*fa+x+1)*fb]
			if a > b {
				// μ > ν throughout: a contiguous run of the packed row.
				copy(dst, row[mu*(mu+1)/2+ob:])
			} else {
				for y := range dst {
					nu := ob + y
					if mu >= nu {
						dst[y] = row[mu*(mu+1)/2+nu]
					} else {
						dst[y] = row[nu*(nu+1)/2+mu]
					}
				}
			}
			for _, v := range dst {
				gmax = max(gmax, math.Abs(v))
			}
		}
	}
	gmax *= fac
	if t.OrbitalSchwarz(a, b)*t.auxSchwarz[p]*gmax < derivScreenThreshold {
		return
	}
	f := deriv3GenFunc(dp, dq)
	if da, db := t.orbDiag[a], t.orbDiag[b]; f != nil && da != nil && db != nil {
		// Generated code with Cartesian orbital shells: fac·Γ over
		// [P][a][b] in the pair's orientation, scaled by the diagonal
		// orbital transformations, then carried to the auxiliary
		// shell's Cartesian components.
		nab := fa * fb
		g2 := tw.t1[:fp*nab]
		for i := 0; i < fp; i++ {
			for x := 0; x < fa; x++ {
				src := gf[(i*fa+x)*fb : (i*fa+x+1)*fb]
				sx := fac * da[x]
				if dp.a == a {
					dst := g2[(i*fa+x)*fb : (i*fa+x+1)*fb]
					for y, v := range src {
						dst[y] = sx * db[y] * v
					}
				} else {
					dst := g2[i*nab : (i+1)*nab]
					for y, v := range src {
						dst[y*fa+x] = sx * db[y] * v
					}
				}
			}
		}
		gam := tw.dw.gam[:cp*nab]
		transformCartesian(gam, g2, 1, fp, cp, nab, sp.trans)
		t.deriv3(f, g, dp, dq, gam, gmax)
		return
	}
	// To Cartesian components: [cP][ca][cb].
	transformCartesian(tw.t1[:fp*fa*cb], gf, fp*fa, fb, cb, 1, sb.trans)
	transformCartesian(tw.t2[:fp*ca*cb], tw.t1, fp, fa, ca, cb, sa.trans)
	gc := tw.t1[:cp*ca*cb]
	transformCartesian(gc, tw.t2, 1, fp, cp, ca*cb, sp.trans)
	// Strides in gc of the orbital pair's components.
	sA, sB := cb, 1
	if dp.a != a {
		sA, sB = 1, cb
	}
	if f != nil {
		// Generated three-centre code: orbital pair in the bra, Γ laid out
		// [P][a][b] in the pair's orientation.
		nA, nB := basisNCart(dp.la), basisNCart(dp.lb)
		gam := tw.dw.gam[:nA*nB*cp]
		idx := 0
		for i2 := 0; i2 < cp; i2++ {
			gp := gc[i2*ca*cb : (i2+1)*ca*cb]
			for i0 := 0; i0 < nA; i0++ {
				for i1 := 0; i1 < nB; i1++ {
					gam[idx] = fac * gp[i0*sA+i1*sB]
					idx++
				}
			}
		}
		t.deriv3(f, g, dp, dq, gam, gmax)
		return
	}
	// Canonical quartet and Γ in its layout.
	bra, ket := dp, dq
	str := [4]int{sA, sB, ca * cb, 0}
	if ket.key() > bra.key() {
		bra, ket = ket, bra
		str = [4]int{ca * cb, 0, sA, sB}
	}
	sh := [4]int{bra.a, bra.b, ket.a, ket.b}
	var n [4]int
	for x := 0; x < 4; x++ {
		n[x] = t.comb.shells[sh[x]].ncart
	}
	gam := tw.dw.gam[:n[0]*n[1]*n[2]*n[3]]
	idx := 0
	for i0 := 0; i0 < n[0]; i0++ {
		for i1 := 0; i1 < n[1]; i1++ {
			for i2 := 0; i2 < n[2]; i2++ {
				base := i0*str[0] + i1*str[1] + i2*str[2]
				for i3 := 0; i3 < n[3]; i3++ {
					gam[idx] = fac * gc[base+i3*str[3]]
					idx++
				}
			}
		}
	}
	gA, gB, gC := t.quartetDeriv(d, tw.dw, bra, ket, gam, gmax)
	t.addDeriv(g, sh, gA, gB, gC)
}

// deriv3 adds the derivatives of the three-centre class of the orbital
// pair orb and the auxiliary pair aux, computed by the generated code f
// with the Cartesian density gam ([P][a][b]) whose largest element is
// bounded by gmax, to g.
func (t *ThreeCentre) deriv3(f func(bra, ket *derivPair, g []float64, thr float64) [9]float64, g []float64, orb, aux *derivPair, gam []float64, gmax float64) {
	thr := derivQuartetPrimThreshold
	if gmax < 1 {
		thr /= gmax
	}
	r := f(orb, aux, gam, thr)
	t.addDeriv(g, [4]int{orb.a, orb.b, aux.a, aux.b}, [3]float64(r[0:3]), [3]float64(r[3:6]), [3]float64(r[6:9]))
}

// TwoCentreGradient returns g[A][k] = Σ_{P,Q} H_PQ ∂(P|Q)/∂R_{A,k} for
// every atom A, with H symmetric naux×naux row-major over the auxiliary
// functions. Shell pairs on one atom are skipped; pairs are cut into fixed
// chunks processed by threads goroutines (≤ 0: all cores) and summed in
// chunk order, so the result does not depend on threads.
func (t *ThreeCentre) TwoCentreGradient(H []float64, natoms, threads int) [][3]float64 {
	n := t.aux.NBF
	if len(H) != n*n {
		panic(fmt.Sprintf("integral: ThreeCentre.TwoCentreGradient: H has %d entries, want %d×%d", len(H), n, n))
	}
	natoms = t.comb.derivNumAtoms(natoms)
	d := t.newDeriv()
	_, dAux := t.derivPairs(false)
	np := t.naux * (t.naux + 1) / 2
	nc := (np + twoGradPairsPerChunk - 1) / twoGradPairsPerChunk
	aux := t.aux
	return reduceChunks(nc, natoms, threads,
		func() *threeDerivWork { return t.newDerivWork(d) },
		func(tw *threeDerivWork, c int, g []float64) {
			start := c * twoGradPairsPerChunk
			p, q := triDecode(start)
			for x := start; x < min(start+twoGradPairsPerChunk, np); x++ {
				if t.atom[t.norb+p] != t.atom[t.norb+q] {
					sp, sq := &aux.shells[p], &aux.shells[q]
					fp, fq, cp, cq := sp.nfunc, sq.nfunc, sp.ncart, sq.ncart
					fac := 2.0
					if p == q {
						fac = 1
					}
					hf := tw.gf[:fp*fq]
					var hmax float64
					for i := 0; i < fp; i++ {
						for j := 0; j < fq; j++ {
							v := H[(aux.Offsets[p]+i)*n+aux.Offsets[q]+j]
							hf[i*fq+j] = v
							hmax = math.Max(hmax, math.Abs(v))
						}
					}
					transformCartesian(tw.t1[:fp*cq], hf, fp, fq, cq, 1, sq.trans)
					hc := tw.t2[:cp*cq]
					transformCartesian(hc, tw.t1, 1, fp, cp, cq, sp.trans)
					bra, ket := &dAux[p], &dAux[q]
					str := [2]int{cq, 1}
					if ket.key() > bra.key() {
						bra, ket = ket, bra
						str = [2]int{1, cq}
					}
					na, nk := t.comb.shells[bra.a].ncart, t.comb.shells[ket.a].ncart
					gam := tw.dw.gam[:na*nk]
					for i := 0; i < na; i++ {
						for j := 0; j < nk; j++ {
							gam[i*nk+j] = fac * hc[i*str[0]+j*str[1]]
						}
					}
					gA, gB, gC := t.quartetDeriv(d, tw.dw, bra, ket, gam, fac*hmax)
					t.addDeriv(g, [4]int{bra.a, bra.b, ket.a, ket.b}, gA, gB, gC)
				}
				q++
				if q > p {
					p++
					q = 0
				}
			}
		})
}
