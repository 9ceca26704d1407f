package fit

import (
	"context"
	"errors"
	"fmt"

	"poise/energy/internal/kernel"
)

// Gradient returns the derivatives with respect to the atom positions of
// the fitted two-electron energy
//
//	E₂ = ½ Σ (μν|λσ) D_μν D_λσ − ½·exchangeFactor·Σ_s Σ (μλ|νσ) D^s_μν D^s_λσ
//
// (every four-centre integral in its fitted form), per atom in
// hartree/bohr, with the conventions of integral.ERIEngine.GradientJK: dens
// holds one total density (restricted; exchange then uses D^s = D/2 for
// two spins) or the α and β densities, symmetric n×n. exchangeFactor is 1
// for Hartree–Fock, the exact-exchange fraction of a hybrid functional, 0
// for a pure one. The result does not depend on threads.
func (f *Fit) Gradient(ctx context.Context, dens [][]float64, exchangeFactor float64, natoms int) ([][3]float64, error) {
	return f.gradient(ctx, dens, exchangeFactor, natoms, false)
}

// GradientReleasing is Gradient forming the three-centre two-particle
// density G in the memory of B, which it no longer needs by then: the
// gradient's peak memory is that of the fit, not twice it, and no array of
// B's size is allocated. The fit is released: later calls of Coulomb,
// Exchange or a gradient fail.
func (f *Fit) GradientReleasing(ctx context.Context, dens [][]float64, exchangeFactor float64, natoms int) ([][3]float64, error) {
	return f.gradient(ctx, dens, exchangeFactor, natoms, true)
}

// errReleased is the error of a fit used after GradientReleasing or Release.
var errReleased = errors.New("fit: used after it was released (GradientReleasing or Release)")

func (f *Fit) gradient(ctx context.Context, dens [][]float64, exchangeFactor float64, natoms int, release bool) ([][3]float64, error) {
	n, naux, npair := f.n, f.naux, f.npair
	if f.b == nil {
		return nil, errReleased
	}
	if len(dens) != 1 && len(dens) != 2 {
		return nil, fmt.Errorf("fit: gradient of %d densities (want 1 or 2)", len(dens))
	}
	dtot := dens[0]
	if len(dens) == 2 {
		dtot = make([]float64, n*n)
		for i := range dtot {
			dtot[i] = dens[0][i] + dens[1][i]
		}
	}
	// Coulomb: c = V⁻¹ I D = L⁻ᵀ (B D).
	t, err := f.fitted(ctx, f.packDensity(dtot))
	if err != nil {
		return nil, err
	}
	c := solveUpperVector(f.chol, naux, t)

	// Exchange, first what needs B: per spin density, its factor and
	// Bo_R = Vᵀ B_R V.
	var exch []*exchangeTerms
	fs := 0.5 * exchangeFactor
	if exchangeFactor != 0 {
		// Spin densities and the factor f_s of each in
		// E_K = −Σ_s f_s Σ D^s D^s (μλ|νσ).
		spins := dens
		if len(dens) == 1 {
			half := make([]float64, n*n)
			for i, v := range dens[0] {
				half[i] = 0.5 * v
			}
			spins = [][]float64{half}
			fs = exchangeFactor // two equal spins
		}
		for _, ds := range spins {
			x, err := f.exchangeProjections(ctx, ds)
			if err != nil {
				return nil, err
			}
			exch = append(exch, x)
		}
	}

	// G_P,μν starts as c_P D_μν (in B's memory when releasing: B is no
	// longer needed), H as −½ c cᵀ.
	var g []float64
	if release {
		g, f.b = f.b, nil
	} else {
		g = make([]float64, naux*npair)
	}
	dp := make([]float64, npair)
	for mu := 0; mu < n; mu++ {
		for nu := 0; nu <= mu; nu++ {
			dp[pairIndex(mu, nu)] = 0.5 * (dtot[mu*n+nu] + dtot[nu*n+mu])
		}
	}
	nchunk := (naux + auxPerChunk - 1) / auxPerChunk
	if err := parallelChunks(ctx, f.threads, nchunk, func(ch int, _ struct{}) {
		for p := ch * auxPerChunk; p < min((ch+1)*auxPerChunk, naux); p++ {
			row := g[p*npair : (p+1)*npair]
			for i, v := range dp {
				row[i] = c[p] * v
			}
		}
	}, nil); err != nil {
		return nil, err
	}
	h := make([]float64, naux*naux)
	for p := 0; p < naux; p++ {
		for q := 0; q < naux; q++ {
			h[p*naux+q] = -0.5 * c[p] * c[q]
		}
	}
	if len(exch) > 0 {
		linvT, err := f.inverseTransposed(ctx)
		if err != nil {
			return nil, err
		}
		for _, x := range exch {
			if err := f.exchangeGradientTerms(ctx, x, fs, linvT, g, h); err != nil {
				return nil, err
			}
		}
	}
	g3 := f.tc.Gradient(g, natoms, f.threads)
	if release {
		f.buffers.Put(g) // B's memory, lent again to a later fit
	}
	g2 := f.tc.TwoCentreGradient(h, natoms, f.threads)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	out := make([][3]float64, max(len(g3), len(g2)))
	for a := range out {
		for k := 0; k < 3; k++ {
			if a < len(g3) {
				out[a][k] += g3[a][k]
			}
			if a < len(g2) {
				out[a][k] += g2[a][k]
			}
		}
	}
	return out, nil
}

// exchangeTerms is what the exchange gradient of one spin density needs of
// B: the density's weighted eigenvectors (rows of vt, r×n) and eigenvalues,
// and Bo_R = Vᵀ B_R V (r×r per auxiliary function).
type exchangeTerms struct {
	vt, lambda, bo []float64
}

