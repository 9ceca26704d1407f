package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"time"

	"github.com/spf13/cobra"

	"poise/energy/dft"
	"poise/energy/dispersion"
	"poise/energy/scf"
	"poise/gradient"
)

// gradientReport is the JSON form of a gradient calculation: everything of
// the energy report plus the gradient.
type gradientReport struct {
	*energyReport
	GradientHartreePerBohr [][3]float64 `json:"gradient_hartree_per_bohr"`
	RMSHartreePerBohr      float64      `json:"rms_gradient_hartree_per_bohr"`
	MaxHartreePerBohr      float64      `json:"max_gradient_hartree_per_bohr"`
	Numeric                bool         `json:"numeric"`
	StepBohr               float64      `json:"step_bohr,omitempty"`
	SCFSeconds             float64      `json:"scf_seconds"`
	GradientSeconds        float64      `json:"gradient_seconds"`
}

func newGradientCmd() *cobra.Command {
	var lf levelFlags
	var asJSON, numeric bool
	var step float64
	cmd := &cobra.Command{
		Use:   "gradient FILE.xyz",
		Short: "nuclear gradient of the SCF energy",
		Long: "Computes the self-consistent-field energy of the molecule in FILE.xyz and its gradient\n" +
			"with respect to the nuclear positions (Eh/bohr), analytically or, with --numeric, by\n" +
			"central differences of energies. Level-of-theory flags as for 'poise energy'.",
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if numeric && (step <= 0 || step > 1e-2 || math.IsNaN(step)) {
				return usageErr(fmt.Errorf("--step %g: give a central-difference step in bohr between 0 and 0.01 (default %g)", step, gradient.DefaultStep))
			}
			s, err := lf.prepare(args[0])
			if err != nil {
				return err
			}
			progress := !asJSON && isTerminal(os.Stderr)
			if progress {
				s.opts.Progress = func(it scf.Iteration) {
					fmt.Fprintf(os.Stderr, "\r  SCF iteration %3d  energy %.10f  change %9.2e  gradient %8.2e ", it.Number, it.EnergyHartree, it.Change, it.Gradient)
				}
			}
			t0 := time.Now()
			res, err := runSCF(cmd.Context(), s)
			if progress {
				fmt.Fprint(os.Stderr, "\r\033[K")
			}
			if err != nil {
				return err
			}
			scfTime := time.Since(t0)
			t1 := time.Now()
			if progress && numeric {
				fmt.Fprintf(os.Stderr, "  central differences: %d energies ...", 6*len(s.mol.Atoms))
			}
			g, err := computeGradient(cmd, s, res, numeric, step, lf.threads)
			if progress && numeric {
				fmt.Fprint(os.Stderr, "\r\033[K")
			}
			if err != nil {
				return err
			}
			rep := makeGradientReport(args[0], s, res, g, lf.threads)
			ed, err := s.dispersionEnergy()
			if err != nil {
				return err
			}
			rep.DispersionHartree = ed
			rep.EnergyHartree += ed
			rep.Numeric = numeric
			if numeric {
				rep.StepBohr = step
			}
			rep.SCFSeconds = scfTime.Seconds()
			rep.GradientSeconds = time.Since(t1).Seconds()
			out := cmd.OutOrStdout()
			if asJSON {
				enc := json.NewEncoder(out)
				enc.SetIndent("", "  ")
				return enc.Encode(rep)
			}
			return printGradientReport(out, rep)
		},
	}
	lf.register(cmd)
	fl := cmd.Flags()
	fl.BoolVar(&asJSON, "json", false, "print one JSON object instead of tables")
	fl.BoolVar(&numeric, "numeric", false, "central differences of energies instead of the analytic gradient")
	fl.Float64Var(&step, "step", gradient.DefaultStep, "central-difference step in bohr (with --numeric)")
	return cmd
}

// surfaceConfig returns the level of theory of s as the configuration of
// a potential-energy surface (gradient.SCFSurface), with the DFT grid frame
// of the SCF already run, if any, so that every later geometry uses it.
func (s *setup) surfaceConfig(numeric bool, step float64) gradient.Config {
	opts := s.opts
	opts.XC, opts.XCStart = nil, nil
	opts.Guess = nil
	opts.Progress = nil
	cfg := gradient.Config{
		Basis:      s.set,
		Convention: s.conv,
		Method:     s.fn,
		GridLevel:  s.gridLevel,
		SCF:        opts,
		Numeric:    numeric,
		Step:       step,
		Dispersion: s.dispersion,
		Fit:        s.fit,
	}
	if s.grid != nil {
		fr := s.grid.Frame
		cfg.Frame = &fr
	}
	return cfg
}

