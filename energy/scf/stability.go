package scf

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// StabilityMode says what Run does with a converged wavefunction.
type StabilityMode int

const (
	// StabilityOff skips the check (the default).
	StabilityOff StabilityMode = iota
	// StabilityCheck checks the converged wavefunction and reports the
	// result in Result.Stability.
	StabilityCheck
	// StabilityFollow checks and, while an instability is found, rotates
	// the orbitals along it and converges an unrestricted calculation from
	// there, until the solution is stable (at most maxFollow times).
	StabilityFollow
)

// String is the mode's name as given on the command line.
func (m StabilityMode) String() string {
	switch m {
	case StabilityCheck:
		return "check"
	case StabilityFollow:
		return "follow"
	default:
		return "off"
	}
}

// ParseStabilityMode reads "off", "check" or "follow".
func ParseStabilityMode(s string) (StabilityMode, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "off", "none":
		return StabilityOff, nil
	case "check":
		return StabilityCheck, nil
	case "follow":
		return StabilityFollow, nil
	}
	return StabilityOff, fmt.Errorf("stability mode %q: give off, check or follow", s)
}

// StabilityThreshold is the lowest-eigenvalue threshold (Eh) below which a
// wavefunction is reported unstable. Eigenvalues between it and zero are
// within the accuracy of the converged orbitals and of the finite-difference
// exchange–correlation kernel (common practice).
const StabilityThreshold = -1e-4

// Stability kinds.
const (
	// StabilityRestricted is the restricted → unrestricted (triplet,
	// spin-symmetry-breaking) instability of RHF/RKS.
	StabilityRestricted = "restricted → unrestricted"
	// StabilityInternal is the real internal instability of UHF/UKS.
	StabilityInternal = "unrestricted internal"
)

// Stability is the outcome of one stability check.
type Stability struct {
	Kind                    string  // StabilityRestricted or StabilityInternal
	LowestEigenvalueHartree float64 // lowest eigenvalue of the orbital Hessian
	Stable                  bool    // LowestEigenvalueHartree ≥ StabilityThreshold
	EnergyHartree           float64 // energy of the checked solution
	Products                int     // Hessian–vector products used
	Converged               bool    // the eigenvalue solver met its tolerance

	// vector is the lowest eigenvector, one occupied×virtual block per spin
	// (one block for StabilityRestricted: α rotates by +x, β by −x).
	vector [][]float64
}

// maxFollow bounds the number of instabilities followed in one Run.
const maxFollow = 3

// followStep is the size of the orbital rotation along a normalized
// instability eigenvector: occupied orbitals φ_i become φ_i + t·Σ_a x_ia φ_a
// (then re-orthonormalized), a mixing of about 27° for a single pair.
const followStep = 0.5

// fdStep is the finite-difference step for the exchange–correlation
// response along a normalized trial rotation.
const fdStep = 1e-4

// CheckStability computes the lowest eigenvalue of the real orbital Hessian
// of a converged result. For a restricted result this is the
// restricted → unrestricted (triplet) Hessian, (A+B) of the triplet
// response equations: an eigenvalue below StabilityThreshold means an
// unrestricted solution of lower energy exists (R. Seeger, J. A. Pople,
// J. Chem. Phys. 66, 3045 (1977); R. Bauernschmitt, R. Ahlrichs, J. Chem.
// Phys. 104, 9047 (1996) for Kohn–Sham). For an unrestricted result it is
// the real UHF/UKS internal Hessian. opt must describe the same
// calculation as the one that produced res (XC included).
//
// Hessian–vector products are built from the existing Fock builders: the
// Coulomb and exact-exchange response analytically from the trial density
// δD = C_o X C_vᵀ + transpose, the exchange–correlation response by central
// finite differences of the unrestricted potential along ±δD. The lowest
// eigenvalue is found by Davidson's method (E. R. Davidson, J. Comput. Phys.
// 17, 87 (1975)) with orbital-energy differences as preconditioner.
func CheckStability(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options, res *Result) (*Stability, error) {
	if res == nil || len(res.Coefficients) == 0 {
		return nil, errors.New("stability check: no converged orbitals")
	}
	opt = withDefaults(opt)
	opt.Unrestricted = res.Unrestricted
	p, err := newProblem(ctx, mol, shells, opt)
	if err != nil {
		return nil, fmt.Errorf("stability check: %w", err)
	}
	if p.nspin != len(res.Coefficients) || p.n != res.NBF || p.m != res.NMO {
		return nil, errors.New("stability check: the result does not belong to this molecule and basis")
	}
	h := newHessian(p, opt.XC, res)
	st := &Stability{Kind: StabilityInternal, EnergyHartree: res.EnergyHartree}
	if !res.Unrestricted {
		st.Kind = StabilityRestricted
	}
	if h.dim == 0 {
		st.Stable, st.Converged = true, true
		st.LowestEigenvalueHartree = math.Inf(1)
		return st, nil
	}
	lambda, vec, products, conv, err := davidson(ctx, h.dim, h.diag, h.apply)
	if err != nil {
		return nil, fmt.Errorf("stability check: %w", err)
	}
	st.LowestEigenvalueHartree = lambda
	st.Stable = lambda >= StabilityThreshold
	st.Products = products
	st.Converged = conv
	st.vector = h.unpack(vec)
	return st, nil
}

