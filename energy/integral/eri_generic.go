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
// raises f one level at a time. Level k of f stores [e|f]⁽ᵐ⁾ for all e
// (cumulative index), the components f of level k and m = 0 … lc+ld−k
// (level 0: m = 0 … L), m fastest.

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
				V[m] = F[m] * pref
			}
			eriVRRBra(V, lab, L, &c)
			for k := 1; k <= lcd; k++ {
				eLo := max(0, la-(lcd-k))
				eriVRRKet(V, off[:], k, eLo, neAll, lcd, L, &c)
			}
			// Contract [e|f]⁽⁰⁾ with la ≤ |e|, lc ≤ |f|.
			e0 := eriCum(la)
			for k := lc; k <= lcd; k++ {
				nfk := basisNCart(k)
				nmk := lcd - k + 1
				if k == 0 {
					nmk = L + 1
				}
				fRel := eriCum(k) - eriCum(lc)
				lv := V[off[k]:]
				for n := e0; n < neAll; n++ {
					a := acc[(n-e0)*nf+fRel : (n-e0)*nf+fRel+nfk]
					for fc := range a {
						a[fc] += lv[(n*nfk+fc)*nmk]
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

// eriVRRBra builds [e|0]⁽ᵐ⁾ for 1 ≤ |e| ≤ lab, m ≤ L−|e|, from [0|0]⁽ᵐ⁾.
func eriVRRBra(V []float64, lab, L int, c *vrrCoef) {
	nm := L + 1
	for n := 1; n < eriCum(lab+1); n++ {
		t := &eriCartTab[n]
		i := t.dir
		mmax := L - int(t.level)
		dst := V[n*nm : n*nm+mmax+1]
		n1 := int(t.minus[i])
		s1 := V[n1*nm : n1*nm+mmax+2]
		pa, wp := c.pa[i], c.wp[i]
		for m := range dst {
			dst[m] = pa*s1[m] + wp*s1[m+1]
		}
		if k := t.n[i] - 1; k > 0 {
			n2 := int(eriCartTab[n1].minus[i])
			s2 := V[n2*nm : n2*nm+mmax+2]
			c1 := float64(k) * c.oo2z
			c2 := c1 * c.rz
			for m := range dst {
				dst[m] += c1*s2[m] - c2*s2[m+1]
			}
		}
	}
}

// eriVRRKet builds ket level k ([e|f]⁽ᵐ⁾ with |f| = k, |e| ≥ eLo,
// m ≤ lcd−k) from levels k−1 and k−2.
func eriVRRKet(V []float64, off []int, k, eLo, neAll, lcd, L int, c *vrrCoef) {
	nfk := basisNCart(k)
	nmk := lcd - k + 1
	nf1 := basisNCart(k - 1)
	nm1 := lcd - k + 2
	if k == 1 {
		nm1 = L + 1
	}
	nf2, nm2 := 0, 0
	if k >= 2 {
		nf2 = basisNCart(k - 2)
		nm2 = lcd - k + 3
		if k == 2 {
			nm2 = L + 1
		}
	}
	dstL := V[off[k]:off[k+1]]
	l1 := V[off[k-1]:off[k]]
	var l2 []float64
	if k >= 2 {
		l2 = V[off[k-2]:off[k-1]]
	}
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
		for n := eriCum(eLo); n < neAll; n++ {
			dst := dstL[(n*nfk+fc)*nmk : (n*nfk+fc+1)*nmk]
			s1 := l1[(n*nf1+f1)*nm1 : (n*nf1+f1)*nm1+nmk+1]
			for m := range dst {
				dst[m] = qc*s1[m] + wq*s1[m+1]
			}
			if f2 >= 0 {
				s2 := l2[(n*nf2+f2)*nm2 : (n*nf2+f2)*nm2+nmk+1]
				for m := range dst {
					dst[m] += a1*s2[m] - a2*s2[m+1]
				}
			}
			if ei := eriCartTab[n].n[i]; ei > 0 {
				ne := int(eriCartTab[n].minus[i])
				s3 := l1[(ne*nf1+f1)*nm1 : (ne*nf1+f1)*nm1+nmk+1]
				b := float64(ei) * c.oo2zn
				for m := range dst {
					dst[m] += b * s3[m+1]
				}
			}
		}
	}
}

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
