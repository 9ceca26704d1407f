package integral

import "math"

// Table-driven Head-Gordon–Pople evaluation for any class (eri.go).
//
// Vertical recursion (Obara & Saika 1986, eq. (39); HGP 1988, eqs. (6)
// and (10)) per primitive quartet, with W the weighted centre of P and Q,
// ρ = ζη/(ζ+η) and T = ρ|PQ|²:
//
//	[e+1ᵢ|f]⁽ᵐ⁾ = (P−A)ᵢ[e|f]⁽ᵐ⁾ + (W−P)ᵢ[e|f]⁽ᵐ⁺¹⁾
//	            + eᵢ/(2ζ)([e−1ᵢ|f]⁽ᵐ⁾ − ρ/ζ[e−1ᵢ|f]⁽ᵐ⁺¹⁾) + fᵢ/(2(ζ+η))[e|f−1ᵢ]⁽ᵐ⁺¹⁾
//	[e|f+1ᵢ]⁽ᵐ⁾ = (Q−C)ᵢ[e|f]⁽ᵐ⁾ + (W−Q)ᵢ[e|f]⁽ᵐ⁺¹⁾
//	            + fᵢ/(2η)([e|f−1ᵢ]⁽ᵐ⁾ − ρ/η[e|f−1ᵢ]⁽ᵐ⁺¹⁾) + eᵢ/(2(ζ+η))[e−1ᵢ|f]⁽ᵐ⁺¹⁾
//
// starting from [0|0]⁽ᵐ⁾ = 2π^{5/2}/(ζη√(ζ+η)) K_AB K_CD F_m(T). The bra
// recursion first builds [e|0]⁽ᵐ⁾ for |e| ≤ la+lb; the ket recursion then
// raises f one level at a time. Level k of f stores [e|f]⁽ᵐ⁾ for
// m = 0 … lc+ld−k (level 0: m = 0 … L), the components f of level k and all
// e (cumulative index), e fastest, so that the ket recursion runs long
// inner loops over e.

// eriVRRSize is the number of values the generic vertical recursion stores
// for Lab = la+lb, Lcd = lc+ld.
func eriVRRSize(lab, lcd int) int {
	ne := eriCum(lab + 1)
	n := ne * (lab + lcd + 1)
	for k := 1; k <= lcd; k++ {
		n += ne * basisNCart(k) * (lcd - k + 1)
	}
	return n
}

// eriHRRSizes returns the size of the contracted buffer and the largest
// horizontal-recursion buffer for a class (la ≥ lb, lc ≥ ld), taking either
// pair as the bra.
func eriHRRSizes(la, lb, lc, ld int) (acc, h int) {
	one := func(la, lb, lc, ld int) (int, int) {
		lab, lcd := la+lb, lc+ld
		ne := eriCum(lab+1) - eriCum(la)
		nf := eriCum(lcd+1) - eriCum(lc)
		acc := ne * nf
		h := basisNCart(la) * basisNCart(lb) * basisNCart(lc) * basisNCart(ld)
		for j := 1; j <= lb; j++ {
			h = max(h, (eriCum(lab-j+1)-eriCum(la))*basisNCart(j)*nf)
		}
		nab := basisNCart(la) * basisNCart(lb)
		for j := 1; j <= ld; j++ {
			h = max(h, nab*(eriCum(lcd-j+1)-eriCum(lc))*basisNCart(j))
		}
		return acc, h
	}
	a1, h1 := one(la, lb, lc, ld)
	a2, h2 := one(lc, ld, la, lb)
	return max(a1, a2), max(h1, h2)
}