// hessian applies the real orbital Hessian of one converged result.
type hessian struct {
	p       *problem
	xc      XC
	triplet bool // restricted → unrestricted: one block, β = −α
	no, nv  []int
	co, cv  [][]float64 // occupied and virtual coefficients per spin, n×no and n×nv
	dens    [][]float64 // α and β densities
	diag    []float64
	dim     int
}

func newHessian(p *problem, xc XC, res *Result) *hessian {
	n, m := p.n, p.m
	h := &hessian{p: p, xc: xc, triplet: !res.Unrestricted}
	nsp := len(res.Coefficients)
	nocc := []int{res.NumAlpha, res.NumBeta}
	for s := 0; s < nsp; s++ {
		no := nocc[s]
		nv := m - no
		c := res.Coefficients[s]
		co := make([]float64, n*no)
		cv := make([]float64, n*nv)
		for mu := 0; mu < n; mu++ {
			copy(co[mu*no:(mu+1)*no], c[mu*m:mu*m+no])
			copy(cv[mu*nv:(mu+1)*nv], c[mu*m+no:(mu+1)*m])
		}
		h.no = append(h.no, no)
		h.nv = append(h.nv, nv)
		h.co = append(h.co, co)
		h.cv = append(h.cv, cv)
		e := res.OrbitalEnergies[s]
		for i := 0; i < no; i++ {
			for a := 0; a < nv; a++ {
				h.diag = append(h.diag, e[no+a]-e[i])
			}
		}
	}
	h.dim = len(h.diag)
	if h.triplet {
		half := make([]float64, n*n)
		for i, v := range res.Density[0] {
			half[i] = 0.5 * v
		}
		h.dens = [][]float64{half, half}
	} else {
		h.dens = res.Density
	}
	return h
}

// unpack splits a packed vector into occupied×virtual blocks per spin.
func (h *hessian) unpack(x []float64) [][]float64 {
	out := make([][]float64, len(h.no))
	off := 0
	for s := range h.no {
		k := h.no[s] * h.nv[s]
		out[s] = append([]float64(nil), x[off:off+k]...)
		off += k
	}
	return out
}

// trialDensity returns δD = C_o X C_vᵀ + (C_o X C_vᵀ)ᵀ for spin s.
func (h *hessian) trialDensity(s int, x []float64) []float64 {
	n := h.p.n
	no, nv := h.no[s], h.nv[s]
	d := make([]float64, n*n)
	if nv > 0 && no > 0 {
		t := mul(h.co[s], n, no, x, nv) // n×nv
		cvT := make([]float64, nv*n)
		for mu := 0; mu < n; mu++ {
			for a := 0; a < nv; a++ {
				cvT[a*n+mu] = h.cv[s][mu*nv+a]
			}
		}
		d = mul(t, n, nv, cvT, n)
	}
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			v := d[i*n+j] + d[j*n+i]
			d[i*n+j], d[j*n+i] = v, v
		}
	}
	return d
}

