package integral

// First derivatives of electron-repulsion integrals contracted with
// densities: the two-electron part of analytic SCF gradients.
//
// Method. For a shell quartet (AB|CD) the derivative with respect to A is
// (the derivative relation of Cartesian Gaussians: S. Obara and A. Saika,
// J. Chem. Phys. 84, 3963 (1986); T. Helgaker and P. R. Taylor, Theor.
// Chim. Acta 83, 177 (1992))
//
//	∂/∂A_i (ab|cd) = 2α·(a+1ᵢ b|cd) − aᵢ·(a−1ᵢ b|cd),
//
// with the factor 2α inside the primitive sums, and the same for B and C;
// translational invariance gives the fourth centre,
// ∂/∂D = −(∂/∂A + ∂/∂B + ∂/∂C), so three centres are differentiated
// explicitly. All required classes come from a single vertical recursion
// (Obara & Saika 1986, eq. (39), in the arrangement of M. Head-Gordon and
// J. A. Pople, J. Chem. Phys. 89, 5777 (1988)) carried one unit of angular
// momentum higher on each side and one Boys order higher (la+lb+lc+ld+1).
// It runs over a batch of primitive quartets at once, the batch being the
// innermost, contiguous index, which keeps the loops long for the heavily
// contracted low classes. Its [e0|f0] values are contracted four times,
// unweighted and weighted with 2α, 2β and 2γ, and the horizontal recursion
// of Head-Gordon and Pople (the energy engine's, eri_generic.go) then
// yields the raised classes (a+1 b|cd), (a b+1|cd), (ab|c+1 d) and the
// lowered classes (a−1 b|cd), (a b−1|cd), (ab|c−1 d).
//
// The derivative integrals are contracted in the Cartesian components of
// the original shells with the two-particle density
//
//	Γ_abcd = D_ab D_cd − c_x Σ_s (D^s_ac D^s_bd + D^s_ad D^s_bc)
//
// (D the total density, D^s the spin densities, c_x = exchangeFactor/2; a
// restricted density stands for two spins with D^s = D/2, i.e. c_x =
// exchangeFactor/4 with D^s → D), which has the 8-fold permutational
// symmetry of the integrals, so only unique shell quartets (i ≥ j, k ≥ l,
// ij ≥ kl) are visited, each with its degeneracy. Γ is carried back from
// the final functions to Cartesian components once per quartet (transpose
// of the shell transformations), so derivative blocks are never
// transformed.

import (
	"math"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"
)

// derivScreenThreshold drops a unique shell quartet when the estimate
// Q_ij·Q_kl·max|Γ| of its contribution is below it, Q being the Schwarz
// factors of the energy engine and max|Γ| the bound
// P_ij P_kl + c_x·n_s·(P^s_ik P^s_jl + P^s_il P^s_jk) built from the largest
// density elements of the shell-pair blocks. It matches the threshold the
// Fock build uses for the integrals themselves (common practice: 1e-12
// for energies converged to 1e-8 and gradients to 1e-6). Derivative
// integrals are not strictly bounded by the Schwarz product; the estimate
// is the usual density-weighted Schwarz screening.
const derivScreenThreshold = 1e-12

// derivQuartetPrimThreshold skips a primitive quartet when the product
// of the pair bounds derivPrim.bnd is below it (the energy engine's
// criterion, with the bounds of the raised shells).
const derivQuartetPrimThreshold = 1e-15

// derivQuartetsPerChunk is the fixed number of unique shell quartets (in
// the enumeration order, before screening) that form one unit of parallel
// work. Chunk results are summed in chunk order, so the gradient does not
// depend on the number of threads.
const derivQuartetsPerChunk = 2048

// derivPrim is one kept primitive pair of a shell pair.
type derivPrim struct {
	zeta, oo2z float64
	p, pa      [3]float64
	k          float64 // c_α c_β exp(−αβ/ζ·AB²)/ζ · √2 π^{5/4}, as in eriPrim
	ta, tb     float64 // 2α, 2β of the first and second shell
	// bnd bounds the primitive pair's contribution to any derivative
	// integral together with another pair's bnd (see newDerivPair).
	bnd float64
}

// derivPair is a shell pair prepared for derivative integrals, oriented
// so that la ≥ lb.
type derivPair struct {
	a, b   int
	la, lb int
	ab     [3]float64
	prims  []derivPrim
}

func (p *derivPair) key() int { return (p.la+p.lb)*16 + p.la }

