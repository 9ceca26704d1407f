package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"poise/energy/basis"
	"poise/energy/scf"
	"poise/energy/units"
)

// energyReport is the JSON form of an energy calculation.
type energyReport struct {
	File                     string     `json:"file"`
	Formula                  string     `json:"formula"`
	Method                   string     `json:"method"`
	Basis                    string     `json:"basis"`
	Fit                      string     `json:"fit"`
	Functions                string     `json:"angular_functions"`
	Charge                   int        `json:"charge"`
	Multiplicity             int        `json:"multiplicity"`
	Unrestricted             bool       `json:"unrestricted"`
	EnergyHartree            float64    `json:"energy_hartree"`
	Converged                bool       `json:"converged"`
	Iterations               int        `json:"iterations"`
	NuclearRepulsionHartree  float64    `json:"nuclear_repulsion_hartree"`
	OneElectronHartree       float64    `json:"one_electron_energy_hartree"`
	TwoElectronHartree       float64    `json:"two_electron_energy_hartree"`
	DispersionHartree        float64    `json:"dispersion_energy_hartree"`
	LevelOfTheory            string     `json:"level_of_theory"`
	XCHartree                float64    `json:"exchange_correlation_hartree,omitempty"`
	IntegratedElectrons      float64    `json:"integrated_electrons,omitempty"`
	GridLevel                int        `json:"grid_level,omitempty"`
	GridPoints               int        `json:"grid_points,omitempty"`
	SSquared                 float64    `json:"s_squared"`
	DipoleDebye              [3]float64 `json:"dipole_debye"`
	DipoleTotalDebye         float64    `json:"dipole_total_debye"`
	MullikenCharges          []float64  `json:"mulliken_charges"`
	OrbitalEnergiesHartree   []float64  `json:"orbital_energies_hartree"`
	OrbitalEnergiesBetaHartr []float64  `json:"orbital_energies_beta_hartree,omitempty"`
	Occupied                 int        `json:"occupied_orbitals"`
	OccupiedBeta             int        `json:"occupied_orbitals_beta,omitempty"`
	BasisFunctions           int        `json:"basis_functions"`
	DroppedFunctions         int        `json:"dropped_functions"`
	IntegralsInMemory        bool       `json:"integrals_in_memory"`
	IntegralsInMemoryPercent float64    `json:"integrals_in_memory_percent"`
	// AuxiliaryFunctions is the size of the fitting basis (--fit), 0 for
	// exact integrals.
	AuxiliaryFunctions int          `json:"auxiliary_functions,omitempty"`
	Threads            int          `json:"threads"`
	WallSeconds        float64      `json:"wall_seconds"`
	Version            string       `json:"program_version"`
	Symbols            []string     `json:"symbols"`
	GeometryAngstrom   [][3]float64 `json:"geometry_angstrom"`
	// Stability is the wavefunction stability check (--stability).
	Stability *stabilityReport `json:"stability,omitempty"`
	// SCFNotes lists the convergence fallbacks and stability steps taken.
	SCFNotes []string `json:"scf_notes,omitempty"`
}

// stabilityReport is the outcome of the stability check of the final
// wavefunction, with the instabilities followed to reach it.
type stabilityReport struct {
	Kind                    string           `json:"kind"`
	LowestEigenvalueHartree float64          `json:"lowest_eigenvalue_hartree"`
	Stable                  bool             `json:"stable"`
	Followed                []followedReport `json:"followed,omitempty"`
	// Follow reports whether --stability follow was in force (so that an
	// instability left over is one following could not remove).
	Follow bool `json:"follow"`
}

// followedReport is an unstable solution that was left along its
// instability.
type followedReport struct {
	Kind                    string  `json:"kind"`
	EnergyHartree           float64 `json:"energy_hartree"`
	LowestEigenvalueHartree float64 `json:"lowest_eigenvalue_hartree"`
}