// generic computes a canonical quartet with the table-driven recursions and
// returns the Cartesian integrals (AB|CD).
func (e *ERIEngine) generic(w *ERIWorkspace, bra, ket *eriPair) []float64 {
	la, lb, lc, ld := bra.la, bra.lb, ket.la, ket.lb
	lab, lcd := la+lb, lc+ld
	L := lab + lcd
	ne := eriCum(lab+1) - eriCum(la)
	nf := eriCum(lcd+1) - eriCum(lc)
	acc := w.acc[:ne*nf]
	clear(acc)

	// Offsets of the ket levels in w.vrr.
	neAll := eriCum(lab + 1)
	var off [eriMaxTab + 2]int
	off[1] = neAll * (L + 1)
	for k := 1; k <= lcd; k++ {
		off[k+1] = off[k] + neAll*basisNCart(k)*(lcd-k+1)
	}
	V := w.vrr
	F := w.boys[:L+1]

	for pi := range bra.prims {
		p := &bra.prims[pi]
		if p.bnd*ket.maxBnd < eriQuartetThreshold {
			break
		}
		for qi := range ket.prims {
			q := &ket.prims[qi]
			if p.bnd*q.bnd < eriQuartetThreshold {
				break
			}
			zn := p.zeta + q.zeta
			ozn := 1 / zn
			rho := p.zeta * q.zeta * ozn
			pq := [3]float64{p.p[0] - q.p[0], p.p[1] - q.p[1], p.p[2] - q.p[2]}
			t := rho * (pq[0]*pq[0] + pq[1]*pq[1] + pq[2]*pq[2])
			pref := p.k * q.k * math.Sqrt(ozn)
			Boys(L, t, F)
			rz := q.zeta * ozn // ρ/ζ
			re := p.zeta * ozn // ρ/η
			c := vrrCoef{
				pa:    p.pa,
				qc:    q.pa,
				wp:    [3]float64{-rz * pq[0], -rz * pq[1], -rz * pq[2]},
				wq:    [3]float64{re * pq[0], re * pq[1], re * pq[2]},
				oo2z:  p.oo2z,
				oo2e:  q.oo2z,
				rz:    rz,
				re:    re,
				oo2zn: 0.5 * ozn,
			}
			// Level 0, e = s.
			for m := 0; m <= L; m++ {
				V[m*neAll] = F[m] * pref
			}
			eriVRRBra(V, lab, L, &c)
			for k := 1; k <= lcd; k++ {
				eLo := max(0, la-(lcd-k))
				eriVRRKet(V, off[:], k, eLo, lab, lcd, &c)
			}
			// Contract [e|f]⁽⁰⁾ with la ≤ |e|, lc ≤ |f|.
			e0 := eriCum(la)
			for k := lc; k <= lcd; k++ {
				nfk := basisNCart(k)
				fRel := eriCum(k) - eriCum(lc)
				for fc := 0; fc < nfk; fc++ {
					src := V[off[k]+fc*neAll+e0 : off[k]+(fc+1)*neAll]
					a := acc[fRel+fc:]
					for n, x := range src {
						a[n*nf] += x
					}
				}
			}
		}
	}
	g := eriHRRBra(w, acc, la, lb, nf, bra.ab)
	return eriHRRKet(w, g, la, lb, lc, ld, ket.ab)
}

// vrrCoef holds the per-primitive-quartet coefficients of the vertical
// recursion.
type vrrCoef struct {
	pa, qc, wp, wq            [3]float64
	oo2z, oo2e, rz, re, oo2zn float64
}

// eriVRRBra builds [e|0]⁽ᵐ⁾ for 1 ≤ |e| ≤ lab, m ≤ L−|e|, from [0|0]⁽ᵐ⁾
// (stored at V[m·ne + e] with ne = eriCum(lab+1)).
func eriVRRBra(V []float64, lab, L int, c *vrrCoef) {
	ne := eriCum(lab + 1)
	for n := 1; n < ne; n++ {
		t := &eriCartTab[n]
		i := t.dir
		mmax := L - int(t.level)
		n1 := int(t.minus[i])
		pa, wp := c.pa[i], c.wp[i]
		if k := t.n[i] - 1; k > 0 {
			n2 := int(eriCartTab[n1].minus[i])
			c1 := float64(k) * c.oo2z
			c2 := c1 * c.rz
			for m := 0; m <= mmax; m++ {
				o := m * ne
				V[o+n] = pa*V[o+n1] + wp*V[o+ne+n1] + c1*V[o+n2] - c2*V[o+ne+n2]
			}
			continue
		}
		for m := 0; m <= mmax; m++ {
			o := m * ne
			V[o+n] = pa*V[o+n1] + wp*V[o+ne+n1]
		}
	}
}