// newDerivPair prepares shells i and j. A primitive pair is dropped when
// the bound of the energy engine (eriPrimThreshold), with both momenta
// raised by one and multiplied by max(1, 2α, 2β), is below the threshold.
func newDerivPair(b *Basis, i, j int) derivPair {
	sa, sb := &b.shells[i], &b.shells[j]
	p := derivPair{a: i, b: j}
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
			var pr derivPrim
			pr.zeta = z
			pr.oo2z = 0.5 / z
			pr.ta, pr.tb = 2*al, 2*be
			var dpa, dpb float64
			for k := 0; k < 3; k++ {
				pr.p[k] = (al*sa.center[k] + be*sb.center[k]) / z
				pr.pa[k] = pr.p[k] - sa.center[k]
				dpa += pr.pa[k] * pr.pa[k]
				d := pr.p[k] - sb.center[k]
				dpb += d * d
			}
			s := 1 / math.Sqrt(z)
			bound := math.Abs(c) * math.Pow(math.Pi/z, 1.5) * kab *
				math.Pow(math.Sqrt(dpa)+s, float64(p.la+1)) * math.Pow(math.Sqrt(dpb)+s, float64(p.lb+1)) *
				math.Max(1, 2*math.Max(al, be))
			if bound < eriPrimThreshold {
				continue
			}
			pr.k = c * kab / z * pre
			// As in the energy engine: the Coulomb interaction of two
			// distributions bounded by Q_p, Q_q is at most
			// Q_p Q_q (2/π)^{1/2}(ζη)^{1/4}.
			pr.bnd = bound * math.Pow(2/math.Pi, 0.25) * math.Pow(z, 0.25)
			p.prims = append(p.prims, pr)
		}
	}
	sort.SliceStable(p.prims, func(x, y int) bool { return p.prims[x].bnd > p.prims[y].bnd })
	return p
}

// eriDeriv holds what the derivative routines need beyond the energy
// engine: derivative shell-pair data and the transposed transformations.
type eriDeriv struct {
	e      *ERIEngine
	b      *Basis
	maxL   int
	pairs  []derivPair // triangular, index i(i+1)/2+j
	transT [][]float64 // per shell: ncart×nfunc transpose of trans (nil for Cartesian)
	scale  [][]float64 // per shell: diagonal of trans for Cartesian shells
}

func newERIDeriv(e *ERIEngine) *eriDeriv {
	b := e.basis
	d := &eriDeriv{e: e, b: b, maxL: b.MaxL}
	ns := len(b.shells)
	d.pairs = make([]derivPair, ns*(ns+1)/2)
	for i := 0; i < ns; i++ {
		for j := 0; j <= i; j++ {
			d.pairs[i*(i+1)/2+j] = newDerivPair(b, i, j)
		}
	}
	d.transT = make([][]float64, ns)
	d.scale = make([][]float64, ns)
	for i := range b.shells {
		s := &b.shells[i]
		if e.info[i].general {
			t := make([]float64, s.ncart*s.nfunc)
			for f := 0; f < s.nfunc; f++ {
				for c := 0; c < s.ncart; c++ {
					t[c*s.nfunc+f] = s.trans[f*s.ncart+c]
				}
			}
			d.transT[i] = t
		} else {
			d.scale[i] = make([]float64, s.ncart)
			for c := range d.scale[i] {
				d.scale[i][c] = s.trans[c*s.ncart+c]
			}
		}
	}
	return d
}

func (d *eriDeriv) pair(i, j int) *derivPair {
	if i < j {
		i, j = j, i
	}
	return &d.pairs[i*(i+1)/2+j]
}

// derivVRRSize is the storage derivVRR needs for |e| ≤ lab1, ket levels
// up to lcd1.
func derivVRRSize(lab1, lcd1 int) int {
	ne := eriCum(lab1 + 1)
	n := ne * (lab1 + lcd1 + 1)
	for k := 1; k <= lcd1; k++ {
		n += ne * basisNCart(k) * (lcd1 - k + 1)
	}
	return n
}

// derivWork is the scratch memory of one goroutine.
type derivWork struct {
	w               *ERIWorkspace // recursion buffers, sized for momenta up to maxL+1
	acc0, accA      []float64
	accB, accC, sub []float64
	up, down        [3][]float64 // Cartesian raised / lowered classes for centres A, B, C
	gam, gtmp       []float64    // two-particle density, final then Cartesian
	vrrOff          [eriMaxTab + 3]int
	eLo             [eriMaxTab + 3]int
	batch           derivBatch
	prim            [][2]int32 // surviving primitive quartets of the current quartet
}

func (d *eriDeriv) newWork() *derivWork {
	L := d.maxL
	w := &ERIWorkspace{}
	w.vrr = make([]float64, max(derivBatchFloats, derivVRRSize(2*L+1, 2*L+1)))
	w.acc = make([]float64, 1) // unused; non-empty for eriHRRKet's identity test
	nh := 0
	for la := 0; la <= L+1; la++ {
		for lb := 0; lb <= L+1; lb++ {
			for lc := 0; lc <= L+1; lc++ {
				for ld := 0; ld <= L+1; ld++ {
					_, h := eriHRRSizes(la, lb, lc, ld)
					nh = max(nh, h)
				}
			}
		}
	}
	w.h1 = make([]float64, nh)
	w.h2 = make([]float64, nh)
	w.out = make([]float64, 1)
	dw := &derivWork{w: w}
	nacc := eriCum(2*L+2) * eriCum(2*L+2)
	dw.acc0 = make([]float64, nacc)
	dw.accA = make([]float64, nacc)
	dw.accB = make([]float64, nacc)
	dw.accC = make([]float64, nacc)
	dw.sub = make([]float64, nacc)
	nc := basisNCart(L)
	nblk := basisNCart(L+1) * nc * nc * nc
	for x := 0; x < 3; x++ {
		dw.up[x] = make([]float64, nblk)
		dw.down[x] = make([]float64, nblk)
	}
	dw.gam = make([]float64, nc*nc*nc*nc)
	dw.gtmp = make([]float64, nc*nc*nc*nc)
	return dw
}