// project returns C_oᵀ F C_v for spin s.
func (h *hessian) project(s int, f []float64) []float64 {
	n := h.p.n
	no, nv := h.no[s], h.nv[s]
	if no == 0 || nv == 0 { // no rotation of this spin (e.g. a one-electron β)
		return make([]float64, no*nv)
	}
	return mulTN(h.co[s], n, no, mul(f, n, n, h.cv[s], nv), nv)
}

// xcResponse returns the first-order change of the α and β
// exchange–correlation potentials along (δα, δβ), by central differences.
func (h *hessian) xcResponse(ctx context.Context, da, db []float64) ([][]float64, error) {
	n := h.p.n
	eval := func(sign float64) ([][]float64, error) {
		d := [][]float64{make([]float64, n*n), make([]float64, n*n)}
		for i := range d[0] {
			d[0][i] = h.dens[0][i] + sign*fdStep*da[i]
			d[1][i] = h.dens[1][i] + sign*fdStep*db[i]
		}
		v := [][]float64{make([]float64, n*n), make([]float64, n*n)}
		if _, _, err := h.xc.Build(ctx, d, v); err != nil {
			return nil, err
		}
		return v, nil
	}
	plus, err := eval(1)
	if err != nil {
		return nil, err
	}
	if h.triplet {
		// Spin symmetry: V_β(D/2+εδ, D/2−εδ) = V_α(D/2−εδ, D/2+εδ), so one
		// evaluation gives the central difference.
		out := make([]float64, n*n)
		for i := range out {
			out[i] = (plus[0][i] - plus[1][i]) / (2 * fdStep)
		}
		neg := make([]float64, n*n)
		for i := range neg {
			neg[i] = -out[i]
		}
		return [][]float64{out, neg}, nil
	}
	minus, err := eval(-1)
	if err != nil {
		return nil, err
	}
	for s := 0; s < 2; s++ {
		for i := range plus[s] {
			plus[s][i] = (plus[s][i] - minus[s][i]) / (2 * fdStep)
		}
	}
	return plus, nil
}

// apply returns H·x for every vector of the block.
func (h *hessian) apply(ctx context.Context, block [][]float64) ([][]float64, error) {
	p := h.p
	out := make([][]float64, len(block))
	if h.triplet {
		// J cancels (δα + δβ = 0); exchange for all trial densities in one
		// build.
		deltas := make([][]float64, len(block))
		for k, x := range block {
			deltas[k] = h.trialDensity(0, x)
		}
		var K [][]float64
		if p.ax != 0 {
			var err error
			if _, K, err = p.jk.buildFrom(ctx, deltas, true); err != nil {
				return nil, err
			}
		}
		for k, x := range block {
			f := make([]float64, p.n*p.n)
			if K != nil {
				for i := range f {
					f[i] = -p.ax * K[k][i]
				}
			}
			if h.xc != nil {
				neg := make([]float64, len(deltas[k]))
				for i, v := range deltas[k] {
					neg[i] = -v
				}
				v, err := h.xcResponse(ctx, deltas[k], neg)
				if err != nil {
					return nil, err
				}
				for i := range f {
					f[i] += v[0][i]
				}
			}
			pr := h.project(0, f)
			y := make([]float64, len(x))
			for i := range y {
				y[i] = h.diag[i]*x[i] + pr[i]
			}
			out[k] = y
		}
		return out, nil
	}
	for k, x := range block {
		xs := h.unpack(x)
		da := h.trialDensity(0, xs[0])
		db := h.trialDensity(1, xs[1])
		J, K, err := p.jk.buildFrom(ctx, [][]float64{da, db}, p.ax != 0)
		if err != nil {
			return nil, err
		}
		var v [][]float64
		if h.xc != nil {
			if v, err = h.xcResponse(ctx, da, db); err != nil {
				return nil, err
			}
		}
		y := make([]float64, 0, len(x))
		for s := 0; s < 2; s++ {
			f := append([]float64(nil), J...)
			if p.ax != 0 {
				for i := range f {
					f[i] -= p.ax * K[s][i]
				}
			}
			if v != nil {
				for i := range f {
					f[i] += v[s][i]
				}
			}
			y = append(y, h.project(s, f)...)
		}
		for i := range y {
			y[i] += h.diag[i] * x[i]
		}
		out[k] = y
	}
	return out, nil
}

