package integral

// First derivatives of integrals with respect to nuclear positions,
// contracted with density-like matrices, for analytic gradients.
//
// Method. A Cartesian Gaussian x_A^a y_A^b z_A^c e^{−α r_A²} depends on its
// centre A only through r_A = r − A, and
//
//	∂/∂A_x  x_A^a e^{−α x_A²} = 2α x_A^{a+1} e^{−α x_A²} − a x_A^{a−1} e^{−α x_A²}
//
// (S. Obara and A. Saika, J. Chem. Phys. 84, 3963 (1986); T. Helgaker and
// P. R. Taylor, Theor. Chim. Acta 83, 177 (1992)). The derivative of
// a contracted shell of momentum l is therefore the combination of a
// "raised" shell (momentum l+1, primitive coefficients 2α_p·c_p) and a
// "lowered" shell (momentum l−1, coefficients c_p). Integrals over those
// shifted shells are computed by the ordinary Obara–Saika recurrences of
// oneelectron.go (overlap, kinetic energy, nuclear attraction with the
// Head-Gordon–Pople transfer) as raw Cartesian blocks, combined component by component, and contracted with the density
// back-transformed to the Cartesian components of the original shells
// (the transpose of the shell's final transformation), so the derivative
// blocks are never transformed to spherical functions.
//
// Translational invariance removes one centre from every integral: a
// two-centre overlap or kinetic integral obeys ∂/∂B = −∂/∂A; each term of
// the nuclear attraction obeys ∂/∂C = −(∂/∂A + ∂/∂B), which gives the
// operator (Hellmann–Feynman) derivative with respect to the nucleus C
// from the basis-function derivatives of that term alone.
//
// All results are per-atom gradient contributions [atom][x, y, z] in
// hartree/bohr for the density-like matrices passed, which are symmetric,
// nbf×nbf, row-major, over the final basis functions.

import "fmt"

// derivNumAtoms returns the number of atoms the result of a gradient routine
// must cover: at least n and 1 + the highest atom index of the shells.
func (b *Basis) derivNumAtoms(n int) int {
	for i := range b.Shells {
		if a := b.Shells[i].Atom + 1; a > n {
			n = a
		}
	}
	return n
}

// derivShiftedShell returns the raw shell data of the derivative companions of
// s: the raised shell (l+1, coefficients 2α_p c_p) when up is true, else
// the lowered shell (l−1, coefficients c_p; s must have l ≥ 1). Only the
// fields the Cartesian block routines read are set.
func derivShiftedShell(s *shellData, up bool) shellData {
	d := shellData{center: s.center, exps: s.exps}
	if up {
		d.l = s.l + 1
		d.coefs = make([]float64, len(s.coefs))
		for p, c := range s.coefs {
			d.coefs[p] = 2 * s.exps[p] * c
		}
	} else {
		d.l = s.l - 1
		d.coefs = s.coefs
	}
	d.ncart = basisNCart(d.l)
	d.nfunc = d.ncart
	return d
}

// derivShells holds the raised and lowered companions of every shell.
type derivShells struct {
	up, down []shellData
}

func (b *Basis) derivShells() derivShells {
	var d derivShells
	d.up = make([]shellData, len(b.shells))
	d.down = make([]shellData, len(b.shells))
	for i := range b.shells {
		d.up[i] = derivShiftedShell(&b.shells[i], true)
		if b.shells[i].l > 0 {
			d.down[i] = derivShiftedShell(&b.shells[i], false)
		}
	}
	return d
}