// derivBatchFloats is the size (in float64) of the vertical-recursion
// storage per goroutine: a batch of primitive quartets is as large as fits
// (at least one).
const derivBatchFloats = 1 << 16

// derivBatch holds the recursion coefficients of a batch of primitive
// quartets, one vector entry per primitive quartet.
type derivBatch struct {
	pa, wp, qc, wq            [3][]float64
	oo2z, oo2e, rz, re, oo2zn []float64
	wA, wB, wC                []float64 // 2α, 2β, 2γ
	F                         []float64 // pref·F_m(T), [m][x]
	boys                      [eriMaxM + 1]float64
}

func (bt *derivBatch) ensure(n, nm int) {
	if len(bt.oo2z) >= n && len(bt.F) >= n*nm {
		return
	}
	n = max(n, len(bt.oo2z))
	mk := func() []float64 { return make([]float64, n) }
	for i := 0; i < 3; i++ {
		bt.pa[i], bt.wp[i], bt.qc[i], bt.wq[i] = mk(), mk(), mk(), mk()
	}
	bt.oo2z, bt.oo2e, bt.rz, bt.re, bt.oo2zn = mk(), mk(), mk(), mk(), mk()
	bt.wA, bt.wB, bt.wC = mk(), mk(), mk()
	bt.F = make([]float64, n*(eriMaxM+1))
}

// fill computes the coefficients of the primitive quartets list[0:nb]
// (bra primitive, ket primitive).
func (bt *derivBatch) fill(bra, ket *derivPair, list [][2]int32, Lm int) {
	nb := len(list)
	for x, pq := range list {
		p := &bra.prims[pq[0]]
		q := &ket.prims[pq[1]]
		zn := p.zeta + q.zeta
		ozn := 1 / zn
		rho := p.zeta * q.zeta * ozn
		pq := [3]float64{p.p[0] - q.p[0], p.p[1] - q.p[1], p.p[2] - q.p[2]}
		t := rho * (pq[0]*pq[0] + pq[1]*pq[1] + pq[2]*pq[2])
		pref := p.k * q.k * math.Sqrt(ozn)
		if Lm <= eriBoysMaxM {
			eriBoysInline(Lm, t, bt.boys[:]) // the energy engine's tabulated Taylor series
		} else {
			Boys(Lm, t, bt.boys[:])
		}
		for m := 0; m <= Lm; m++ {
			bt.F[m*nb+x] = bt.boys[m] * pref
		}
		rz := q.zeta * ozn
		re := p.zeta * ozn
		for i := 0; i < 3; i++ {
			bt.pa[i][x] = p.pa[i]
			bt.qc[i][x] = q.pa[i]
			bt.wp[i][x] = -rz * pq[i]
			bt.wq[i][x] = re * pq[i]
		}
		bt.oo2z[x], bt.oo2e[x] = p.oo2z, q.oo2z
		bt.rz[x], bt.re[x] = rz, re
		bt.oo2zn[x] = 0.5 * ozn
		bt.wA[x], bt.wB[x], bt.wC[x] = p.ta, p.tb, q.ta
	}
}