func newEnergyCmd() *cobra.Command {
	var lf levelFlags
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "energy FILE.xyz",
		Short: "self-consistent-field energy of a molecule",
		Long: "Computes the self-consistent-field energy of the molecule in FILE.xyz (Hartree–Fock or\n" +
			"Kohn–Sham DFT; default B3LYP/6-31G*)\n" +
			"and prints its parts, the dipole moment, Mulliken charges and orbital energies.",
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			s, err := lf.prepare(args[0])
			if err != nil {
				return err
			}
			if !asJSON && isTerminal(os.Stderr) {
				s.opts.Progress = func(it scf.Iteration) {
					fmt.Fprintf(os.Stderr, "\r  SCF iteration %3d  energy %.10f  change %9.2e  gradient %8.2e ", it.Number, it.EnergyHartree, it.Change, it.Gradient)
				}
			}
			res, runErr := runSCF(cmd.Context(), s)
			if s.opts.Progress != nil {
				fmt.Fprint(os.Stderr, "\r\033[K")
			}
			if res == nil {
				return runErr
			}
			rep := makeEnergyReport(args[0], s, res, lf.threads)
			ed, err := s.dispersionEnergy()
			if err != nil {
				return err
			}
			rep.DispersionHartree = ed
			rep.EnergyHartree += ed
			out := cmd.OutOrStdout()
			if asJSON {
				enc := json.NewEncoder(out)
				enc.SetIndent("", "  ")
				if err := enc.Encode(rep); err != nil {
					return err
				}
			} else if err := printEnergyReport(out, rep, res); err != nil {
				return err
			}
			return runErr
		},
	}
	lf.register(cmd)
	cmd.Flags().BoolVar(&asJSON, "json", false, "print one JSON object instead of tables")
	return cmd
}

func makeEnergyReport(path string, s *setup, res *scf.Result, threads int) *energyReport {
	conv := "cartesian"
	if len(s.shells) > 0 {
		for _, sh := range s.shells {
			if sh.L >= 2 {
				if sh.Pure {
					conv = "spherical"
				}
				break
			}
		}
	}
	rep := &energyReport{
		File:                     path,
		Formula:                  s.mol.Formula(),
		Method:                   s.method,
		LevelOfTheory:            s.label(),
		Basis:                    s.set.Name,
		Fit:                      s.fitName(),
		Functions:                conv,
		Charge:                   s.mol.Charge,
		Multiplicity:             s.mol.Multiplicity,
		Unrestricted:             res.Unrestricted,
		EnergyHartree:            res.EnergyHartree,
		Converged:                res.Converged,
		Iterations:               res.Iterations,
		NuclearRepulsionHartree:  res.NuclearRepulsion,
		OneElectronHartree:       res.OneElectronEnergy,
		TwoElectronHartree:       res.TwoElectronEnergy,
		SSquared:                 res.S2,
		MullikenCharges:          res.MullikenCharges,
		OrbitalEnergiesHartree:   res.OrbitalEnergies[0],
		Occupied:                 res.NumAlpha,
		BasisFunctions:           res.NBF,
		DroppedFunctions:         res.NumDropped,
		IntegralsInMemory:        res.InCore,
		IntegralsInMemoryPercent: 100 * res.StoredIntegralFraction,
		AuxiliaryFunctions:       auxFunctions(res.AuxShells),
		Threads:                  threads,
		WallSeconds:              res.Wall.Seconds(),
		Version:                  version,
		GeometryAngstrom:         s.mol.PositionsAngstrom(),
	}
	if s.grid != nil {
		rep.XCHartree = res.XCEnergy
		rep.IntegratedElectrons = res.IntegratedElectrons
		rep.GridLevel = s.gridLevel
		rep.GridPoints = s.grid.NumPoints()
	}
	for k := 0; k < 3; k++ {
		rep.DipoleDebye[k] = res.DipoleAU[k] * units.AUDebye
	}
	rep.DipoleTotalDebye = math.Sqrt(rep.DipoleDebye[0]*rep.DipoleDebye[0] + rep.DipoleDebye[1]*rep.DipoleDebye[1] + rep.DipoleDebye[2]*rep.DipoleDebye[2])
	if res.Unrestricted {
		rep.OrbitalEnergiesBetaHartr = res.OrbitalEnergies[1]
		rep.OccupiedBeta = res.NumBeta
	}
	for _, a := range s.mol.Atoms {
		rep.Symbols = append(rep.Symbols, a.Symbol)
	}
	rep.SCFNotes = res.Fallbacks
	if st := res.Stability; st != nil {
		sr := &stabilityReport{Kind: st.Kind, LowestEigenvalueHartree: st.LowestEigenvalueHartree, Stable: st.Stable,
			Follow: s.stability == scf.StabilityFollow}
		for _, f := range res.Followed {
			sr.Followed = append(sr.Followed, followedReport{Kind: f.Kind, EnergyHartree: f.EnergyHartree, LowestEigenvalueHartree: f.LowestEigenvalueHartree})
		}
		rep.Stability = sr
	}
	return rep
}