// Davidson parameters.
const (
	davidsonGuesses   = 4
	davidsonRoots     = 2
	davidsonMaxSpace  = 32
	davidsonMaxIter   = 40
	davidsonResidual  = 1e-3
	davidsonPrecFloor = 1e-3
)

// davidson finds the lowest eigenvalue and eigenvector of the symmetric
// operator apply of dimension dim with diagonal diag.
func davidson(ctx context.Context, dim int, diag []float64, apply func(context.Context, [][]float64) ([][]float64, error)) (float64, []float64, int, bool, error) {
	order := make([]int, dim)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return diag[order[a]] < diag[order[b]] })
	var vs, avs [][]float64
	var fresh [][]float64
	for k := 0; k < min(davidsonGuesses, dim); k++ {
		v := make([]float64, dim)
		v[order[k]] = 1
		fresh = append(fresh, v)
	}
	products := 0
	lambda := math.Inf(1)
	var best []float64
	nroots := min(davidsonRoots, dim)
	for iter := 0; iter < davidsonMaxIter; iter++ {
		// Orthonormalize the new vectors against the space (twice).
		var add [][]float64
		for _, v := range fresh {
			for pass := 0; pass < 2; pass++ {
				for _, u := range append(vs, add...) {
					c := dot(u, v)
					for i := range v {
						v[i] -= c * u[i]
					}
				}
			}
			nv := math.Sqrt(dot(v, v))
			if nv < 1e-8 {
				continue
			}
			for i := range v {
				v[i] /= nv
			}
			add = append(add, v)
		}
		if len(add) == 0 {
			return lambda, best, products, false, nil
		}
		hv, err := apply(ctx, add)
		if err != nil {
			return 0, nil, products, false, err
		}
		products += len(add)
		vs = append(vs, add...)
		avs = append(avs, hv...)
		k := len(vs)
		g := make([]float64, k*k)
		for i := 0; i < k; i++ {
			for j := 0; j <= i; j++ {
				v := 0.5 * (dot(vs[i], avs[j]) + dot(vs[j], avs[i]))
				g[i*k+j], g[j*k+i] = v, v
			}
		}
		theta, y, err := eigenSym(g, k)
		if err != nil {
			return 0, nil, products, false, err
		}
		fresh = fresh[:0]
		ritz := make([][]float64, 0, nroots)
		aritz := make([][]float64, 0, nroots)
		converged := false
		for r := 0; r < min(nroots, k); r++ {
			u := make([]float64, dim)
			au := make([]float64, dim)
			for j := 0; j < k; j++ {
				c := y[j*k+r]
				for i := range u {
					u[i] += c * vs[j][i]
					au[i] += c * avs[j][i]
				}
			}
			res := make([]float64, dim)
			for i := range res {
				res[i] = au[i] - theta[r]*u[i]
			}
			rn := math.Sqrt(dot(res, res))
			if r == 0 {
				lambda, best = theta[0], u
				converged = rn < davidsonResidual
			}
			ritz = append(ritz, u)
			aritz = append(aritz, au)
			if rn < davidsonResidual {
				continue
			}
			t := make([]float64, dim)
			for i := range t {
				d := theta[r] - diag[i]
				if math.Abs(d) < davidsonPrecFloor {
					d = math.Copysign(davidsonPrecFloor, d)
				}
				t[i] = res[i] / d
			}
			fresh = append(fresh, t)
		}
		if converged {
			return lambda, best, products, true, nil
		}
		if k+len(fresh) > davidsonMaxSpace {
			vs, avs = ritz, aritz
		}
	}
	return lambda, best, products, false, nil
}