// derivVRR runs the vertical recursion (Obara & Saika 1986, eq. (39))
// for a batch of nb primitive quartets at once, every value a vector over
// the batch (innermost index), and leaves [e|f]⁽ᵐ⁾ in V: ket level k from
// offset off[k]·nb as [f component][m][e][batch] (e over the cumulative
// components 0 … neAll−1); level 0 is [m][e][batch] with m ≤ Lm. Only the
// entries needed are formed: |e| ≤ lab1, ket levels up to lcd1, |e| ≥
// eLo[k] at level k, and |e| = lab1 only for m < lcd1−k (no class needs
// |e| = lab1 together with |f| = lcd1).
func derivVRR(V []float64, off, eLo []int, lab1, lcd1, Lm, neAll, nb int, bt *derivBatch) {
	for m := 0; m <= Lm; m++ {
		copy(V[m*neAll*nb:m*neAll*nb+nb], bt.F[m*nb:m*nb+nb])
	}
	vec := func(idx int) []float64 { return V[idx*nb : idx*nb+nb] }
	for n := 1; n < neAll; n++ {
		t := &eriCartTab[n]
		i := t.dir
		mmax := Lm - int(t.level)
		n1 := int(t.minus[i])
		pa, wp := bt.pa[i][:nb], bt.wp[i][:nb]
		if k := t.n[i] - 1; k > 0 {
			n2 := int(eriCartTab[n1].minus[i])
			c1 := float64(k)
			oo2z, rz := bt.oo2z[:nb], bt.rz[:nb]
			for m := 0; m <= mmax; m++ {
				dst, s1, s1p := vec(m*neAll+n), vec(m*neAll+n1), vec((m+1)*neAll+n1)
				s2, s2p := vec(m*neAll+n2), vec((m+1)*neAll+n2)
				pa, wp, oo2z, rz := pa[:len(dst)], wp[:len(dst)], oo2z[:len(dst)], rz[:len(dst)]
				s1, s1p, s2, s2p = s1[:len(dst)], s1p[:len(dst)], s2[:len(dst)], s2p[:len(dst)]
				for x := range dst {
					dst[x] = pa[x]*s1[x] + wp[x]*s1p[x] + c1*oo2z[x]*(s2[x]-rz[x]*s2p[x])
				}
			}
		} else {
			for m := 0; m <= mmax; m++ {
				dst, s1, s1p := vec(m*neAll+n), vec(m*neAll+n1), vec((m+1)*neAll+n1)
				pa, wp := pa[:len(dst)], wp[:len(dst)]
				s1, s1p = s1[:len(dst)], s1p[:len(dst)]
				for x := range dst {
					dst[x] = pa[x]*s1[x] + wp[x]*s1p[x]
				}
			}
		}
	}
	endFull, endTop := eriCum(lab1+1), eriCum(lab1)
	oo2e, re, oo2zn := bt.oo2e[:nb], bt.re[:nb], bt.oo2zn[:nb]
	for k := 1; k <= lcd1; k++ {
		nmk := lcd1 - k + 1
		nm1 := nmk + 1
		if k == 1 {
			nm1 = Lm + 1
		}
		nm2 := nmk + 2
		if k == 2 {
			nm2 = Lm + 1
		}
		c0, c1, c2 := eriCum(k), eriCum(k-1), eriCum(k-2)
		e0 := eriCum(eLo[k])
		for fc := 0; fc < basisNCart(k); fc++ {
			t := &eriCartTab[c0+fc]
			i := t.dir
			l1 := off[k-1] + (int(t.minus[i])-c1)*nm1*neAll
			kf := int(t.n[i]) - 1
			l2 := -1
			if kf > 0 {
				l2 = off[k-2] + (int(eriCartTab[t.minus[i]].minus[i])-c2)*nm2*neAll
			}
			a := float64(kf)
			qc, wq := bt.qc[i][:nb], bt.wq[i][:nb]
			for m := 0; m < nmk; m++ {
				e1 := endTop
				if m < nmk-1 {
					e1 = endFull
				}
				base := off[k] + (fc*nmk+m)*neAll
				for n := e0; n < e1; n++ {
					dst := vec(base + n)
					nd := len(dst)
					s1, s1p := vec(l1 + m*neAll + n)[:nd], vec(l1 + (m+1)*neAll + n)[:nd]
					qc, wq := qc[:nd], wq[:nd]
					te := &eriCartTab[n]
					ni := te.n[i]
					switch {
					case l2 >= 0 && ni > 0:
						s2, s2p := vec(l2 + m*neAll + n)[:nd], vec(l2 + (m+1)*neAll + n)[:nd]
						s3p := vec(l1 + (m+1)*neAll + int(te.minus[i]))[:nd]
						oo2e, re, oo2zn := oo2e[:nd], re[:nd], oo2zn[:nd]
						fn := float64(ni)
						for x := range dst {
							dst[x] = qc[x]*s1[x] + wq[x]*s1p[x] + a*oo2e[x]*(s2[x]-re[x]*s2p[x]) + fn*oo2zn[x]*s3p[x]
						}
					case l2 >= 0:
						s2, s2p := vec(l2 + m*neAll + n)[:nd], vec(l2 + (m+1)*neAll + n)[:nd]
						oo2e, re := oo2e[:nd], re[:nd]
						for x := range dst {
							dst[x] = qc[x]*s1[x] + wq[x]*s1p[x] + a*oo2e[x]*(s2[x]-re[x]*s2p[x])
						}
					case ni > 0:
						s3p := vec(l1 + (m+1)*neAll + int(te.minus[i]))[:nd]
						oo2zn := oo2zn[:nd]
						fn := float64(ni)
						for x := range dst {
							dst[x] = qc[x]*s1[x] + wq[x]*s1p[x] + fn*oo2zn[x]*s3p[x]
						}
					default:
						for x := range dst {
							dst[x] = qc[x]*s1[x] + wq[x]*s1p[x]
						}
					}
				}
			}
		}
	}
}

