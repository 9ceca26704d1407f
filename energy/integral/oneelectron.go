package integral

import "math"

// One-electron integrals by the Obara–Saika recurrences (S. Obara and
// A. Saika, J. Chem. Phys. 84, 3963 (1986)). Overlap, kinetic energy and
// dipole integrals factor into one-dimensional overlaps; the nuclear
// attraction uses the vertical recurrence on the bra with auxiliary orders
// m (their eq. A20) followed by the horizontal transfer
// (a|b+1_i) = (a+1_i|b) + (A−B)_i (a|b) on contracted integrals
// (M. Head-Gordon and J. A. Pople, J. Chem. Phys. 89, 5777 (1988)).
//
// Results are full symmetric nbf×nbf row-major matrices over the final
// basis functions (spherical or Cartesian as each shell says). One-electron
// work is negligible next to the electron repulsion, so it runs serially.

// Overlap returns S_μν = ⟨μ|ν⟩.
func (b *Basis) Overlap() []float64 {
	w := newOneWork(b.MaxL)
	return b.pairMatrix(func(i, j int, cart []float64) {
		w.overlapBlock(&b.shells[i], &b.shells[j], cart)
	})
}

// Kinetic returns T_μν = ⟨μ|−½∇²|ν⟩.
func (b *Basis) Kinetic() []float64 {
	w := newOneWork(b.MaxL)
	return b.pairMatrix(func(i, j int, cart []float64) {
		w.kineticBlock(&b.shells[i], &b.shells[j], cart)
	})
}

// Nuclear returns the nuclear attraction matrix
// V_μν = −Σ_C Z_C ⟨μ| 1/|r−C| |ν⟩ for point charges Z_C (charges[c], in
// units of e) at centers[c] (bohr). The sign is included: for positive
// charges the matrix is attractive (negative diagonal). charges and centers
// must have the same length.
func (b *Basis) Nuclear(charges []float64, centers [][3]float64) []float64 {
	if len(charges) != len(centers) {
		panic("integral: Nuclear: charges and centers differ in length")
	}
	w := newOneWork(b.MaxL)
	return b.pairMatrix(func(i, j int, cart []float64) {
		w.nuclearBlock(&b.shells[i], &b.shells[j], charges, centers, cart)
	})
}

// Dipole returns the three matrices ⟨μ| (r−origin)_k |ν⟩, k = x, y, z
// (position moments; the electron's negative charge is not included).
func (b *Basis) Dipole(origin [3]float64) [3][]float64 {
	w := newOneWork(b.MaxL)
	var out [3][]float64
	cart := [3][]float64{}
	n := b.NBF
	for k := range out {
		out[k] = make([]float64, n*n)
	}
	maxc := len(cartesianExponents(b.MaxL))
	for k := range cart {
		cart[k] = make([]float64, maxc*maxc)
	}
	fin := make([]float64, maxc*maxc)
	tmp := make([]float64, maxc*maxc)
	for i := range b.shells {
		for j := 0; j <= i; j++ {
			si, sj := &b.shells[i], &b.shells[j]
			w.dipoleBlock(si, sj, origin, cart)
			for k := 0; k < 3; k++ {
				transformPair(si, sj, cart[k], tmp, fin)
				b.scatter(i, j, fin, out[k])
			}
		}
	}
	return out
}

// pairMatrix assembles a symmetric matrix from Cartesian shell-pair blocks
// produced by block(i, j, cart) for j ≤ i.
func (b *Basis) pairMatrix(block func(i, j int, cart []float64)) []float64 {
	n := b.NBF
	out := make([]float64, n*n)
	maxc := len(cartesianExponents(b.MaxL))
	cart := make([]float64, maxc*maxc)
	fin := make([]float64, maxc*maxc)
	tmp := make([]float64, maxc*maxc)
	for i := range b.shells {
		for j := 0; j <= i; j++ {
			block(i, j, cart)
			transformPair(&b.shells[i], &b.shells[j], cart, tmp, fin)
			b.scatter(i, j, fin, out)
		}
	}
	return out
}