func printEnergyReport(w io.Writer, rep *energyReport, res *scf.Result) error {
	kind := "restricted"
	if rep.Unrestricted {
		kind = "unrestricted"
	}
	fmt.Fprintf(w, "%s  %s (%s, %s functions)  charge %d  multiplicity %d\n",
		rep.Formula, rep.LevelOfTheory, kind, rep.Functions, rep.Charge, rep.Multiplicity)
	storage := "integral-direct"
	switch {
	case rep.AuxiliaryFunctions > 0:
		storage = fmt.Sprintf("density fitted with %d auxiliary functions", rep.AuxiliaryFunctions)
	case rep.IntegralsInMemory:
		storage = "integrals in memory"
	case rep.IntegralsInMemoryPercent > 0:
		storage = fmt.Sprintf("semi-direct (%.0f%% of the integrals in memory)", rep.IntegralsInMemoryPercent)
	}
	fmt.Fprintf(w, "%d basis functions", rep.BasisFunctions)
	if rep.DroppedFunctions > 0 {
		fmt.Fprintf(w, " (%d dropped for near-linear dependence)", rep.DroppedFunctions)
	}
	fmt.Fprintf(w, ", %s, %d threads\n\n", storage, rep.Threads)

	status := fmt.Sprintf("converged in %d iterations", rep.Iterations)
	if !rep.Converged {
		status = fmt.Sprintf("NOT converged after %d iterations", rep.Iterations)
	}
	rows := [][]string{
		{"total energy", fmt.Sprintf("%.10f", rep.EnergyHartree), fmt.Sprintf("%.6f", rep.EnergyHartree*units.HartreeEV)},
		{"nuclear repulsion", fmt.Sprintf("%.10f", rep.NuclearRepulsionHartree), fmt.Sprintf("%.6f", rep.NuclearRepulsionHartree*units.HartreeEV)},
		{"one-electron", fmt.Sprintf("%.10f", rep.OneElectronHartree), fmt.Sprintf("%.6f", rep.OneElectronHartree*units.HartreeEV)},
		{"two-electron", fmt.Sprintf("%.10f", rep.TwoElectronHartree), fmt.Sprintf("%.6f", rep.TwoElectronHartree*units.HartreeEV)},
	}
	if rep.LevelOfTheory != "" && strings.Contains(rep.LevelOfTheory, "-D3(BJ)") {
		rows = append(rows, []string{"dispersion D3(BJ)", fmt.Sprintf("%.10f", rep.DispersionHartree), fmt.Sprintf("%.6f", rep.DispersionHartree*units.HartreeEV)})
	}
	if rep.GridPoints > 0 {
		rows = append(rows, []string{"exchange–correlation", fmt.Sprintf("%.10f", rep.XCHartree), fmt.Sprintf("%.6f", rep.XCHartree*units.HartreeEV)})
	}
	if err := writeTable(w, []string{"energy", "Eh", "eV"}, rows); err != nil {
		return err
	}
	fmt.Fprintf(w, "SCF %s", status)
	if rep.Unrestricted {
		fmt.Fprintf(w, "; <S^2> = %.4f (exact %.4f)", rep.SSquared, exactS2(rep.Multiplicity))
	}
	fmt.Fprintf(w, "; wall time %.2f s\n", rep.WallSeconds)
	if rep.GridPoints > 0 {
		fmt.Fprintf(w, "grid level %d: %d points; integrated electrons %.6f\n", rep.GridLevel, rep.GridPoints, rep.IntegratedElectrons)
	}
	if st := rep.Stability; st != nil {
		for _, f := range st.Followed {
			fmt.Fprintf(w, "stability: %s lowest eigenvalue %.6f Eh at %.10f Eh: unstable, followed\n", f.Kind, f.LowestEigenvalueHartree, f.EnergyHartree)
		}
		verdict := "stable"
		switch {
		case st.Stable:
		case st.Follow:
			verdict = "UNSTABLE, left so after following (the SCF notes above say why)"
		default:
			verdict = "UNSTABLE (rerun with --stability follow)"
		}
		fmt.Fprintf(w, "stability: %s lowest eigenvalue %.6f Eh: %s\n", st.Kind, st.LowestEigenvalueHartree, verdict)
	}
	fmt.Fprintln(w)

	fmt.Fprintf(w, "dipole moment (debye, about the centre of mass): x %.4f  y %.4f  z %.4f  total %.4f\n\n",
		rep.DipoleDebye[0], rep.DipoleDebye[1], rep.DipoleDebye[2], rep.DipoleTotalDebye)

	crow := make([][]string, len(rep.Symbols))
	for i, sym := range rep.Symbols {
		crow[i] = []string{fmt.Sprint(i + 1), sym, fmt.Sprintf("%+.4f", rep.MullikenCharges[i])}
	}
	if err := writeTable(w, []string{"atom", "element", "Mulliken charge"}, crow); err != nil {
		return err
	}
	fmt.Fprintln(w)
	return printOrbitals(w, res)
}