// derivAccumulate adds Σ_x w_x·[e|f]⁽⁰⁾_x over the batch for |e| ∈ [eLo,
// eHi], |f| ∈ [fLo, fHi] to acc laid out [f][e] over those ranges, for the
// weight vectors ws paired with the accumulators accs (nil weight: 1).
func derivAccumulate(accs [3][]float64, ws [3][]float64, nacc int, V []float64, off []int, eLo, eHi, fLo, fHi, lcd1, Lm, neAll, nb int) {
	e0, e1 := eriCum(eLo), eriCum(eHi+1)
	ne := e1 - e0
	row := 0
	for k := fLo; k <= fHi; k++ {
		nmk := lcd1 - k + 1
		if k == 0 {
			nmk = Lm + 1
		}
		for fc := 0; fc < basisNCart(k); fc++ {
			for n := e0; n < e1; n++ {
				idx := off[k] + fc*nmk*neAll + n
				v := V[idx*nb : idx*nb+nb]
				if nacc == 3 && ws[0] == nil {
					// Unweighted, 2α- and 2β-weighted sums in one pass.
					w1, w2 := ws[1][:len(v)], ws[2][:len(v)]
					var s0, s1, s2 float64
					for x, y := range v {
						s0 += y
						s1 += w1[x] * y
						s2 += w2[x] * y
					}
					accs[0][row*ne+n-e0] += s0
					accs[1][row*ne+n-e0] += s1
					accs[2][row*ne+n-e0] += s2
					continue
				}
				for a := 0; a < nacc; a++ {
					var s float64
					if w := ws[a]; w != nil {
						w = w[:nb]
						for x, y := range v {
							s += w[x] * y
						}
					} else {
						for _, y := range v {
							s += y
						}
					}
					accs[a][row*ne+n-e0] += s
				}
			}
			row++
		}
	}
}

// derivExtract copies the part |e| ∈ [eLo, eHi], |f| ∈ [fLo, fHi] of src
// (laid out [f][e] over |f| ≥ sF, |e| ∈ [sE, sEHi]) to dst laid out [e][f]
// over the smaller ranges, as the horizontal recursion takes it.
func derivExtract(dst, src []float64, sE, sEHi, sF, eLo, eHi, fLo, fHi int) []float64 {
	nes := eriCum(sEHi+1) - eriCum(sE)
	nfd := eriCum(fHi+1) - eriCum(fLo)
	e0, e1 := eriCum(eLo), eriCum(eHi+1)
	eo := e0 - eriCum(sE)
	fo := eriCum(fLo) - eriCum(sF)
	for f := 0; f < nfd; f++ {
		s := src[(fo+f)*nes+eo:]
		for e := 0; e < e1-e0; e++ {
			dst[e*nfd+f] = s[e]
		}
	}
	return dst[:(e1-e0)*nfd]
}

// derivHRR turns contracted [e0|f0] (e ∈ [la, la+lb], f ∈ [lc, lc+ld],
// laid out [e][f]) into the Cartesian class (ab|cd) and copies it to dst.
func derivHRR(w *ERIWorkspace, acc []float64, la, lb, lc, ld int, ab, cd [3]float64, dst []float64) {
	nf := eriCum(lc+ld+1) - eriCum(lc)
	g := eriHRRBra(w, acc, la, lb, nf, ab)
	r := eriHRRKet(w, g, la, lb, lc, ld, cd)
	copy(dst, r)
}