// cartesianDensityBlock writes out = T_iᵀ·D_ij·T_j (ncart_i×ncart_j): the
// block (i, j) of the symmetric matrix d (nbf×nbf) carried back to the
// axially normalized Cartesian components of shells i and j, so that
// Σ_{μ∈i,ν∈j} D_μν (T_i X T_jᵀ)_μν = Σ_rc out_rc X_rc for any Cartesian
// block X. tmp needs nfunc_i·ncart_j entries.
func (b *Basis) cartesianDensityBlock(i, j int, d, tmp, out []float64) {
	si, sj := &b.shells[i], &b.shells[j]
	n := b.NBF
	oi, oj := b.Offsets[i], b.Offsets[j]
	fi, fj, ci, cj := si.nfunc, sj.nfunc, si.ncart, sj.ncart
	// tmp = D_ij · T_j  (fi×cj)
	for p := 0; p < fi; p++ {
		row := d[(oi+p)*n+oj : (oi+p)*n+oj+fj]
		t := tmp[p*cj : p*cj+cj]
		clear(t)
		for q, v := range row {
			if v == 0 {
				continue
			}
			tr := sj.trans[q*cj : q*cj+cj]
			for c, x := range tr {
				t[c] += v * x
			}
		}
	}
	// out = T_iᵀ · tmp  (ci×cj)
	out = out[:ci*cj]
	clear(out)
	for p := 0; p < fi; p++ {
		tr := si.trans[p*ci : p*ci+ci]
		t := tmp[p*cj : p*cj+cj]
		for r, x := range tr {
			if x == 0 {
				continue
			}
			o := out[r*cj : r*cj+cj]
			for c, v := range t {
				o[c] += x * v
			}
		}
	}
}

// derivContractBra returns Σ_rc w_rc ∂X_rc/∂A_k (k = x, y, z) for a
// Cartesian block X = ⟨a|O|b⟩ whose bra shell has momentum la, given the
// blocks over the raised (up, ncart(la+1)×nb) and lowered (down,
// ncart(la−1)×nb, unused when la = 0) companions of the bra:
// ∂/∂A_k of component r is up[r+1_k] − r_k·down[r−1_k].
func derivContractBra(la, nb int, w, up, down []float64) [3]float64 {
	var g [3]float64
	r := 0
	for lx := la; lx >= 0; lx-- {
		for ly := la - lx; ly >= 0; ly-- {
			lz := la - lx - ly
			wr := w[r*nb : r*nb+nb]
			r++
			e := [3]int{lx, ly, lz}
			for k := 0; k < 3; k++ {
				p := e
				p[k]++
				u := up[componentIndex(p[1], p[2])*nb:]
				var s float64
				for c, x := range wr {
					s += x * u[c]
				}
				if e[k] > 0 {
					m := e
					m[k]--
					dn := down[componentIndex(m[1], m[2])*nb:]
					var t float64
					for c, x := range wr {
						t += x * dn[c]
					}
					s -= float64(e[k]) * t
				}
				g[k] += s
			}
		}
	}
	return g
}

// derivOneScratch holds the buffers of the one-electron gradient routines.
type derivOneScratch struct {
	w              *oneWork
	wc, tmp        []float64
	upBlk, downBlk []float64
}

func (b *Basis) newDerivOneScratch() *derivOneScratch {
	nc := basisNCart(b.MaxL + 1)
	return &derivOneScratch{
		w:       newOneWork(b.MaxL + 1),
		wc:      make([]float64, nc*nc),
		tmp:     make([]float64, nc*nc),
		upBlk:   make([]float64, nc*nc),
		downBlk: make([]float64, nc*nc),
	}
}

// derivTwoCentre contracts w with the derivatives of a translationally
// invariant two-centre operator whose raw Cartesian blocks block(a, b, out)
// computes: Σ_μν W_μν ∂O_μν/∂R_A.
func (b *Basis) derivTwoCentre(w []float64, natoms int, name string,
	block func(s *derivOneScratch, a, c *shellData, out []float64)) [][3]float64 {
	b.derivCheckMatrix(w, name)
	grad := make([][3]float64, b.derivNumAtoms(natoms))
	ds := b.derivShells()
	s := b.newDerivOneScratch()
	for i := range b.shells {
		ai := b.Shells[i].Atom
		for j := 0; j < i; j++ {
			aj := b.Shells[j].Atom
			if ai == aj {
				continue // the pair moves rigidly with its atom
			}
			sj := &b.shells[j]
			b.cartesianDensityBlock(i, j, w, s.tmp, s.wc)
			block(s, &ds.up[i], sj, s.upBlk)
			if b.shells[i].l > 0 {
				block(s, &ds.down[i], sj, s.downBlk)
			}
			g := derivContractBra(b.shells[i].l, sj.ncart, s.wc, s.upBlk, s.downBlk)
			// Both orders (i, j) and (j, i) of the symmetric sum: factor 2;
			// ∂/∂B = −∂/∂A.
			for k := 0; k < 3; k++ {
				grad[ai][k] += 2 * g[k]
				grad[aj][k] -= 2 * g[k]
			}
		}
	}
	return grad
}

