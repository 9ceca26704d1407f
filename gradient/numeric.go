package gradient

import (
	"context"
	"fmt"
	"math"
	"sync"
)

// DefaultStep is the central-difference step, in bohr, of Numeric. With
// SCF energies converged far below 1e-10 Eh the rounding error of the
// difference quotient is below 1e-9 Eh/bohr, and the truncation error
// h²/6·∂³E/∂x³ is about 4e-8·|∂³E/∂x³|, some 1e-7 Eh/bohr for stiff
// bonds (common practice: steps of 1e-4 to 1e-3 bohr).
const DefaultStep = 5e-4

// Numeric computes the gradient of the energy of s at coords (3N, bohr) by
// central differences, g_i = (E(x + h e_i) − E(x − h e_i)) / 2h, writing
// it into grad (3N, Eh/bohr). step ≤ 0 means DefaultStep.
//
// The 6N displaced energies are evaluated on up to threads goroutines
// (threads ≤ 0: 1), each asking the surface for threads/workers threads,
// and with Request.KeepWarmStart so that every displaced point starts from
// the same warm-start state: the result does not depend on the order or
// the number of threads.
func Numeric(ctx context.Context, s Surface, coords []float64, step float64, threads int, grad []float64) error {
	n := 3 * s.NumAtoms()
	if len(coords) != n {
		return fmt.Errorf("gradient: %d coordinates for %d atoms", len(coords), n/3)
	}
	if len(grad) != n {
		return fmt.Errorf("gradient: gradient buffer has %d elements, want %d", len(grad), n)
	}
	if step <= 0 {
		step = DefaultStep
	}
	if step > 1e-2 || math.IsNaN(step) {
		return fmt.Errorf("gradient: central-difference step %g bohr is too large", step)
	}
	if threads < 1 {
		threads = 1
	}
	jobs := 2 * n
	workers := min(threads, jobs)
	share := max(threads/workers, 1)
	energies := make([]float64, jobs) // 2i: +h, 2i+1: −h
	var mu sync.Mutex
	var firstErr error
	next := 0
	var wg sync.WaitGroup
	cctx, cancel := context.WithCancel(ctx)
	defer cancel()
	for t := 0; t < workers; t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			x := make([]float64, n)
			var pt Point
			for cctx.Err() == nil {
				mu.Lock()
				j := next
				next++
				mu.Unlock()
				if j >= jobs {
					return
				}
				copy(x, coords)
				i := j / 2
				if j%2 == 0 {
					x[i] += step
				} else {
					x[i] -= step
				}
				err := s.Evaluate(cctx, x, Request{Threads: share, KeepWarmStart: true}, &pt)
				if err != nil {
					mu.Lock()
					if firstErr == nil {
						firstErr = fmt.Errorf("gradient: displaced point (coordinate %d %+g bohr): %w", i+1, step*float64(1-2*(j%2)), err)
					}
					mu.Unlock()
					cancel()
					return
				}
				energies[j] = pt.EnergyHartree
			}
		}()
	}
	wg.Wait()
	if firstErr != nil {
		return firstErr
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	for i := 0; i < n; i++ {
		grad[i] = (energies[2*i] - energies[2*i+1]) / (2 * step)
	}
	return nil
}