// cartesianDeriv fills dw.up and dw.down with the raised and lowered
// Cartesian classes of centres A, B, C of the canonical quartet (bra|ket)
// (shells bra.a, bra.b, ket.a, ket.b).
func (d *eriDeriv) cartesianDeriv(dw *derivWork, bra, ket *derivPair) {
	la, lb, lc, ld := bra.la, bra.lb, ket.la, ket.lb
	lab, lcd := la+lb, lc+ld
	lab1, lcd1 := lab+1, lcd+1
	Lm := lab + lcd + 1 // highest Boys order
	e0, f0 := max(la-1, 0), max(lc-1, 0)
	nT := (eriCum(lab1+1) - eriCum(e0)) * (eriCum(lcd+1) - eriCum(f0))
	nC := (eriCum(lab+1) - eriCum(la)) * (eriCum(lcd1+1) - eriCum(lc+1))
	acc0, accA, accB := dw.acc0[:nT], dw.accA[:nT], dw.accB[:nT]
	accC := dw.accC[:nC]
	clear(acc0)
	clear(accA)
	clear(accB)
	clear(accC)

	neAll := eriCum(lab1 + 1)
	off := dw.vrrOff[:]
	eLo := dw.eLo[:]
	off[0] = 0
	off[1] = neAll * (Lm + 1)
	for k := 1; k <= lcd1; k++ {
		off[k+1] = off[k] + neAll*basisNCart(k)*(lcd1-k+1)
		// Level k feeds |e| ≥ e0 at levels ≤ lcd and |e| ≥ la at lcd1.
		eLo[k] = max(0, min(la-(lcd1-k), e0-(lcd-k)))
	}
	entries := off[lcd1+1]
	// Primitive quartets that survive screening; the pair lists are sorted
	// by decreasing bound, so each inner loop stops at the first failure.
	list := dw.prim[:0]
	for p := range bra.prims {
		bp := bra.prims[p].bnd
		if len(ket.prims) == 0 || bp*ket.prims[0].bnd < derivQuartetPrimThreshold {
			break
		}
		for q := range ket.prims {
			if bp*ket.prims[q].bnd < derivQuartetPrimThreshold {
				break
			}
			list = append(list, [2]int32{int32(p), int32(q)})
		}
	}
	dw.prim = list
	np := len(list)
	batch := min(np, max(1, len(dw.w.vrr)/entries))
	bt := &dw.batch
	bt.ensure(batch, Lm+1)
	V := dw.w.vrr
	bt3 := [3][]float64{acc0, accA, accB}
	wt3 := [3][]float64{nil, bt.wA, bt.wB}
	c1 := [3][]float64{accC}
	wc1 := [3][]float64{bt.wC}
	for g0 := 0; g0 < np; g0 += batch {
		nb := min(batch, np-g0)
		bt.fill(bra, ket, list[g0:g0+nb], Lm)
		derivVRR(V, off, eLo, lab1, lcd1, Lm, neAll, nb, bt)
		derivAccumulate(bt3, wt3, 3, V, off, e0, lab1, f0, lcd, lcd1, Lm, neAll, nb)
		derivAccumulate(c1, wc1, 1, V, off, la, lab, lc+1, lcd1, lcd1, Lm, neAll, nb)
	}
	w := dw.w
	sub := dw.sub
	// Raised classes.
	derivHRR(w, derivExtract(sub, accA, e0, lab1, f0, la+1, lab1, lc, lcd), la+1, lb, lc, ld, bra.ab, ket.ab, dw.up[0])
	derivHRR(w, derivExtract(sub, accB, e0, lab1, f0, la, lab1, lc, lcd), la, lb+1, lc, ld, bra.ab, ket.ab, dw.up[1])
	derivHRR(w, derivExtract(sub, accC, la, lab, lc+1, la, lab, lc+1, lcd1), la, lb, lc+1, ld, bra.ab, ket.ab, dw.up[2])
	// Lowered classes.
	if la > 0 {
		derivHRR(w, derivExtract(sub, acc0, e0, lab1, f0, la-1, lab-1, lc, lcd), la-1, lb, lc, ld, bra.ab, ket.ab, dw.down[0])
	}
	if lb > 0 {
		derivHRR(w, derivExtract(sub, acc0, e0, lab1, f0, la, lab-1, lc, lcd), la, lb-1, lc, ld, bra.ab, ket.ab, dw.down[1])
	}
	if lc > 0 {
		derivHRR(w, derivExtract(sub, acc0, e0, lab1, f0, la, lab, lc-1, lcd-1), la, lb, lc-1, ld, bra.ab, ket.ab, dw.down[2])
	}
}

// derivContractCentre returns Σ Γ[p][r][q]·(up[p][r+1_k][q] − r_k·down[p][r−1_k][q])
// for k = x, y, z: the derivative with respect to the centre of the middle
// index (momentum l) of the Cartesian quartet block Γ viewed as
// [pre][ncart(l)][post].
func derivContractCentre(l, pre, post int, gam, up, down []float64) [3]float64 {
	var g [3]float64
	n, nu, nd := basisNCart(l), basisNCart(l+1), 0
	if l > 0 {
		nd = basisNCart(l - 1)
	}
	c0, cu, cd := eriCum(l), eriCum(l+1), eriCum(l-1)
	for p := 0; p < pre; p++ {
		for r := 0; r < n; r++ {
			t := &eriCartTab[c0+r]
			gr := gam[(p*n+r)*post : (p*n+r+1)*post]
			for k := 0; k < 3; k++ {
				ru := int(t.plus[k]) - cu
				u := up[(p*nu+ru)*post : (p*nu+ru+1)*post]
				var s float64
				for q, x := range gr {
					s += x * u[q]
				}
				if nk := t.n[k]; nk > 0 {
					rd := int(t.minus[k]) - cd
					dn := down[(p*nd+rd)*post : (p*nd+rd+1)*post]
					var s2 float64
					for q, x := range gr {
						s2 += x * dn[q]
					}
					s -= float64(nk) * s2
				}
				g[k] += s
			}
		}
	}
	return g
}

// derivDensity holds the densities of one gradient evaluation.
type derivDensity struct {
	n    int
	dt   []float64   // total density
	ds   [][]float64 // spin densities used in exchange (total for restricted)
	cx   float64     // exchange coefficient c_x·(restricted: ½ for D^s = D/2 twice)
	pt   []float64   // per shell pair: max |dt|
	ps   []float64   // per shell pair: max over spins of |ds|
	nspn float64
}

