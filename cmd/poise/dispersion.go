package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/spf13/cobra"

	"poise/energy/dispersion"
	"poise/energy/molecule"
	"poise/energy/units"
)

// dispersionReport is the JSON form of 'poise dispersion'.
type dispersionReport struct {
	File                   string       `json:"file"`
	Formula                string       `json:"formula"`
	Model                  string       `json:"model"`
	Functional             string       `json:"functional"`
	S6                     float64      `json:"s6"`
	A1                     float64      `json:"a1"`
	S8                     float64      `json:"s8"`
	A2Bohr                 float64      `json:"a2_bohr"`
	EnergyHartree          float64      `json:"dispersion_energy_hartree"`
	EnergyKJPerMol         float64      `json:"dispersion_energy_kj_per_mol"`
	CoordinationNumbers    []float64    `json:"coordination_numbers"`
	C6                     []float64    `json:"c6_hartree_bohr6"`
	GradientHartreePerBohr [][3]float64 `json:"gradient_hartree_per_bohr"`
	RMSHartreePerBohr      float64      `json:"rms_gradient_hartree_per_bohr"`
	MaxHartreePerBohr      float64      `json:"max_gradient_hartree_per_bohr"`
	Version                string       `json:"program_version"`
	Symbols                []string     `json:"symbols"`
	GeometryAngstrom       [][3]float64 `json:"geometry_angstrom"`
}

// dispersionModel names the correction in outputs.
const dispersionModel = "D3(BJ) two-body"

func newDispersionCmd() *cobra.Command {
	var functional string
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "dispersion FILE.xyz --functional NAME",
		Short: "D3(BJ) dispersion correction alone, without SCF",
		Long: "Computes the D3 dispersion correction with Becke–Johnson damping (two-body) for the\n" +
			"molecule in FILE.xyz: its energy, the coordination number and C6 coefficient of each\n" +
			"atom, and (in JSON) its gradient. No SCF is run, so it is quick on large structures.\n" +
			"--functional chooses the damping parameters: " + strings.Join(dispersion.Functionals(), ", ") + ".",
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			names := strings.Join(dispersion.Functionals(), ", ")
			if strings.TrimSpace(functional) == "" {
				return usageErr(fmt.Errorf("give --functional: damping parameters exist for %s", names))
			}
			p, err := dispersion.ParamsFor(functional)
			if err != nil {
				if errors.Is(err, dispersion.ErrNoParams) {
					return usageErr(fmt.Errorf("--functional %q: damping parameters exist for %s", functional, names))
				}
				return err
			}
			mol, err := molecule.ReadXYZFile(args[0])
			if err != nil {
				return usageErr(err)
			}
			res, err := dispersion.ForMolecule(mol, p, true)
			if err != nil {
				return usageErr(fmt.Errorf("%s: %w", args[0], err))
			}
			rep := makeDispersionReport(args[0], mol, p, res)
			out := cmd.OutOrStdout()
			if asJSON {
				enc := json.NewEncoder(out)
				enc.SetIndent("", "  ")
				return enc.Encode(rep)
			}
			return printDispersionReport(out, rep)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&functional, "functional", "", "damping parameters of this functional (required): "+strings.Join(dispersion.Functionals(), ", "))
	fl.BoolVar(&asJSON, "json", false, "print one JSON object instead of tables")
	return cmd
}

func makeDispersionReport(path string, mol *molecule.Molecule, p dispersion.Params, res dispersion.Result) *dispersionReport {
	rep := &dispersionReport{
		File:                   path,
		Formula:                mol.Formula(),
		Model:                  dispersionModel,
		Functional:             p.Functional,
		S6:                     p.S6,
		A1:                     p.A1,
		S8:                     p.S8,
		A2Bohr:                 p.A2Bohr,
		EnergyHartree:          res.EnergyHartree,
		EnergyKJPerMol:         res.EnergyHartree * units.HartreeKJPerMol,
		CoordinationNumbers:    res.CN,
		C6:                     res.C6,
		GradientHartreePerBohr: res.Gradient,
		Version:                version,
		GeometryAngstrom:       mol.PositionsAngstrom(),
	}
	for i := range mol.Atoms {
		s := mol.Atoms[i].Symbol
		if s == "" {
			s = molecule.Symbol(mol.Atoms[i].Z)
		}
		rep.Symbols = append(rep.Symbols, s)
	}
	var ss float64
	for _, v := range res.Gradient {
		for _, c := range v {
			ss += c * c
			rep.MaxHartreePerBohr = math.Max(rep.MaxHartreePerBohr, math.Abs(c))
		}
	}
	if len(res.Gradient) > 0 {
		rep.RMSHartreePerBohr = math.Sqrt(ss / float64(3*len(res.Gradient)))
	}
	return rep
}

func printDispersionReport(w io.Writer, rep *dispersionReport) error {
	fmt.Fprintf(w, "%s  %s dispersion, %s damping (s6 %.4f, a1 %.4f, s8 %.4f, a2 %.4f bohr)\n",
		rep.Formula, rep.Model, rep.Functional, rep.S6, rep.A1, rep.S8, rep.A2Bohr)
	fmt.Fprintf(w, "dispersion energy %.10f Eh  (%.4f kJ/mol)\n\n", rep.EnergyHartree, rep.EnergyKJPerMol)
	rows := make([][]string, len(rep.Symbols))
	for i, sym := range rep.Symbols {
		rows[i] = []string{fmt.Sprint(i + 1), sym, fmt.Sprintf("%.4f", rep.CoordinationNumbers[i]), fmt.Sprintf("%.3f", rep.C6[i])}
	}
	fmt.Fprintln(w, "per atom: coordination number and C6 at that coordination number")
	if err := writeTable(w, []string{"atom", "element", "coordination number", "C6 (Eh·bohr⁶)"}, rows); err != nil {
		return err
	}
	fmt.Fprintf(w, "gradient: RMS %.8f Eh/bohr   largest component %.8f Eh/bohr (per atom with --json)\n",
		rep.RMSHartreePerBohr, rep.MaxHartreePerBohr)
	return nil
}
