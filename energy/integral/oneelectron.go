package integral

import "math"

// One-electron integrals by the Obara–Saika recurrences (S. Obara and
// A. Saika, J. Chem. Phys. 84, 3963 (1986)). Overlap, kinetic energy and
// dipole integrals factor into one-dimensional overlaps; the nuclear
// attraction uses their two-centre vertical recurrence with auxiliary
// orders m over the Boys function.
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
	boys  []float64 // F_m, m ≤ 2·maxL
	theta []float64 // Θ^(m)(a|b), see nuclearVRR
}

func newOneWork(maxL int) *oneWork {
	w := &oneWork{maxL: maxL, dim: maxL + 3}
	for k := range w.s1d {
		w.s1d[k] = make([]float64, w.dim*w.dim)
	}
	lt := 2 * maxL
	w.boys = make([]float64, lt+1)
	n := numComponentsUpTo(maxL)
	w.theta = make([]float64, n*n*(lt+1))
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
// PB for j+1 (Obara & Saika 1986).
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
// reduces it to one-dimensional overlaps (as in Obara & Saika 1986).
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
// −Σ_C Z_C ⟨a| 1/|r−C| |b⟩ (ncart_a×ncart_b, axially normalized
// components). Only l, center, exps, coefs and ncart of a and b are read.
//
// The auxiliary integrals Θ^(m)(a|b) are built per primitive pair and
// charge by the two-centre vertical recurrence of Obara & Saika (1986),
// on the bra and then on the ket, without a horizontal transfer:
// a transfer on contracted integrals must start from a single centre for
// every primitive pair, and when that centre holds the diffuse function
// far from a tight partner the intermediate (e|0) grow like |A−B|^{la+lb}
// and the transfer cancels them (losing of order 1e−9 relative for h
// functions 4 bohr apart), whereas P−A and P−B stay small here.
func (w *oneWork) nuclearBlock(a, b *shellData, charges []float64, centers [][3]float64, out []float64) {
	la, lb := a.l, b.l
	lt := la + lb
	M := lt + 1
	nA, nB := numComponentsUpTo(la), numComponentsUpTo(lb)
	loA, loB := numComponentsUpTo(la-1), numComponentsUpTo(lb-1)
	na, nb := a.ncart, b.ncart
	out = out[:na*nb]
	for i := range out {
		out[i] = 0
	}
	th := w.theta[:nA*nB*M]
	boys := w.boys[:M]
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
				for m := 0; m < M; m++ {
					th[m] = pref * boys[m]
				}
				nuclearVRR(th, la, lb, nB, M, q.pa, q.pb, pc, q.oo2p)
				for r := 0; r < na; r++ {
					row := th[(loA+r)*nB*M:]
					o := out[r*nb : r*nb+nb]
					for cc := range o {
						o[cc] += row[(loB+cc)*M]
					}
				}
			}
		}
	}
}

// nuclearVRR fills th[(ia·nB + ib)·M + m] = Θ^(m)(a|b) for all components
// |a| ≤ la, |b| ≤ lb (global indices ia, ib) and m ≤ la+lb−|a|−|b| from
// th[m] = Θ^(m)(0|0), by the recurrence of Obara & Saika (1986):
// Θ^(m)(a+1_i|b) = PA_i Θ^(m)(a|b) − PC_i Θ^(m+1)(a|b)
//
//   - a_i/(2p) [Θ^(m)(a−1_i|b) − Θ^(m+1)(a−1_i|b)]
//   - b_i/(2p) [Θ^(m)(a|b−1_i) − Θ^(m+1)(a|b−1_i)]
//
// and the same with PB for the ket.
func nuclearVRR(th []float64, la, lb, nB, M int, pa, pb, pc [3]float64, oo2p float64) {
	lt := la + lb
	// bra, b = 0
	for ia := 1; ia < numComponentsUpTo(la); ia++ {
		st := &cartSteps[ia]
		d := st.dir
		L := int(st.e[0] + st.e[1] + st.e[2])
		dst := th[ia*nB*M:]
		s1 := th[int(st.less[d])*nB*M:]
		f := float64(st.e[d]-1) * oo2p
		if st.less2 >= 0 {
			s2 := th[int(st.less2)*nB*M:]
			for m := 0; m <= lt-L; m++ {
				dst[m] = pa[d]*s1[m] - pc[d]*s1[m+1] + f*(s2[m]-s2[m+1])
			}
		} else {
			for m := 0; m <= lt-L; m++ {
				dst[m] = pa[d]*s1[m] - pc[d]*s1[m+1]
			}
		}
	}
	// ket
	for ib := 1; ib < nB; ib++ {
		sb := &cartSteps[ib]
		d := sb.dir
		Lb := int(sb.e[0] + sb.e[1] + sb.e[2])
		ib1 := int(sb.less[d])
		ib2 := int(sb.less2)
		fb := float64(sb.e[d]-1) * oo2p
		for ia := 0; ia < numComponentsUpTo(la); ia++ {
			sa := &cartSteps[ia]
			La := int(sa.e[0] + sa.e[1] + sa.e[2])
			mmax := lt - La - Lb
			if mmax < 0 {
				continue
			}
			dst := th[(ia*nB+ib)*M:]
			s1 := th[(ia*nB+ib1)*M:]
			for m := 0; m <= mmax; m++ {
				dst[m] = pb[d]*s1[m] - pc[d]*s1[m+1]
			}
			if sa.e[d] > 0 {
				fa := float64(sa.e[d]) * oo2p
				s3 := th[(int(sa.less[d])*nB+ib1)*M:]
				for m := 0; m <= mmax; m++ {
					dst[m] += fa * (s3[m] - s3[m+1])
				}
			}
			if ib2 >= 0 {
				s2 := th[(ia*nB+ib2)*M:]
				for m := 0; m <= mmax; m++ {
					dst[m] += fb * (s2[m] - s2[m+1])
				}
			}
		}
	}
}

// cartStep describes how a Cartesian component (by global index, see
// globalIndex) is reached in the recurrences.
type cartStep struct {
	e     [3]int8  // exponents (lx, ly, lz)
	dir   int8     // direction used to build it: first non-zero exponent
	less  [3]int32 // global index of the component minus 1_k, −1 if e_k = 0
	less2 int32    // global index minus 2_dir, −1 if e_dir < 2
}

// cartStepMaxL is the highest angular momentum covered by cartSteps.
const cartStepMaxL = 2*maxSphericalL + 4

// cartSteps is read-only data built once at package initialization.
var cartSteps = func() []cartStep {
	out := make([]cartStep, numComponentsUpTo(cartStepMaxL))
	for L := 0; L <= cartStepMaxL; L++ {
		for lx := L; lx >= 0; lx-- {
			for ly := L - lx; ly >= 0; ly-- {
				lz := L - lx - ly
				e := [3]int{lx, ly, lz}
				st := cartStep{e: [3]int8{int8(lx), int8(ly), int8(lz)}, less2: -1}
				for k := 0; k < 3; k++ {
					st.less[k] = -1
					if e[k] > 0 {
						f := e
						f[k]--
						st.less[k] = int32(globalIndex(f[0], f[1], f[2]))
					}
				}
				switch {
				case lx > 0:
					st.dir = 0
				case ly > 0:
					st.dir = 1
				default:
					st.dir = 2
				}
				if e[st.dir] >= 2 {
					f := e
					f[st.dir] -= 2
					st.less2 = int32(globalIndex(f[0], f[1], f[2]))
				}
				out[globalIndex(lx, ly, lz)] = st
			}
		}
	}
	return out
}()