func (d *eriDeriv) newDensityData(dens [][]float64, exchangeFactor float64) *derivDensity {
	b := d.b
	n := b.NBF
	dd := &derivDensity{n: n}
	if len(dens) == 1 {
		dd.dt = dens[0]
		// Two spins with D^s = D/2: Σ_s D^s D^s = ½ D D.
		dd.ds = dens[:1]
		dd.cx = exchangeFactor / 4
		dd.nspn = 1
	} else {
		dd.dt = make([]float64, n*n)
		for _, m := range dens {
			for i, v := range m {
				dd.dt[i] += v
			}
		}
		dd.ds = dens
		dd.cx = exchangeFactor / 2
		dd.nspn = float64(len(dens))
	}
	ns := len(b.shells)
	dd.pt = make([]float64, ns*ns)
	dd.ps = make([]float64, ns*ns)
	blockMax := func(m []float64, i, j int) float64 {
		var x float64
		for p := b.Offsets[i]; p < b.Offsets[i]+b.shells[i].nfunc; p++ {
			for q := b.Offsets[j]; q < b.Offsets[j]+b.shells[j].nfunc; q++ {
				x = math.Max(x, math.Abs(m[p*n+q]))
			}
		}
		return x
	}
	for i := 0; i < ns; i++ {
		for j := 0; j < ns; j++ {
			dd.pt[i*ns+j] = blockMax(dd.dt, i, j)
			for _, m := range dd.ds {
				dd.ps[i*ns+j] = math.Max(dd.ps[i*ns+j], blockMax(m, i, j))
			}
		}
	}
	return dd
}

// buildGamma writes fac·Γ over the final functions of shells sh (A, B, C,
// D), then carries it to Cartesian components; returns the Cartesian block
// [a][b][c][d].
func (d *eriDeriv) buildGamma(dw *derivWork, dd *derivDensity, sh [4]int, fac float64) []float64 {
	b := d.b
	n := dd.n
	var nf, off [4]int
	for x := 0; x < 4; x++ {
		nf[x] = b.shells[sh[x]].nfunc
		off[x] = b.Offsets[sh[x]]
	}
	total := nf[0] * nf[1] * nf[2] * nf[3]
	g := dw.gam[:total]
	dt := dd.dt
	idx := 0
	for a := off[0]; a < off[0]+nf[0]; a++ {
		for bb := off[1]; bb < off[1]+nf[1]; bb++ {
			dab := fac * dt[a*n+bb]
			for c := off[2]; c < off[2]+nf[2]; c++ {
				row := dt[c*n+off[3] : c*n+off[3]+nf[3]]
				for q, v := range row {
					g[idx+q] = dab * v
				}
				idx += nf[3]
			}
		}
	}
	if dd.cx != 0 {
		cx := fac * dd.cx
		for _, m := range dd.ds {
			idx = 0
			for a := off[0]; a < off[0]+nf[0]; a++ {
				for bb := off[1]; bb < off[1]+nf[1]; bb++ {
					for c := off[2]; c < off[2]+nf[2]; c++ {
						dac, dbc := cx*m[a*n+c], cx*m[bb*n+c]
						rbd := m[bb*n+off[3] : bb*n+off[3]+nf[3]]
						rad := m[a*n+off[3] : a*n+off[3]+nf[3]]
						for q := range rbd {
							g[idx+q] -= dac*rbd[q] + rad[q]*dbc
						}
						idx += nf[3]
					}
				}
			}
		}
	}
	// Back to Cartesian components, one index at a time.
	src := g
	dims := nf
	bufs := [2][]float64{dw.gtmp, dw.gam}
	bi := 0
	for x := 0; x < 4; x++ {
		s := &b.shells[sh[x]]
		pre, post := 1, 1
		for y := 0; y < x; y++ {
			pre *= dims[y]
		}
		for y := x + 1; y < 4; y++ {
			post *= dims[y]
		}
		if t := d.transT[sh[x]]; t != nil {
			dst := bufs[bi]
			eriTransformAxis(dst, src, pre, s.nfunc, s.ncart, post, t)
			dims[x] = s.ncart
			src = dst[:pre*s.ncart*post]
			bi ^= 1
			continue
		}
		sc := d.scale[sh[x]]
		for p := 0; p < pre; p++ {
			for r, f := range sc {
				blk := src[(p*s.ncart+r)*post : (p*s.ncart+r+1)*post]
				for q := range blk {
					blk[q] *= f
				}
			}
		}
	}
	// src may alias dw.gam; callers only read it before the next quartet.
	return src
}