// scatter writes the nfunc_i×nfunc_j block fin into out at shells (i, j)
// and its transpose at (j, i).
func (b *Basis) scatter(i, j int, fin, out []float64) {
	n := b.NBF
	oi, oj := b.Offsets[i], b.Offsets[j]
	ni, nj := b.shells[i].nfunc, b.shells[j].nfunc
	for p := 0; p < ni; p++ {
		for q := 0; q < nj; q++ {
			v := fin[p*nj+q]
			out[(oi+p)*n+oj+q] = v
			out[(oj+q)*n+oi+p] = v
		}
	}
}

// transformPair maps a Cartesian block cart (ncart_a×ncart_b, axially
// normalized components) to the final functions: fin = T_a·cart·T_bᵀ
// (nfunc_a×nfunc_b). tmp needs ncart_a·nfunc_b entries.
func transformPair(a, b *shellData, cart, tmp, fin []float64) {
	na, nb := a.ncart, b.ncart
	fa, fb := a.nfunc, b.nfunc
	// tmp = cart · T_bᵀ  (na×fb)
	for p := 0; p < na; p++ {
		for q := 0; q < fb; q++ {
			var s float64
			tb := b.trans[q*nb : q*nb+nb]
			row := cart[p*nb : p*nb+nb]
			for c, t := range tb {
				if t != 0 {
					s += row[c] * t
				}
			}
			tmp[p*fb+q] = s
		}
	}
	// fin = T_a · tmp  (fa×fb)
	for p := 0; p < fa; p++ {
		ta := a.trans[p*na : p*na+na]
		out := fin[p*fb : p*fb+fb]
		for q := range out {
			out[q] = 0
		}
		for c, t := range ta {
			if t == 0 {
				continue
			}
			row := tmp[c*fb : c*fb+fb]
			for q := range out {
				out[q] += t * row[q]
			}
		}
	}
}

// oneWork holds the scratch space of the one-electron recurrences for
// angular momenta up to maxL.
type oneWork struct {
	maxL int
	dim  int          // leading dimension of the 1D tables: maxL+3
	s1d  [3][]float64 // 1D overlaps S_ij per direction, index i*dim+j
	// nuclear attraction
	boys []float64   // F_m, m ≤ 2·maxL
	aux  [][]float64 // aux[m][global component index]
	acc  []float64   // contracted (e|0), global component index
	hrr  [2][]float64
}

func newOneWork(maxL int) *oneWork {
	w := &oneWork{maxL: maxL, dim: maxL + 3}
	for k := range w.s1d {
		w.s1d[k] = make([]float64, w.dim*w.dim)
	}
	lt := 2 * maxL
	w.boys = make([]float64, lt+1)
	w.aux = make([][]float64, lt+1)
	for m := range w.aux {
		w.aux[m] = make([]float64, numComponentsUpTo(lt))
	}
	w.acc = make([]float64, numComponentsUpTo(lt))
	nc := len(cartesianExponents(maxL))
	for k := range w.hrr {
		w.hrr[k] = make([]float64, numComponentsUpTo(lt)*nc)
	}
	return w
}

// numComponentsUpTo is the number of Cartesian components of all angular
// momenta 0 … l: (l+1)(l+2)(l+3)/6.
func numComponentsUpTo(l int) int { return (l + 1) * (l + 2) * (l + 3) / 6 }

// componentIndex is the position of x^lx y^ly z^lz inside its shell in the
// lexicographic order of basis.Shell.
func componentIndex(ly, lz int) int {
	k := ly + lz
	return k*(k+1)/2 + lz
}

// globalIndex is the position of x^lx y^ly z^lz in the concatenation of the
// shells of angular momentum 0, 1, 2, ….
func globalIndex(lx, ly, lz int) int {
	return numComponentsUpTo(lx+ly+lz-1) + componentIndex(ly, lz)
}

// overlap1D fills s (leading dimension dim) with the one-dimensional
// Obara–Saika overlaps S_ij/S_00 for i ≤ imax, j ≤ jmax:
// S_{i+1,j} = PA S_ij + (i S_{i−1,j} + j S_{i,j−1})/(2p) and the same with
// PB for j+1 (Obara & Saika 1986, eq. A2).
func overlap1D(s []float64, dim, imax, jmax int, pa, pb, oo2p float64) {
	s[0] = 1
	for i := 0; i < imax; i++ {
		v := pa * s[i*dim]
		if i > 0 {
			v += float64(i) * oo2p * s[(i-1)*dim]
		}
		s[(i+1)*dim] = v
	}
	for j := 0; j < jmax; j++ {
		for i := 0; i <= imax; i++ {
			v := pb * s[i*dim+j]
			if i > 0 {
				v += float64(i) * oo2p * s[(i-1)*dim+j]
			}
			if j > 0 {
				v += float64(j) * oo2p * s[i*dim+j-1]
			}
			s[i*dim+j+1] = v
		}
	}
}