// eriVRRKet builds ket level k ([e|f]⁽ᵐ⁾ with |f| = k, eLo ≤ |e| ≤ lab,
// m ≤ lcd−k) from levels k−1 and k−2.
func eriVRRKet(V []float64, off []int, k, eLo, lab, lcd int, c *vrrCoef) {
	ne := eriCum(lab + 1)
	n0 := eriCum(eLo)
	nfk := basisNCart(k)
	nmk := lcd - k + 1
	nf1 := basisNCart(k - 1)
	nf2 := 0
	var l2 []float64
	if k >= 2 {
		nf2 = basisNCart(k - 2)
		l2 = V[off[k-2]:off[k-1]]
	}
	dstL := V[off[k]:off[k+1]]
	l1 := V[off[k-1]:off[k]]
	c0, c1 := eriCum(k), eriCum(k-1)
	for fc := 0; fc < nfk; fc++ {
		t := &eriCartTab[c0+fc]
		i := t.dir
		f1 := int(t.minus[i]) - c1
		kf := int(t.n[i]) - 1
		f2 := -1
		if kf > 0 {
			f2 = int(eriCartTab[t.minus[i]].minus[i]) - eriCum(k-2)
		}
		qc, wq := c.qc[i], c.wq[i]
		a1 := float64(kf) * c.oo2e
		a2 := a1 * c.re
		// Coupling to the bra, e_i/(2(ζ+η))·[e−1ᵢ|f−1ᵢ]⁽ᵐ⁺¹⁾, through dense
		// tables (factor 0 where e_i = 0).
		ce := eriAxisE[i][n0:ne]
		cm := eriAxisM[i][n0:ne]
		b := c.oo2zn
		for m := 0; m < nmk; m++ {
			d := dstL[(m*nfk+fc)*ne+n0 : (m*nfk+fc+1)*ne]
			s1 := l1[(m*nf1+f1)*ne+n0 : (m*nf1+f1+1)*ne]
			s1p := l1[((m+1)*nf1+f1)*ne : ((m+1)*nf1+f1+1)*ne]
			s1q := s1p[n0:]
			s1 = s1[:len(d)]
			s1q = s1q[:len(d)]
			e, mi := ce[:len(d)], cm[:len(d)]
			if f2 >= 0 {
				s2 := l2[(m*nf2+f2)*ne+n0 : (m*nf2+f2+1)*ne]
				s2p := l2[((m+1)*nf2+f2)*ne+n0 : ((m+1)*nf2+f2+1)*ne]
				s2 = s2[:len(d)]
				s2p = s2p[:len(d)]
				for n := range d {
					d[n] = qc*s1[n] + wq*s1q[n] + a1*s2[n] - a2*s2p[n] + b*e[n]*s1p[mi[n]]
				}
			} else {
				for n := range d {
					d[n] = qc*s1[n] + wq*s1q[n] + b*e[n]*s1p[mi[n]]
				}
			}
		}
	}
}

// eriAxisE[i][n] is the exponent along axis i of component n (cumulative
// index) and eriAxisM[i][n] the index of the component with that exponent
// lowered by one (0 where the exponent is 0, the factor then being 0).
// Read-only after initialization.
var eriAxisE, eriAxisM = func() (e [3][]float64, m [3][]int32) {
	for i := 0; i < 3; i++ {
		e[i] = make([]float64, len(eriCartTab))
		m[i] = make([]int32, len(eriCartTab))
		for n := range eriCartTab {
			if t := &eriCartTab[n]; t.n[i] > 0 {
				e[i][n] = float64(t.n[i])
				m[i][n] = t.minus[i]
			}
		}
	}
	return
}()