// GradientJK returns the derivatives with respect to the atom positions of
// the two-electron energy
//
//	E2 = ½ Σ (μν|λσ) D_μν D_λσ − ½·exchangeFactor·Σ_s Σ (μλ|νσ) D^s_μν D^s_λσ,
//
// per atom (shell atom indices) in hartree/bohr. dens holds symmetric
// nbf×nbf row-major densities over the final basis functions: one total
// density D for a restricted calculation (the exchange term then uses
// D^s = D/2 for each of two spins), or the α and β densities for an
// unrestricted one (D = D^α + D^β). exchangeFactor is 1 for HF, the exact
// exchange fraction of a hybrid functional, 0 for a pure one.
//
// Unique shell quartets are screened with derivScreenThreshold and split
// into fixed chunks of derivQuartetsPerChunk processed by threads
// goroutines (threads < 1: GOMAXPROCS); chunk results are summed in chunk
// order, so the result does not depend on threads. Three centres of each
// quartet are differentiated, the fourth follows from translational
// invariance. The result has max(natoms, 1 + highest shell atom) entries.
func (e *ERIEngine) GradientJK(dens [][]float64, exchangeFactor float64, natoms int, threads int) [][3]float64 {
	if len(dens) < 1 || len(dens) > 2 {
		panic("integral: GradientJK: need one (restricted) or two (unrestricted) densities")
	}
	b := e.basis
	for _, m := range dens {
		b.derivCheckMatrix(m, "GradientJK")
	}
	natoms = b.derivNumAtoms(natoms)
	if threads < 1 {
		threads = runtime.GOMAXPROCS(0)
	}
	d := newERIDeriv(e)
	dd := d.newDensityData(dens, exchangeFactor)
	ns := e.nshell
	atom := make([]int, ns)
	for i := range b.Shells {
		atom[i] = b.Shells[i].Atom
	}
	np := ns * (ns + 1) / 2
	pi, pj := make([]int32, np), make([]int32, np)
	for i := 0; i < ns; i++ {
		for j := 0; j <= i; j++ {
			pi[i*(i+1)/2+j], pj[i*(i+1)/2+j] = int32(i), int32(j)
		}
	}
	nq := np * (np + 1) / 2
	nc := (nq + derivQuartetsPerChunk - 1) / derivQuartetsPerChunk
	total := make([]float64, 3*natoms)

	var next atomic.Int64
	var mu sync.Mutex
	results := make([][]float64, nc)
	reduced := 0
	var wg sync.WaitGroup
	for t := 0; t < min(threads, max(nc, 1)); t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			dw := d.newWork()
			for {
				c := int(next.Add(1)) - 1
				if c >= nc {
					return
				}
				g := make([]float64, 3*natoms)
				start := c * derivQuartetsPerChunk
				end := min(start+derivQuartetsPerChunk, nq)
				// Decode the first quartet index: t = ij(ij+1)/2 + kl.
				ij := int((math.Sqrt(float64(8*start+1)) - 1) / 2)
				for ij*(ij+1)/2 > start {
					ij--
				}
				for (ij+1)*(ij+2)/2 <= start {
					ij++
				}
				kl := start - ij*(ij+1)/2
				for q := start; q < end; q++ {
					d.quartetGradient(dw, dd, int(pi[ij]), int(pj[ij]), int(pi[kl]), int(pj[kl]), atom, g)
					kl++
					if kl > ij {
						ij++
						kl = 0
					}
				}
				mu.Lock()
				results[c] = g
				for reduced < nc && results[reduced] != nil {
					for x, v := range results[reduced] {
						total[x] += v
					}
					results[reduced] = nil
					reduced++
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	grad := make([][3]float64, natoms)
	for a := range grad {
		grad[a] = [3]float64{total[3*a], total[3*a+1], total[3*a+2]}
	}
	return grad
}

// quartetGradient adds the contribution of the unique quartet (ij|kl)
// (i ≥ j, k ≥ l, ij ≥ kl) to g (3·natoms).
func (d *eriDeriv) quartetGradient(dw *derivWork, dd *derivDensity, i, j, k, l int, atom []int, g []float64) {
	ai, aj, ak, al := atom[i], atom[j], atom[k], atom[l]
	if ai == aj && ai == ak && ai == al {
		return // rigid translation of one atom: no contribution
	}
	ns := d.e.nshell
	q := d.e.schwarz[i*ns+j] * d.e.schwarz[k*ns+l]
	gmax := dd.pt[i*ns+j]*dd.pt[k*ns+l] +
		dd.cx*dd.nspn*(dd.ps[i*ns+k]*dd.ps[j*ns+l]+dd.ps[i*ns+l]*dd.ps[j*ns+k])
	if q*gmax < derivScreenThreshold {
		return
	}
	deg := 1.0
	if i != j {
		deg *= 2
	}
	if k != l {
		deg *= 2
	}
	if i != k || j != l {
		deg *= 2
	}
	bra, ket := d.pair(i, j), d.pair(k, l)
	if ket.key() > bra.key() {
		bra, ket = ket, bra
	}
	sh := [4]int{bra.a, bra.b, ket.a, ket.b}
	gam := d.buildGamma(dw, dd, sh, 0.5*deg)
	d.cartesianDeriv(dw, bra, ket)
	var nc [4]int
	for x := 0; x < 4; x++ {
		nc[x] = d.b.shells[sh[x]].ncart
	}
	gA := derivContractCentre(bra.la, 1, nc[1]*nc[2]*nc[3], gam, dw.up[0], dw.down[0])
	gB := derivContractCentre(bra.lb, nc[0], nc[2]*nc[3], gam, dw.up[1], dw.down[1])
	gC := derivContractCentre(ket.la, nc[0]*nc[1], nc[3], gam, dw.up[2], dw.down[2])
	for x := 0; x < 3; x++ {
		g[3*atom[sh[0]]+x] += gA[x]
		g[3*atom[sh[1]]+x] += gB[x]
		g[3*atom[sh[2]]+x] += gC[x]
		g[3*atom[sh[3]]+x] -= gA[x] + gB[x] + gC[x]
	}
}