// primitivePair holds the Gaussian product quantities of two primitives.
type primitivePair struct {
	p, oo2p float64    // α+β and 1/(2p)
	P       [3]float64 // product centre
	pa, pb  [3]float64 // P−A, P−B
	kab     float64    // exp(−αβ/p·|A−B|²)
}

func makePrimitivePair(alpha, beta float64, A, B [3]float64) primitivePair {
	var q primitivePair
	q.p = alpha + beta
	q.oo2p = 0.5 / q.p
	mu := alpha * beta / q.p
	var r2 float64
	for k := 0; k < 3; k++ {
		q.P[k] = (alpha*A[k] + beta*B[k]) / q.p
		q.pa[k] = q.P[k] - A[k]
		q.pb[k] = q.P[k] - B[k]
		d := A[k] - B[k]
		r2 += d * d
	}
	q.kab = math.Exp(-mu * r2)
	return q
}

// overlapBlock writes the contracted Cartesian overlap block ⟨a|b⟩
// (ncart_a×ncart_b, axially normalized components, no final transform).
func (w *oneWork) overlapBlock(a, b *shellData, out []float64) {
	ca, cb := cartesianExponents(a.l), cartesianExponents(b.l)
	nb := len(cb)
	out = out[:len(ca)*nb]
	for i := range out {
		out[i] = 0
	}
	dim := w.dim
	sx, sy, sz := w.s1d[0], w.s1d[1], w.s1d[2]
	for pi, alpha := range a.exps {
		for qi, beta := range b.exps {
			q := makePrimitivePair(alpha, beta, a.center, b.center)
			pref := a.coefs[pi] * b.coefs[qi] * q.kab * math.Pow(math.Pi/q.p, 1.5)
			overlap1D(sx, dim, a.l, b.l, q.pa[0], q.pb[0], q.oo2p)
			overlap1D(sy, dim, a.l, b.l, q.pa[1], q.pb[1], q.oo2p)
			overlap1D(sz, dim, a.l, b.l, q.pa[2], q.pb[2], q.oo2p)
			for r, ea := range ca {
				for c, eb := range cb {
					out[r*nb+c] += pref * sx[ea[0]*dim+eb[0]] * sy[ea[1]*dim+eb[1]] * sz[ea[2]*dim+eb[2]]
				}
			}
		}
	}
}

// kineticBlock writes the contracted Cartesian kinetic-energy block
// ⟨a|−½∇²|b⟩. The second derivative of the ket Gaussian,
// d²/dx² x_B^j e^{−βx_B²} = j(j−1) x_B^{j−2} − 2β(2j+1) x_B^j + 4β² x_B^{j+2},
// reduces it to one-dimensional overlaps (Obara & Saika 1986, eq. A12).
func (w *oneWork) kineticBlock(a, b *shellData, out []float64) {
	ca, cb := cartesianExponents(a.l), cartesianExponents(b.l)
	nb := len(cb)
	out = out[:len(ca)*nb]
	for i := range out {
		out[i] = 0
	}
	dim := w.dim
	s := w.s1d
	for pi, alpha := range a.exps {
		for qi, beta := range b.exps {
			q := makePrimitivePair(alpha, beta, a.center, b.center)
			pref := a.coefs[pi] * b.coefs[qi] * q.kab * math.Pow(math.Pi/q.p, 1.5)
			for k := 0; k < 3; k++ {
				overlap1D(s[k], dim, a.l, b.l+2, q.pa[k], q.pb[k], q.oo2p)
			}
			t1 := func(k, i, j int) float64 {
				sk := s[k]
				v := -2*beta*float64(2*j+1)*sk[i*dim+j] + 4*beta*beta*sk[i*dim+j+2]
				if j >= 2 {
					v += float64(j*(j-1)) * sk[i*dim+j-2]
				}
				return -0.5 * v
			}
			for r, ea := range ca {
				for c, eb := range cb {
					x := s[0][ea[0]*dim+eb[0]]
					y := s[1][ea[1]*dim+eb[1]]
					z := s[2][ea[2]*dim+eb[2]]
					v := t1(0, ea[0], eb[0])*y*z + x*t1(1, ea[1], eb[1])*z + x*y*t1(2, ea[2], eb[2])
					out[r*nb+c] += pref * v
				}
			}
		}
	}
}