// exchangeProjections factors the spin density ds and projects B on its
// eigenvectors.
func (f *Fit) exchangeProjections(ctx context.Context, ds []float64) (*exchangeTerms, error) {
	n, naux := f.n, f.naux
	vt, lambda, err := factor(ds, n)
	if err != nil {
		return nil, err
	}
	x := &exchangeTerms{vt: vt, lambda: lambda}
	r := len(lambda)
	if r == 0 {
		return x, nil
	}
	r2 := r * r
	x.bo = make([]float64, naux*r2)
	nchunk := (naux + auxPerChunk - 1) / auxPerChunk
	type work struct{ bf, xt []float64 }
	err = parallelChunks(ctx, f.threads, nchunk, func(ch int, wk *work) {
		for p := ch * auxPerChunk; p < min((ch+1)*auxPerChunk, naux); p++ {
			f.unpackRow(p, wk.bf)
			kernel.DotProducts(vt, r, wk.bf, n, n, wk.xt, n)               // Xᵀ = Vᵀ B_R
			kernel.DotProducts(wk.xt, r, vt, r, n, x.bo[p*r2:(p+1)*r2], r) // Vᵀ B_R V
		}
	}, func() *work { return &work{bf: make([]float64, n*n), xt: make([]float64, r*n)} })
	return x, err
}

// exchangeGradientTerms adds the exchange terms of one spin density (its
// projections x) with factor fs to G (−2 f_s D^s Z_P D^s) and H
// (+f_s M^s). It does not read B.
func (f *Fit) exchangeGradientTerms(ctx context.Context, x *exchangeTerms, fs float64, linvT []float64, g, h []float64) error {
	n, naux, npair := f.n, f.naux, f.npair
	vt, lambda, bo := x.vt, x.lambda, x.bo
	r := len(lambda)
	if r == 0 {
		return nil
	}
	r2 := r * r
	nchunk := (naux + auxPerChunk - 1) / auxPerChunk
	type work struct{ t, gam []float64 }
	newWork := func() *work {
		return &work{t: make([]float64, n*r), gam: make([]float64, n*n)}
	}
	// Zo = L⁻ᵀ Bo (rows P), split by rows.
	zo := make([]float64, naux*r2)
	if err := parallelChunks(ctx, f.threads, nchunk, func(ch int, _ struct{}) {
		p0, p1 := ch*auxPerChunk, min((ch+1)*auxPerChunk, naux)
		kernel.MatMul(linvT[p0*naux:p1*naux], p1-p0, bo, naux, r2, zo[p0*r2:p1*r2])
	}, nil); err != nil {
		return err
	}
	// H += f_s M, M_PQ = Σ_ij λ_i λ_j Zo_P,ij Zo_Q,ij.
	zw := make([]float64, naux*r2)
	for p := 0; p < naux; p++ {
		for i := 0; i < r; i++ {
			for j := 0; j < r; j++ {
				zw[p*r2+i*r+j] = zo[p*r2+i*r+j] * lambda[i] * lambda[j]
			}
		}
	}
	if err := parallelChunks(ctx, f.threads, nchunk, func(ch int, _ struct{}) {
		p0, p1 := ch*auxPerChunk, min((ch+1)*auxPerChunk, naux)
		m := make([]float64, (p1-p0)*naux)
		kernel.DotProducts(zo[p0*r2:p1*r2], p1-p0, zw, naux, r2, m, naux)
		for i, v := range m {
			h[p0*naux+i] += fs * v
		}
	}, nil); err != nil {
		return err
	}
	// G_P −= 2 f_s V (Λ Zo_P Λ) Vᵀ.
	v := make([]float64, n*r) // V, n×r
	for i := 0; i < r; i++ {
		for m := 0; m < n; m++ {
			v[m*r+i] = vt[i*n+m]
		}
	}
	return parallelChunks(ctx, f.threads, nchunk, func(ch int, wk *work) {
		for p := ch * auxPerChunk; p < min((ch+1)*auxPerChunk, naux); p++ {
			w := zw[p*r2 : (p+1)*r2]                   // Λ Zo_P Λ, symmetric
			kernel.DotProducts(v, n, w, r, r, wk.t, r) // T = V W
			lowerProducts(wk.t, v, n, r, wk.gam)       // Γ = T Vᵀ, lower triangle
			row := g[p*npair : (p+1)*npair]
			for mu := 0; mu < n; mu++ {
				base := mu * (mu + 1) / 2
				gr := wk.gam[mu*n : mu*n+mu+1]
				for nu, x := range gr {
					row[base+nu] -= 2 * fs * x
				}
			}
		}
	}, newWork)
}

// inverseTransposed returns (L⁻¹)ᵀ, naux×naux row-major.
func (f *Fit) inverseTransposed(ctx context.Context) ([]float64, error) {
	naux := f.naux
	inv := make([]float64, naux*naux)
	for i := 0; i < naux; i++ {
		inv[i*naux+i] = 1
	}
	if err := solveLower(ctx, f.chol, naux, inv, naux, f.threads); err != nil {
		return nil, err
	}
	out := make([]float64, naux*naux)
	kernel.Transpose(inv, naux, naux, out)
	return out, nil
}

// solveUpperVector returns L⁻ᵀ t for the lower-triangular L (n×n).
func solveUpperVector(l []float64, n int, t []float64) []float64 {
	x := append([]float64(nil), t...)
	for i := n - 1; i >= 0; i-- {
		s := x[i]
		for j := i + 1; j < n; j++ {
			s -= l[j*n+i] * x[j]
		}
		x[i] = s / l[i*n+i]
	}
	return x
}