// computeGradient returns the gradient at the converged SCF res.
func computeGradient(cmd *cobra.Command, s *setup, res *scf.Result, numeric bool, step float64, threads int) ([][3]float64, error) {
	ctx := cmd.Context()
	nat := len(s.mol.Atoms)
	if !numeric {
		pot, _ := s.opts.XC.(*dft.Potential)
		c, err := gradient.Analytic(ctx, s.mol, s.shells, res, pot, threads)
		if err != nil {
			return nil, err
		}
		if s.dispersion != nil {
			d, err := dispersion.ForMolecule(s.mol, *s.dispersion, true)
			if err != nil {
				return nil, usageErr(err)
			}
			for a := range c.Total {
				for k := 0; k < 3; k++ {
					c.Total[a][k] += d.Gradient[a][k]
				}
			}
		}
		return c.Total, nil
	}
	cfg := s.surfaceConfig(false, step)
	surf, err := gradient.NewSCFSurface(s.mol, cfg)
	if err != nil {
		return nil, err
	}
	if err := surf.SetWarmStart(res.State()); err != nil {
		return nil, err
	}
	flat := make([]float64, 3*nat)
	if err := gradient.Numeric(ctx, surf, gradient.Coordinates(s.mol), step, threads, flat); err != nil {
		if errors.Is(err, scf.ErrNotConverged) {
			return nil, convergeErr(fmt.Errorf("%w\n  try: --max-iterations %d, or a larger --step", err, 2*s.opts.MaxIterations))
		}
		return nil, err
	}
	g := make([][3]float64, nat)
	for a := range g {
		copy(g[a][:], flat[3*a:3*a+3])
	}
	return g, nil
}

func makeGradientReport(path string, s *setup, res *scf.Result, g [][3]float64, threads int) *gradientReport {
	rep := &gradientReport{energyReport: makeEnergyReport(path, s, res, threads), GradientHartreePerBohr: g}
	var ss float64
	for _, v := range g {
		for _, c := range v {
			ss += c * c
			rep.MaxHartreePerBohr = math.Max(rep.MaxHartreePerBohr, math.Abs(c))
		}
	}
	if len(g) > 0 {
		rep.RMSHartreePerBohr = math.Sqrt(ss / float64(3*len(g)))
	}
	return rep
}

func printGradientReport(w io.Writer, rep *gradientReport) error {
	kind := "restricted"
	if rep.Unrestricted {
		kind = "unrestricted"
	}
	how := "analytic gradient"
	if rep.Numeric {
		how = fmt.Sprintf("central differences, step %g bohr", rep.StepBohr)
	}
	fmt.Fprintf(w, "%s  %s (%s, %s functions)  charge %d  multiplicity %d\n",
		rep.Formula, rep.LevelOfTheory, kind, rep.Functions, rep.Charge, rep.Multiplicity)
	fmt.Fprintf(w, "total energy %.10f Eh (SCF converged in %d iterations, %.2f s); %s (%.2f s)\n\n",
		rep.EnergyHartree, rep.Iterations, rep.SCFSeconds, how, rep.GradientSeconds)
	rows := make([][]string, len(rep.Symbols))
	for i, sym := range rep.Symbols {
		g := rep.GradientHartreePerBohr[i]
		rows[i] = []string{fmt.Sprint(i + 1), sym, fixed8(g[0]), fixed8(g[1]), fixed8(g[2])}
	}
	fmt.Fprintln(w, "energy gradient dE/dR (Eh/bohr)")
	if err := writeTable(w, []string{"atom", "element", "x", "y", "z"}, rows); err != nil {
		return err
	}
	fmt.Fprintf(w, "RMS %.8f Eh/bohr   largest component %.8f Eh/bohr\n", rep.RMSHartreePerBohr, rep.MaxHartreePerBohr)
	return nil
}

// fixed8 prints a gradient component with eight decimals and a sign,
// without a minus sign on values that round to zero.
func fixed8(v float64) string {
	if math.Abs(v) < 5e-9 {
		v = 0
	}
	return fmt.Sprintf("%+.8f", v)
}