// rotatedState returns the α and β densities of res with the occupied
// orbitals rotated along the instability vector of st.
func rotatedState(p *problem, res *Result, st *Stability, step float64) *State {
	n, m := p.n, p.m
	nocc := []int{res.NumAlpha, res.NumBeta}
	dens := make([][]float64, 2)
	for s := 0; s < 2; s++ {
		cs := res.Coefficients[0]
		x := st.vector[0]
		sign := 1.0
		if len(res.Coefficients) == 2 {
			cs, x = res.Coefficients[s], st.vector[s]
		} else if s == 1 {
			sign = -1
		}
		no := nocc[s]
		nv := m - no
		// φ_i' = φ_i + sign·step·Σ_a x_ia φ_a.
		co := make([]float64, n*no)
		for mu := 0; mu < n; mu++ {
			for i := 0; i < no; i++ {
				v := cs[mu*m+i]
				for a := 0; a < nv; a++ {
					v += sign * step * x[i*nv+a] * cs[mu*m+no+a]
				}
				co[mu*no+i] = v
			}
		}
		// Löwdin re-orthonormalization: C' (C'ᵀ S C')^{-1/2}.
		if no > 0 {
			ov := mulTN(co, n, no, mul(p.s, n, n, co, no), no)
			vals, vecs, err := eigenSym(ov, no)
			if err == nil {
				inv := make([]float64, no*no)
				for i := 0; i < no; i++ {
					for j := 0; j < no; j++ {
						var v float64
						for k := 0; k < no; k++ {
							v += vecs[i*no+k] * vecs[j*no+k] / math.Sqrt(vals[k])
						}
						inv[i*no+j] = v
					}
				}
				co = mul(co, n, no, inv, no)
			}
		}
		ones := make([]float64, no)
		for i := range ones {
			ones[i] = 1
		}
		dens[s] = densityFromOrbitals(co, n, no, ones)
	}
	return &State{NBF: n, Density: dens}
}

// stabilityStage checks res and, for StabilityFollow, follows
// instabilities to a stable solution.
func stabilityStage(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, opt Options, res *Result) (*Result, error) {
	logf := func(r *Result, format string, args ...any) {
		msg := fmt.Sprintf(format, args...)
		r.Fallbacks = append(r.Fallbacks, msg)
		if opt.Log != nil {
			opt.Log(msg)
		}
	}
	cur := res
	for follow := 0; ; follow++ {
		st, err := CheckStability(ctx, mol, shells, opt, cur)
		if err != nil {
			return cur, err
		}
		cur.Stability = st
		if st.Stable {
			return cur, nil
		}
		verdict := fmt.Sprintf("stability: lowest eigenvalue of the %s orbital Hessian %.6f Eh (below %.0e): unstable", st.Kind, st.LowestEigenvalueHartree, StabilityThreshold)
		if opt.Stability != StabilityFollow {
			logf(cur, "%s; not followed (follow it to reach the lower solution)", verdict)
			return cur, nil
		}
		if follow == maxFollow {
			logf(cur, "%s; already followed %d times, giving up", verdict, maxFollow)
			return cur, nil
		}
		logf(cur, "%s; following it with an unrestricted calculation", verdict)
		wd := withDefaults(opt)
		wd.Unrestricted = true
		p, err := newProblem(ctx, mol, shells, wd)
		if err != nil {
			return cur, err
		}
		var next *Result
		for _, step := range []float64{followStep, -followStep} {
			o2 := opt
			o2.Unrestricted = true
			o2.Stability = StabilityOff
			o2.Guess = rotatedState(p, cur, st, step)
			r, err := runLadder(ctx, mol, shells, o2)
			if err != nil && !errors.Is(err, ErrNotConverged) {
				return cur, err
			}
			if err == nil && r.EnergyHartree < cur.EnergyHartree-1e-8 {
				next = r
				break
			}
		}
		if next == nil {
			logf(cur, "stability: no lower unrestricted solution found along the instability; keeping the solution at %.10f Eh", cur.EnergyHartree)
			return cur, nil
		}
		next.Fallbacks = append(append([]string(nil), cur.Fallbacks...), next.Fallbacks...)
		next.Followed = append(append([]Stability(nil), cur.Followed...), *st)
		next.Guess = cur.Guess
		logf(next, "stability: followed to an unrestricted solution at %.10f Eh (%.2e Eh lower), ⟨S²⟩ = %.4f", next.EnergyHartree, next.EnergyHartree-cur.EnergyHartree, next.S2)
		cur = next
	}
}