// eriHRRBra applies (a,b+1ᵢ| = (a+1ᵢ,b| + (A−B)ᵢ(a,b| to the contracted
// [e|f] (|e| = la … la+lb, nf ket components) and returns (ab|f) as
// [a][b][f].
func eriHRRBra(w *ERIWorkspace, acc []float64, la, lb, nf int, ab [3]float64) []float64 {
	src := acc
	lab := la + lb
	e0 := eriCum(la)
	bufs := [2][]float64{w.h1, w.h2}
	for j := 1; j <= lb; j++ {
		nb1 := basisNCart(j - 1)
		nbj := basisNCart(j)
		naj := eriCum(lab-j+1) - e0
		dst := bufs[j&1][:naj*nbj*nf]
		cb0, cb1 := eriCum(j), eriCum(j-1)
		for ar := 0; ar < naj; ar++ {
			ta := &eriCartTab[ar+e0]
			for bc := 0; bc < nbj; bc++ {
				tb := &eriCartTab[cb0+bc]
				i := tb.dir
				b1 := int(tb.minus[i]) - cb1
				a1 := int(ta.plus[i]) - e0
				x := ab[i]
				d := dst[(ar*nbj+bc)*nf : (ar*nbj+bc+1)*nf]
				s1 := src[(a1*nb1+b1)*nf : (a1*nb1+b1+1)*nf]
				s2 := src[(ar*nb1+b1)*nf : (ar*nb1+b1+1)*nf]
				for f := range d {
					d[f] = s1[f] + x*s2[f]
				}
			}
		}
		src = dst
	}
	return src
}

// eriHRRKet applies the horizontal recursion to the ket of (ab|f) ([ab][f],
// |f| = lc … lc+ld) and returns (ab|cd) as [a][b][c][d].
func eriHRRKet(w *ERIWorkspace, g []float64, la, lb, lc, ld int, cd [3]float64) []float64 {
	nab := basisNCart(la) * basisNCart(lb)
	lcd := lc + ld
	c0 := eriCum(lc)
	src := g
	// Alternate with the buffer g is not in.
	bufs := [2][]float64{w.h1, w.h2}
	if len(g) > 0 && len(w.h1) > 0 && &g[0] == &w.h1[0] {
		bufs = [2][]float64{w.h2, w.h1}
	}
	if ld == 0 && len(g) > 0 && &g[0] == &w.acc[0] {
		// Keep results out of w.acc so callers may reuse it.
		dst := bufs[0][:len(g)]
		copy(dst, g)
		return dst
	}
	bi := 0
	for j := 1; j <= ld; j++ {
		nd1 := basisNCart(j - 1)
		ndj := basisNCart(j)
		nc1 := eriCum(lcd-j+2) - c0
		ncj := eriCum(lcd-j+1) - c0
		dst := bufs[bi][:nab*ncj*ndj]
		bi ^= 1
		cd0, cd1 := eriCum(j), eriCum(j-1)
		for x := 0; x < nab; x++ {
			s := src[x*nc1*nd1 : (x+1)*nc1*nd1]
			d := dst[x*ncj*ndj : (x+1)*ncj*ndj]
			for cr := 0; cr < ncj; cr++ {
				tc := &eriCartTab[cr+c0]
				for dc := 0; dc < ndj; dc++ {
					td := &eriCartTab[cd0+dc]
					i := td.dir
					d1 := int(td.minus[i]) - cd1
					c1 := int(tc.plus[i]) - c0
					d[cr*ndj+dc] = s[c1*nd1+d1] + cd[i]*s[cr*nd1+d1]
				}
			}
		}
		src = dst
	}
	return src
}