// dipoleBlock writes the three contracted Cartesian blocks
// ⟨a|(r−O)_k|b⟩ using (x−O_x) = (x−A_x) + (A_x−O_x):
// ⟨i|x−O_x|j⟩ = S_{i+1,j} + (A_x−O_x) S_ij.
func (w *oneWork) dipoleBlock(a, b *shellData, origin [3]float64, out [3][]float64) {
	ca, cb := cartesianExponents(a.l), cartesianExponents(b.l)
	nb := len(cb)
	for k := range out {
		o := out[k][:len(ca)*nb]
		for i := range o {
			o[i] = 0
		}
	}
	dim := w.dim
	s := w.s1d
	var ao [3]float64
	for k := 0; k < 3; k++ {
		ao[k] = a.center[k] - origin[k]
	}
	for pi, alpha := range a.exps {
		for qi, beta := range b.exps {
			q := makePrimitivePair(alpha, beta, a.center, b.center)
			pref := a.coefs[pi] * b.coefs[qi] * q.kab * math.Pow(math.Pi/q.p, 1.5)
			for k := 0; k < 3; k++ {
				overlap1D(s[k], dim, a.l+1, b.l, q.pa[k], q.pb[k], q.oo2p)
			}
			for r, ea := range ca {
				for c, eb := range cb {
					var ov, mo [3]float64
					for k := 0; k < 3; k++ {
						ov[k] = s[k][ea[k]*dim+eb[k]]
						mo[k] = s[k][(ea[k]+1)*dim+eb[k]] + ao[k]*ov[k]
					}
					out[0][r*nb+c] += pref * mo[0] * ov[1] * ov[2]
					out[1][r*nb+c] += pref * ov[0] * mo[1] * ov[2]
					out[2][r*nb+c] += pref * ov[0] * ov[1] * mo[2]
				}
			}
		}
	}
}

// nuclearBlock writes the contracted Cartesian block
// −Σ_C Z_C ⟨a| 1/|r−C| |b⟩.
func (w *oneWork) nuclearBlock(a, b *shellData, charges []float64, centers [][3]float64, out []float64) {
	if a.l < b.l {
		// The horizontal transfer is cheapest towards the lower momentum:
		// compute ⟨b|V|a⟩ and transpose.
		na, nb := a.ncart, b.ncart
		w.nuclearBlock(b, a, charges, centers, out)
		tr := w.hrr[0][:na*nb]
		copy(tr, out[:na*nb])
		for r := 0; r < na; r++ {
			for c := 0; c < nb; c++ {
				out[r*nb+c] = tr[c*na+r]
			}
		}
		return
	}
	la, lb := a.l, b.l
	lt := la + lb
	lo := numComponentsUpTo(la - 1) // first global index with |e| = la
	hi := numComponentsUpTo(lt)
	acc := w.acc[:hi]
	for i := range acc {
		acc[i] = 0
	}
	boys := w.boys[:lt+1]
	for pi, alpha := range a.exps {
		for qi, beta := range b.exps {
			q := makePrimitivePair(alpha, beta, a.center, b.center)
			base := a.coefs[pi] * b.coefs[qi] * q.kab * 2 * math.Pi / q.p
			for c, C := range centers {
				var pc [3]float64
				var r2 float64
				for k := 0; k < 3; k++ {
					pc[k] = q.P[k] - C[k]
					r2 += pc[k] * pc[k]
				}
				Boys(lt, q.p*r2, boys)
				pref := -charges[c] * base
				for m := 0; m <= lt; m++ {
					w.aux[m][0] = pref * boys[m]
				}
				w.nuclearVRR(lt, q.pa, pc, q.oo2p)
				a0 := w.aux[0]
				for i := lo; i < hi; i++ {
					acc[i] += a0[i]
				}
			}
		}
	}
	w.transferToKet(a, b, out)
}