// derivCheckMatrix panics when m is not nbf×nbf: a programming error of the
// caller, not user input.
func (b *Basis) derivCheckMatrix(m []float64, name string) {
	if len(m) != b.NBF*b.NBF {
		panic(fmt.Sprintf("integral: %s: matrix has %d entries, want %d×%d", name, len(m), b.NBF, b.NBF))
	}
}

// OverlapGradient returns Σ_μν W_μν ∂S_μν/∂R_A for every atom A (shell
// atom indices), with W symmetric nbf×nbf row-major, typically the
// energy-weighted density (the energy gradient carries a minus sign the
// caller applies). The result has max(natoms, 1 + highest shell atom)
// entries; natoms ≤ 0 means just enough.
func (b *Basis) OverlapGradient(w []float64, natoms int) [][3]float64 {
	return b.derivTwoCentre(w, natoms, "OverlapGradient", func(s *derivOneScratch, a, c *shellData, out []float64) {
		s.w.overlapBlock(a, c, out)
	})
}

// KineticGradient returns Σ_μν D_μν ∂T_μν/∂R_A for every atom A, with D
// symmetric nbf×nbf row-major. The result has max(natoms, 1 + highest
// shell atom) entries; natoms ≤ 0 means just enough.
func (b *Basis) KineticGradient(d []float64, natoms int) [][3]float64 {
	return b.derivTwoCentre(d, natoms, "KineticGradient", func(s *derivOneScratch, a, c *shellData, out []float64) {
		s.w.kineticBlock(a, c, out)
	})
}

// NuclearGradient returns Σ_μν D_μν ∂V_μν/∂R_A for the attraction
// operator V = −Σ_C Z_C/|r−C| of point charges charges[C] at centers[C]
// (bohr), where atom C of the result is the nucleus C and the shells move
// with their atoms (basis.Shell.Atom). Both parts are included: the
// derivatives of the basis functions and the derivative of the operator
// with respect to each nucleus (Hellmann–Feynman term), the latter by
// translational invariance of each term, ∂/∂C = −(∂/∂A + ∂/∂B). The result
// has max(len(charges), 1 + highest shell atom) entries. charges and
// centers must have the same length.
func (b *Basis) NuclearGradient(d []float64, charges []float64, centers [][3]float64) [][3]float64 {
	if len(charges) != len(centers) {
		panic("integral: NuclearGradient: charges and centers differ in length")
	}
	b.derivCheckMatrix(d, "NuclearGradient")
	grad := make([][3]float64, b.derivNumAtoms(len(charges)))
	ds := b.derivShells()
	s := b.newDerivOneScratch()
	for i := range b.shells {
		ai := b.Shells[i].Atom
		for j := range b.shells {
			sj := &b.shells[j]
			b.cartesianDensityBlock(i, j, d, s.tmp, s.wc)
			for c := range charges {
				if charges[c] == 0 {
					continue
				}
				q, r := charges[c:c+1], centers[c:c+1]
				s.w.nuclearBlock(&ds.up[i], sj, q, r, s.upBlk)
				if b.shells[i].l > 0 {
					s.w.nuclearBlock(&ds.down[i], sj, q, r, s.downBlk)
				}
				g := derivContractBra(b.shells[i].l, sj.ncart, s.wc, s.upBlk, s.downBlk)
				// Σ_μν D_μν (⟨∂μ|V_C|ν⟩ + ⟨μ|V_C|∂ν⟩) = 2 Σ_μν D_μν ⟨∂μ|V_C|ν⟩
				// over all ordered shell pairs; the nucleus takes minus that.
				for k := 0; k < 3; k++ {
					grad[ai][k] += 2 * g[k]
					grad[c][k] -= 2 * g[k]
				}
			}
		}
	}
	return grad
}