// exactS2 is S(S+1) for a multiplicity 2S+1.
func exactS2(mult int) float64 {
	s := 0.5 * float64(mult-1)
	return s * (s + 1)
}

// printOrbitals lists the occupied orbitals and a few virtual ones, HOMO and
// LUMO marked.
func printOrbitals(w io.Writer, res *scf.Result) error {
	const virtuals = 5
	spins := []string{"orbital energies"}
	occ := []int{res.NumAlpha}
	if res.Unrestricted {
		spins = []string{"alpha orbital energies", "beta orbital energies"}
		occ = []int{res.NumAlpha, res.NumBeta}
	}
	for sp, title := range spins {
		e := res.OrbitalEnergies[sp]
		last := occ[sp] + virtuals
		if last > len(e) {
			last = len(e)
		}
		rows := make([][]string, 0, last)
		for i := 0; i < last; i++ {
			mark := ""
			switch {
			case i == occ[sp]-1:
				mark = "HOMO"
			case i == occ[sp]:
				mark = "LUMO"
			}
			o := "occupied"
			if i >= occ[sp] {
				o = "virtual"
			}
			rows = append(rows, []string{fmt.Sprint(i + 1), o, fmt.Sprintf("%.6f", e[i]), fmt.Sprintf("%.4f", e[i]*units.HartreeEV), mark})
		}
		fmt.Fprintln(w, title)
		if err := writeTable(w, []string{"orbital", "", "Eh", "eV", ""}, rows); err != nil {
			return err
		}
	}
	return nil
}

// isTerminal reports whether f is an interactive terminal (progress is shown
// only there).
func isTerminal(f *os.File) bool {
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// exactArgs is cobra.ExactArgs with a usage-error exit status.
func exactArgs(n int) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if err := cobra.ExactArgs(n)(cmd, args); err != nil {
			return usageErr(fmt.Errorf("%w (usage: poise %s)", err, cmd.Use))
		}
		return nil
	}
}

// auxFunctions is the number of functions of the auxiliary shells.
func auxFunctions(aux []basis.Shell) int {
	_, n := basis.Offsets(aux)
	return n
}