// nuclearVRR builds aux[m][e] = Θ^(m)(e|0) for 1 ≤ |e| ≤ lt, m ≤ lt−|e|,
// from aux[m][0] (Obara & Saika 1986, eq. A20 with b = 0):
// Θ^(m)(e+1_i) = PA_i Θ^(m)(e) − PC_i Θ^(m+1)(e) + e_i/(2p) (Θ^(m)(e−1_i) − Θ^(m+1)(e−1_i)).
func (w *oneWork) nuclearVRR(lt int, pa, pc [3]float64, oo2p float64) {
	for L := 1; L <= lt; L++ {
		for lx := L; lx >= 0; lx-- {
			for ly := L - lx; ly >= 0; ly-- {
				lz := L - lx - ly
				e := [3]int{lx, ly, lz}
				// recurse along the first direction with a non-zero exponent
				d := 0
				if lx == 0 {
					d = 1
					if ly == 0 {
						d = 2
					}
				}
				e1 := e
				e1[d]--
				i0 := globalIndex(lx, ly, lz)
				i1 := globalIndex(e1[0], e1[1], e1[2])
				i2 := -1
				f := float64(e1[d]) * oo2p
				if e1[d] > 0 {
					e2 := e1
					e2[d]--
					i2 = globalIndex(e2[0], e2[1], e2[2])
				}
				for m := 0; m <= lt-L; m++ {
					v := pa[d]*w.aux[m][i1] - pc[d]*w.aux[m+1][i1]
					if i2 >= 0 {
						v += f * (w.aux[m][i2] - w.aux[m+1][i2])
					}
					w.aux[m][i0] = v
				}
			}
		}
	}
}

// transferToKet applies the horizontal recurrence
// (e|f) = (e+1_i|f−1_i) + (A−B)_i (e|f−1_i) to the contracted integrals
// w.acc[(e|0)], |e| ∈ [la, la+lb], and writes (a|b) to out
// (ncart_a×ncart_b).
func (w *oneWork) transferToKet(a, b *shellData, out []float64) {
	la, lb := a.l, b.l
	var ab [3]float64
	for k := 0; k < 3; k++ {
		ab[k] = a.center[k] - b.center[k]
	}
	na, nb := a.ncart, b.ncart
	if lb == 0 {
		copy(out[:na], w.acc[numComponentsUpTo(la-1):numComponentsUpTo(la)])
		return
	}
	// cur holds (e|f) for |f| = k as [global e index][component of f];
	// start with k = 0, one column.
	cur := w.hrr[0]
	next := w.hrr[1]
	lt := la + lb
	ntot := numComponentsUpTo(lt)
	copy(cur[:ntot], w.acc[:ntot])
	for k := 1; k <= lb; k++ {
		nf := (k + 1) * (k + 2) / 2
		nfPrev := k * (k + 1) / 2
		// e runs over |e| ∈ [la, lt−k]
		for L := la; L <= lt-k; L++ {
			for ex := L; ex >= 0; ex-- {
				for ey := L - ex; ey >= 0; ey-- {
					ez := L - ex - ey
					ie := globalIndex(ex, ey, ez)
					for fx := k; fx >= 0; fx-- {
						for fy := k - fx; fy >= 0; fy-- {
							fz := k - fx - fy
							f := [3]int{fx, fy, fz}
							d := 0
							if fx == 0 {
								d = 1
								if fy == 0 {
									d = 2
								}
							}
							f1 := f
							f1[d]--
							e1 := [3]int{ex, ey, ez}
							e1[d]++
							jf := componentIndex(fy, fz)
							jf1 := componentIndex(f1[1], f1[2])
							ie1 := globalIndex(e1[0], e1[1], e1[2])
							next[ie*nf+jf] = cur[ie1*nfPrev+jf1] + ab[d]*cur[ie*nfPrev+jf1]
						}
					}
				}
			}
		}
		cur, next = next, cur
	}
	lo := numComponentsUpTo(la - 1)
	for r := 0; r < na; r++ {
		copy(out[r*nb:r*nb+nb], cur[(lo+r)*nb:(lo+r)*nb+nb])
	}
}
