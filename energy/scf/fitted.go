package scf

import (
	"context"
	"fmt"

	"poise/energy/buffer"
	"poise/energy/fit"
	"poise/energy/integral"
)

// fockBuilder forms the Coulomb matrix of the total density and the
// exchange matrix of each density: from four-centre integrals (jkBuilder)
// or density fitted (fittedBuilder).
type fockBuilder interface {
	// build forms J and K of the densities of one SCF iteration (possibly
	// incrementally from the previous build).
	build(ctx context.Context, dens [][]float64, wantK bool) (J []float64, K [][]float64, err error)
	// buildFrom forms J and K without reference to earlier builds.
	buildFrom(ctx context.Context, dens [][]float64, wantK bool) (J []float64, K [][]float64, err error)
	// InCore reports whether every four-centre integral is kept in memory.
	InCore() bool
	// StoredFraction is the fraction of the four-centre integrals kept.
	StoredFraction() float64
}

// fittedBuilder is a fockBuilder by density fitting (package fit).
type fittedBuilder struct{ f *fit.Fit }

// newFittedBuilder fits the orbital basis b in the auxiliary basis aux,
// its three-centre array lent by buffers (nil: allocated).
func newFittedBuilder(ctx context.Context, b, aux *integral.Basis, threads int, buffers *buffer.Pool) (*fittedBuilder, error) {
	f, err := fit.NewPooled(ctx, b, aux, threads, buffers)
	if err != nil {
		return nil, fmt.Errorf("density fitting: %w", err)
	}
	return &fittedBuilder{f: f}, nil
}

func (fb *fittedBuilder) build(ctx context.Context, dens [][]float64, wantK bool) ([]float64, [][]float64, error) {
	return fb.buildFrom(ctx, dens, wantK)
}

func (fb *fittedBuilder) buildFrom(ctx context.Context, dens [][]float64, wantK bool) ([]float64, [][]float64, error) {
	dtot := dens[0]
	if len(dens) > 1 {
		dtot = make([]float64, len(dens[0]))
		for _, d := range dens {
			for i, v := range d {
				dtot[i] += v
			}
		}
	}
	J, err := fb.f.Coulomb(ctx, dtot)
	if err != nil {
		return nil, nil, err
	}
	if !wantK {
		return J, nil, nil
	}
	K := make([][]float64, len(dens))
	for s, d := range dens {
		if K[s], err = fb.f.Exchange(ctx, d); err != nil {
			return nil, nil, err
		}
	}
	return J, K, nil
}

// InCore is false: no four-centre integral is kept (or needed).
func (fb *fittedBuilder) InCore() bool { return false }

// StoredFraction is 0: no four-centre integral is kept.
func (fb *fittedBuilder) StoredFraction() float64 { return 0 }
