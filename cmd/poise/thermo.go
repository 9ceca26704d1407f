package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
	"github.com/spf13/cobra"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	_ "gonum.org/v1/plot/vg/vgimg" // registers png
	_ "gonum.org/v1/plot/vg/vgsvg" // registers svg

	"poise/energy/molecule"
	"poise/energy/units"
	"poise/thermo"
	"poise/thermo/pointgroup"
)

// thermoFlags are the options of poise thermo.
type thermoFlags struct {
	xyz            string
	frequencies    string
	multiplicity   int
	levels         string
	energy         float64
	temperature    float64
	temperatures   string
	pressureBar    float64
	standardState  string
	lowModes       string
	lowModeCutoff  float64
	toleranceAng   float64
	symmetryNumber int
	symmetrize     bool
	plotFile       string
	asJSON         bool
}

func newThermoCmd() *cobra.Command {
	var f thermoFlags
	cmd := &cobra.Command{
		Use:   "thermo [MODES.json]",
		Short: "ideal-gas thermochemistry and point group",
		Long: `Computes ideal-gas thermochemistry (rigid rotor, harmonic oscillator) of a molecule:
point group and symmetry number, moments of inertia and rotational constants,
zero-point energy, enthalpy, entropy, heat capacity and Gibbs energy.

Input is either a modes file written by 'poise modes' (keys symbols, geometry_angstrom,
frequencies_cm1 and optionally masses_u, multiplicity, energy_hartree), or an XYZ file
with the vibrational wavenumbers given by hand:

  poise thermo water.modes.json
  poise thermo --xyz water.xyz --frequencies 3657,1595,3756

Give all 3N-6 (3N-5 for linear molecules) wavenumbers, degenerate modes once per
component; imaginary modes as negative numbers are left out with a warning.
Energies are per molecule, in hartree relative to the electronic energy E_el
(add them to E_el; with --energy or energy_hartree the sums are printed too).
The rotational partition function is the classical high-temperature one.

--standard-state 1bar (default), 1atm, or 1M: the 1 mol/L standard state of
solution chemistry adds RT ln(c°RT/p°) to G (7.96 kJ/mol at 298.15 K from 1 bar).
--low-modes treats soft modes quasi-harmonically: entropy interpolated toward a free
rotor (Grimme 2012), energy damped toward RT/2 (Li, Head-Gordon et al. 2015); give
--low-modes alone for both, or --low-modes=entropy or --low-modes=enthalpy.
--temperatures 200:1000:100 adds a table row per temperature; --plot FILE.svg
(or .png) draws H, G, S and Cp over that range.`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runThermo(cmd, args, &f)
		},
	}
	fl := cmd.Flags()
	fl.StringVar(&f.xyz, "xyz", "", "XYZ file of the molecule (instead of a modes file)")
	fl.StringVar(&f.frequencies, "frequencies", "", "vibrational wavenumbers in cm⁻¹, comma-separated (with --xyz)")
	fl.IntVar(&f.multiplicity, "multiplicity", 1, "spin multiplicity 2S+1 (electronic degeneracy)")
	fl.StringVar(&f.levels, "electronic-levels", "", "electronic levels WAVENUMBER:DEGENERACY, e.g. 0:2,119.8:2 for NO (replaces the multiplicity)")
	fl.Float64Var(&f.energy, "energy", 0, "electronic energy in hartree, for absolute H and G")
	fl.Float64Var(&f.temperature, "temperature", thermo.DefaultTemperatureK, "temperature in K")
	fl.StringVar(&f.temperatures, "temperatures", "", "temperature scan FROM:TO:STEP in K (or a comma list)")
	fl.Float64Var(&f.pressureBar, "pressure", 1, "pressure in bar")
	fl.StringVar(&f.standardState, "standard-state", "1bar", "standard state: 1bar, 1atm or 1M")
	fl.StringVar(&f.lowModes, "low-modes", "off", "quasi-harmonic low modes: both, entropy, enthalpy or off")
	fl.Lookup("low-modes").NoOptDefVal = "both"
	fl.Float64Var(&f.lowModeCutoff, "low-mode-cutoff", thermo.GrimmeCutoffCm1, "ω0 of the low-mode damping, cm⁻¹")
	fl.Float64Var(&f.toleranceAng, "symmetry-tolerance", pointgroup.DefaultToleranceBohr*units.BohrAngstrom, "point-group distance tolerance in Å")
	fl.IntVar(&f.symmetryNumber, "symmetry-number", 0, "rotational symmetry number (default: from the point group)")
	fl.BoolVar(&f.symmetrize, "symmetrize", false, "make the geometry exactly symmetric before computing moments")
	fl.StringVar(&f.plotFile, "plot", "", "write a plot of the temperature scan to FILE (.svg or .png)")
	fl.BoolVar(&f.asJSON, "json", false, "print one JSON object instead of tables")
	return cmd
}

// thermoInput collects the molecule from a modes file or an XYZ file.
func thermoInput(cmd *cobra.Command, args []string, f *thermoFlags) (thermo.Input, string, string, error) {
	var in thermo.Input
	changed := cmd.Flags().Changed
	mol := &molecule.Molecule{}
	var source string
	switch {
	case len(args) == 1 && f.xyz != "":
		return in, "", "", usageErr(errors.New("give either a modes file or --xyz, not both"))
	case len(args) == 1:
		if changed("frequencies") {
			return in, "", "", usageErr(errors.New("--frequencies goes with --xyz; a modes file has its own frequencies_cm1"))
		}
		source = args[0]
		m, err := thermo.ReadModesFile(args[0])
		if err != nil {
			return in, "", "", usageErr(err)
		}
		for i, s := range m.Symbols {
			z, ok := molecule.ElementBySymbol(s)
			if !ok {
				return in, "", "", usageErr(fmt.Errorf("%s: symbols[%d] = %q is not an element poise supports (H–Kr)", args[0], i, s))
			}
			a := molecule.Atom{Z: z, Symbol: molecule.Symbol(z), Mass: molecule.MostAbundantMass(z)}
			if m.MassesU != nil {
				a.Mass = m.MassesU[i]
			}
			for k := 0; k < 3; k++ {
				a.Position[k] = m.GeometryAngstrom[i][k] * units.AngstromBohr
			}
			mol.Atoms = append(mol.Atoms, a)
		}
		in.FrequenciesCm1 = m.FrequenciesCm1
		in.Multiplicity = m.Multiplicity
		if m.EnergyHartree != nil {
			in.EnergyHartree, in.HasEnergy = *m.EnergyHartree, true
		}
	case f.xyz != "":
		source = f.xyz
		m, err := molecule.ReadXYZFile(f.xyz)
		if err != nil {
			return in, "", "", usageErr(err)
		}
		mol = m
		if !changed("frequencies") && len(mol.Atoms) > 1 {
			return in, "", "", usageErr(errors.New("--xyz needs --frequencies (the 3N-6 or 3N-5 vibrational wavenumbers in cm⁻¹, comma-separated)"))
		}
		if strings.TrimSpace(f.frequencies) != "" {
			fr, err := parseFloatList(f.frequencies, "--frequencies")
			if err != nil {
				return in, "", "", usageErr(err)
			}
			in.FrequenciesCm1 = fr
		}
	default:
		return in, "", "", usageErr(errors.New("give a modes file (poise thermo MODES.json) or --xyz FILE --frequencies LIST"))
	}
	for _, a := range mol.Atoms {
		in.Atoms = append(in.Atoms, pointgroup.Atom{Label: a.Symbol, Mass: a.Mass, Position: a.Position})
	}
	if changed("multiplicity") || in.Multiplicity == 0 {
		in.Multiplicity = f.multiplicity
	}
	if in.Multiplicity < 1 {
		return in, "", "", usageErr(fmt.Errorf("--multiplicity %d: it must be 2S+1 ≥ 1", in.Multiplicity))
	}
	if f.levels != "" {
		lv, err := thermo.ParseLevels(f.levels)
		if err != nil {
			return in, "", "", usageErr(fmt.Errorf("--electronic-levels: %w", err))
		}
		in.ElectronicLevels = lv
	}
	if changed("energy") {
		if math.IsNaN(f.energy) || math.IsInf(f.energy, 0) {
			return in, "", "", usageErr(errors.New("--energy must be a finite number of hartree"))
		}
		in.EnergyHartree, in.HasEnergy = f.energy, true
	}
	return in, source, mol.Formula(), nil
}

// parseFloatList reads "1,2, 3" (spaces allowed).
func parseFloatList(s, flag string) ([]float64, error) {
	var out []float64
	for _, field := range strings.Split(s, ",") {
		field = strings.TrimSpace(field)
		v, err := strconv.ParseFloat(field, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s: %q is not a number", flag, field)
		}
		out = append(out, v)
	}
	return out, nil
}

// parseTemperatures reads FROM:TO:STEP (inclusive) or a comma list.
func parseTemperatures(s string) ([]float64, error) {
	const maxRows = 10000
	if strings.Contains(s, ":") {
		parts := strings.Split(s, ":")
		if len(parts) != 3 {
			return nil, fmt.Errorf("--temperatures %q: want FROM:TO:STEP, as in 200:1000:100", s)
		}
		v, err := parseFloatList(strings.Join(parts, ","), "--temperatures")
		if err != nil {
			return nil, err
		}
		from, to, step := v[0], v[1], v[2]
		if !(from > 0) || to < from || !(step > 0) {
			return nil, fmt.Errorf("--temperatures %q: want 0 < FROM ≤ TO and STEP > 0", s)
		}
		n := int(math.Floor((to-from)/step+1e-9)) + 1
		if n > maxRows {
			return nil, fmt.Errorf("--temperatures %q gives %d temperatures; at most %d", s, n, maxRows)
		}
		out := make([]float64, n)
		for i := range out {
			out[i] = from + float64(i)*step
		}
		return out, nil
	}
	v, err := parseFloatList(s, "--temperatures")
	if err != nil {
		return nil, err
	}
	if len(v) > maxRows {
		return nil, fmt.Errorf("--temperatures: at most %d temperatures", maxRows)
	}
	for _, t := range v {
		if !(t > 0) {
			return nil, fmt.Errorf("--temperatures: %g K is not a positive temperature", t)
		}
	}
	return v, nil
}

// thermoConditions turns the temperature and pressure flags into conditions.
func thermoConditions(cmd *cobra.Command, f *thermoFlags) (thermo.Conditions, string, error) {
	c := thermo.Conditions{TemperatureK: f.temperature, PressurePa: f.pressureBar * units.StandardPressurePa}
	if !(f.temperature > 0) || math.IsInf(f.temperature, 0) {
		return c, "", usageErr(fmt.Errorf("--temperature %g: give a positive temperature in K", f.temperature))
	}
	if !(f.pressureBar > 0) || math.IsInf(f.pressureBar, 0) {
		return c, "", usageErr(fmt.Errorf("--pressure %g: give a positive pressure in bar", f.pressureBar))
	}
	state := strings.ToLower(strings.TrimSpace(f.standardState))
	pressureSet := cmd.Flags().Changed("pressure")
	switch state {
	case "1bar", "bar":
		state = "1bar"
		if pressureSet && f.pressureBar != 1 {
			state = fmt.Sprintf("%gbar", f.pressureBar)
		}
	case "1atm", "atm":
		if pressureSet {
			return c, "", usageErr(errors.New("--standard-state 1atm fixes the pressure; leave out --pressure"))
		}
		state, c.PressurePa = "1atm", units.AtmospherePa
	case "1m", "m", "1mol/l":
		if pressureSet {
			return c, "", usageErr(errors.New("--standard-state 1M does not depend on a pressure; leave out --pressure"))
		}
		state, c.StandardState = "1M", thermo.MolarState
	default:
		return c, "", usageErr(fmt.Errorf("--standard-state %q: choose 1bar, 1atm or 1M", f.standardState))
	}
	return c, state, nil
}

func lowModeOptions(f *thermoFlags) (thermo.LowModes, error) {
	var l thermo.LowModes
	switch strings.ToLower(strings.TrimSpace(f.lowModes)) {
	case "off", "none", "":
	case "both", "on":
		l.Entropy, l.Enthalpy = true, true
	case "entropy":
		l.Entropy = true
	case "enthalpy":
		l.Enthalpy = true
	default:
		return l, fmt.Errorf("--low-modes %q: choose both, entropy, enthalpy or off", f.lowModes)
	}
	if !(f.lowModeCutoff > 0) || math.IsInf(f.lowModeCutoff, 0) {
		return l, fmt.Errorf("--low-mode-cutoff %g: give a positive wavenumber in cm⁻¹", f.lowModeCutoff)
	}
	l.CutoffCm1 = f.lowModeCutoff
	return l, nil
}

func runThermo(cmd *cobra.Command, args []string, f *thermoFlags) error {
	in, source, formula, err := thermoInput(cmd, args, f)
	if err != nil {
		return err
	}
	cond, state, err := thermoConditions(cmd, f)
	if err != nil {
		return err
	}
	var temps []float64
	if f.temperatures != "" {
		if temps, err = parseTemperatures(f.temperatures); err != nil {
			return usageErr(err)
		}
	}
	if f.plotFile != "" {
		if len(temps) < 2 {
			return usageErr(errors.New("--plot draws a temperature scan: add --temperatures FROM:TO:STEP"))
		}
		switch strings.ToLower(filepath.Ext(f.plotFile)) {
		case ".svg", ".png":
		default:
			return usageErr(fmt.Errorf("--plot %q: name a .svg or .png file", f.plotFile))
		}
	}
	low, err := lowModeOptions(f)
	if err != nil {
		return usageErr(err)
	}
	if !(f.toleranceAng > 0) || math.IsInf(f.toleranceAng, 0) {
		return usageErr(fmt.Errorf("--symmetry-tolerance %g: give a positive distance in Å", f.toleranceAng))
	}
	if f.symmetryNumber < 0 {
		return usageErr(fmt.Errorf("--symmetry-number %d: it must be positive", f.symmetryNumber))
	}
	model, err := thermo.NewModel(in, thermo.Options{
		SymmetryToleranceBohr: f.toleranceAng * units.AngstromBohr,
		SymmetryNumber:        f.symmetryNumber,
		Symmetrize:            f.symmetrize,
		LowModes:              low,
	})
	if err != nil {
		return usageErr(fmt.Errorf("%s: %w", source, err))
	}
	props, err := model.Properties(cond)
	if err != nil {
		return usageErr(err)
	}
	rep := makeThermoReport(source, formula, state, model, props)
	if f.symmetrize {
		for i, a := range model.Atoms {
			var p [3]float64
			for k := range p {
				p[k] = a.Position[k] * units.BohrAngstrom
				d := (a.Position[k] - in.Atoms[i].Position[k]) * units.BohrAngstrom
				rep.SymmetrizeShift = math.Max(rep.SymmetrizeShift, math.Abs(d))
			}
			rep.SymmetrizedGeom = append(rep.SymmetrizedGeom, p)
		}
	}
	for _, t := range temps {
		c := cond
		c.TemperatureK = t
		p, err := model.Properties(c)
		if err != nil {
			return usageErr(err)
		}
		rep.Scan = append(rep.Scan, makeThermoPoint(p))
	}
	for _, w := range model.Warnings {
		fmt.Fprintf(cmd.ErrOrStderr(), "poise: warning: %s\n", w)
	}
	if f.plotFile != "" {
		if err := plotThermoScan(f.plotFile, formula, rep.Scan); err != nil {
			return fmt.Errorf("--plot: %w", err)
		}
	}
	out := cmd.OutOrStdout()
	if f.asJSON {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	return printThermoReport(out, rep, model)
}

// stateText describes a standard state for the text report.
func stateText(state string, pressurePa float64) string {
	switch state {
	case "1M":
		return "c° = 1 mol/L"
	case "1atm":
		return "1 atm"
	}
	return fmt.Sprintf("%g bar", pressurePa/units.StandardPressurePa)
}

// thermoComponent is one contribution in the JSON report.
type thermoComponent struct {
	EnergyHartree   float64 `json:"energy_hartree"`
	EntropyJPerMolK float64 `json:"entropy_j_per_mol_k"`
	CvJPerMolK      float64 `json:"heat_capacity_cv_j_per_mol_k"`
}

// thermoPoint is the thermochemistry at one temperature.
type thermoPoint struct {
	TemperatureK         float64                    `json:"temperature_k"`
	PressurePa           float64                    `json:"pressure_pa"`
	ZPEHartree           float64                    `json:"zero_point_energy_hartree"`
	ThermalEnergyHartree float64                    `json:"thermal_energy_correction_hartree"`
	EnthalpyHartree      float64                    `json:"enthalpy_correction_hartree"`
	GibbsHartree         float64                    `json:"gibbs_correction_hartree"`
	EntropyJPerMolK      float64                    `json:"entropy_j_per_mol_k"`
	CvJPerMolK           float64                    `json:"heat_capacity_cv_j_per_mol_k"`
	CpJPerMolK           float64                    `json:"heat_capacity_cp_j_per_mol_k"`
	ConcentrationHartree float64                    `json:"concentration_correction_hartree,omitempty"`
	AbsEnthalpyHartree   *float64                   `json:"enthalpy_hartree,omitempty"`
	AbsGibbsHartree      *float64                   `json:"gibbs_energy_hartree,omitempty"`
	Components           map[string]thermoComponent `json:"components"`
}

type thermoLevel struct {
	EnergyCm1  float64 `json:"energy_cm1"`
	Degeneracy int     `json:"degeneracy"`
}

type thermoLowModes struct {
	Entropy           bool    `json:"entropy"`
	Enthalpy          bool    `json:"enthalpy"`
	CutoffCm1         float64 `json:"cutoff_cm1"`
	Alpha             float64 `json:"alpha"`
	AverageMomentKgM2 float64 `json:"average_moment_kg_m2"`
}

// thermoReport is the JSON form of poise thermo.
type thermoReport struct {
	Source              string          `json:"source"`
	Formula             string          `json:"formula"`
	PointGroup          string          `json:"point_group"`
	SymmetryNumber      int             `json:"symmetry_number"`
	RotorType           string          `json:"rotor_type"`
	MassU               float64         `json:"mass_u"`
	MomentsAmuAngstrom2 [3]float64      `json:"moments_of_inertia_u_angstrom2"`
	ConstantsCm1        []float64       `json:"rotational_constants_cm1"`
	ConstantsGHz        []float64       `json:"rotational_constants_ghz"`
	FrequenciesCm1      []float64       `json:"frequencies_used_cm1"`
	LeftOutCm1          []float64       `json:"frequencies_left_out_cm1"`
	ElectronicLevels    []thermoLevel   `json:"electronic_levels"`
	StandardState       string          `json:"standard_state"`
	StandardStateText   string          `json:"-"`
	LowModes            *thermoLowModes `json:"low_modes,omitempty"`
	ElectronicEnergy    *float64        `json:"electronic_energy_hartree,omitempty"`
	thermoPoint
	Scan            []thermoPoint `json:"scan,omitempty"`
	SymmetrizedGeom [][3]float64  `json:"symmetrized_geometry_angstrom,omitempty"`
	SymmetrizeShift float64       `json:"symmetrization_max_shift_angstrom,omitempty"`
	Warnings        []string      `json:"warnings"`
	Version         string        `json:"program_version"`
}

func makeThermoPoint(p thermo.Properties) thermoPoint {
	comp := func(c thermo.Component) thermoComponent {
		return thermoComponent{EnergyHartree: c.EnergyHartree, EntropyJPerMolK: c.EntropyJPerMolK, CvJPerMolK: c.CvJPerMolK}
	}
	pt := thermoPoint{
		TemperatureK:         p.TemperatureK,
		PressurePa:           p.PressurePa,
		ZPEHartree:           p.ZeroPointEnergyHartree,
		ThermalEnergyHartree: p.ThermalEnergyHartree,
		EnthalpyHartree:      p.EnthalpyHartree,
		GibbsHartree:         p.GibbsHartree,
		EntropyJPerMolK:      p.EntropyJPerMolK,
		CvJPerMolK:           p.CvJPerMolK,
		CpJPerMolK:           p.CpJPerMolK,
		ConcentrationHartree: p.ConcentrationHartree,
		Components: map[string]thermoComponent{
			"translation": comp(p.Translation),
			"rotation":    comp(p.Rotation),
			"vibration":   comp(p.Vibration),
			"electronic":  comp(p.Electronic),
		},
	}
	if p.HasEnergy {
		h, g := p.AbsoluteEnthalpyHartree, p.AbsoluteGibbsHartree
		pt.AbsEnthalpyHartree, pt.AbsGibbsHartree = &h, &g
	}
	return pt
}

func makeThermoReport(source, formula, state string, m *thermo.Model, p thermo.Properties) *thermoReport {
	rep := &thermoReport{
		Source:              source,
		Formula:             formula,
		PointGroup:          m.PointGroup.Symbol,
		SymmetryNumber:      m.SymmetryNumber,
		RotorType:           m.Rotor.Type.String(),
		MassU:               m.MassU,
		MomentsAmuAngstrom2: m.Rotor.MomentsAmuAngstrom2(),
		ConstantsCm1:        nonNil(m.Rotor.ConstantsCm1),
		ConstantsGHz:        nonNil(m.Rotor.ConstantsGHz),
		FrequenciesCm1:      nonNil(m.VibrationsCm1),
		LeftOutCm1:          nonNil(m.ImaginaryCm1),
		StandardState:       state,
		StandardStateText:   stateText(state, p.PressurePa),
		thermoPoint:         makeThermoPoint(p),
		Warnings:            append([]string{}, m.Warnings...),
		Version:             version,
	}
	for _, l := range m.Levels {
		rep.ElectronicLevels = append(rep.ElectronicLevels, thermoLevel{l.EnergyCm1, l.Degeneracy})
	}
	if m.LowModes.Enabled() {
		l := m.LowModes
		rep.LowModes = &thermoLowModes{l.Entropy, l.Enthalpy, l.CutoffCm1, l.Alpha, l.AverageMomentKgM2}
	}
	if m.HasEnergy {
		e := m.EnergyHartree
		rep.ElectronicEnergy = &e
	}
	return rep
}

func nonNil(v []float64) []float64 {
	if v == nil {
		return []float64{}
	}
	return v
}

// The text report: a few lines about the molecule, then the contributions
// at the main temperature (components as rows, U, S, Cv as columns), then
// one row per temperature with H, G, S, Cp and the entropy contributions.
func printThermoReport(w io.Writer, rep *thermoReport, m *thermo.Model) error {
	fmt.Fprintf(w, "%s  %.4f u  point group %s  σ = %d  %s\n", rep.Formula, rep.MassU, rep.PointGroup, rep.SymmetryNumber, rep.RotorType)
	if m.Rotor.Type != thermo.AtomRotor {
		mom := rep.MomentsAmuAngstrom2
		first := 0
		if m.Rotor.Type == thermo.LinearRotor {
			first = 1
		}
		var ms, cs, gs []string
		for k := first; k < 3; k++ {
			ms = append(ms, fmt.Sprintf("%.4f", mom[k]))
		}
		for k := range rep.ConstantsCm1 {
			cs = append(cs, fmt.Sprintf("%.5f", rep.ConstantsCm1[k]))
			gs = append(gs, fmt.Sprintf("%.4f", rep.ConstantsGHz[k]))
		}
		if m.Rotor.Type == thermo.LinearRotor {
			ms = ms[:1]
		}
		fmt.Fprintf(w, "moments of inertia    %s u·Å²\n", strings.Join(ms, "  "))
		fmt.Fprintf(w, "rotational constants  %s cm⁻¹  =  %s GHz\n", strings.Join(cs, "  "), strings.Join(gs, "  "))
		vib := make([]string, len(rep.FrequenciesCm1))
		for i, v := range rep.FrequenciesCm1 {
			// As given by hand (667.4), or to 0.1 cm⁻¹ from a modes file.
			vib[i] = strconv.FormatFloat(math.Round(v*10)/10, 'f', -1, 64)
		}
		fmt.Fprintf(w, "vibrations (%d)       %s cm⁻¹\n", len(vib), strings.Join(vib, " "))
		if len(rep.LeftOutCm1) > 0 {
			fmt.Fprintf(w, "left out              %s cm⁻¹ (imaginary or zero)\n", joinNumbers(rep.LeftOutCm1))
		}
	}
	if rep.SymmetrizedGeom != nil {
		fmt.Fprintf(w, "symmetrized geometry  atoms moved by at most %.2g Å\n", rep.SymmetrizeShift)
	}
	var lv []string
	for _, l := range rep.ElectronicLevels {
		lv = append(lv, fmt.Sprintf("%g cm⁻¹ (g = %d)", l.EnergyCm1, l.Degeneracy))
	}
	fmt.Fprintf(w, "electronic levels     %s\n", strings.Join(lv, ", "))
	if rep.LowModes != nil {
		var parts []string
		if rep.LowModes.Entropy {
			parts = append(parts, "entropy toward a free rotor (Grimme 2012)")
		}
		if rep.LowModes.Enthalpy {
			parts = append(parts, "energy toward RT/2 (Li et al. 2015)")
		}
		fmt.Fprintf(w, "low modes             %s; ω0 = %g cm⁻¹\n", strings.Join(parts, ", "), rep.LowModes.CutoffCm1)
	}
	stateNote := rep.StandardStateText
	if rep.StandardState == "1M" {
		stateNote += fmt.Sprintf(" (G includes RT ln(c°RT/p°) = %.4f kJ/mol from 1 bar)", rep.ConcentrationHartree*units.HartreeKJPerMol)
	}
	fmt.Fprintf(w, "standard state        %s\n", stateNote)
	fmt.Fprintf(w, "zero-point energy     %.6f Eh = %.3f kJ/mol\n\n", rep.ZPEHartree, rep.ZPEHartree*units.HartreeKJPerMol)

	fmt.Fprintf(w, "contributions at %g K\n", rep.TemperatureK)
	kj := units.HartreeKJPerMol
	var rows [][]string
	for _, name := range []string{"translation", "rotation", "vibration", "electronic"} {
		c := rep.Components[name]
		rows = append(rows, []string{name, fmt.Sprintf("%.4f", c.EnergyHartree*kj), fmt.Sprintf("%.3f", c.EntropyJPerMolK), fmt.Sprintf("%.3f", c.CvJPerMolK)})
	}
	rows = append(rows, []string{"total", fmt.Sprintf("%.4f", rep.ThermalEnergyHartree*kj), fmt.Sprintf("%.3f", rep.EntropyJPerMolK), fmt.Sprintf("%.3f", rep.CvJPerMolK)})
	if err := writeThermoTable(w, []string{"contribution", "U − E_el (kJ/mol)", "S (J/mol·K)", "Cv (J/mol·K)"}, rows, true); err != nil {
		return err
	}

	points := rep.Scan
	if len(points) == 0 {
		points = []thermoPoint{rep.thermoPoint}
	}
	fmt.Fprintf(w, "\nthermochemistry at %s (energies per molecule relative to E_el)\n", rep.StandardStateText)
	header := []string{"T (K)", "H − E_el (Eh)", "G − E_el (Eh)", "S (J/mol·K)", "Cp (J/mol·K)", "S trans", "S rot", "S vib", "S el"}
	abs := rep.ElectronicEnergy != nil
	if abs {
		header = append(header, "H (Eh)", "G (Eh)")
	}
	rows = rows[:0]
	for _, p := range points {
		row := []string{
			strconv.FormatFloat(p.TemperatureK, 'f', -1, 64),
			fmt.Sprintf("%.6f", p.EnthalpyHartree),
			fmt.Sprintf("%.6f", p.GibbsHartree),
			fmt.Sprintf("%.3f", p.EntropyJPerMolK),
			fmt.Sprintf("%.3f", p.CpJPerMolK),
			fmt.Sprintf("%.3f", p.Components["translation"].EntropyJPerMolK),
			fmt.Sprintf("%.3f", p.Components["rotation"].EntropyJPerMolK),
			fmt.Sprintf("%.3f", p.Components["vibration"].EntropyJPerMolK),
			fmt.Sprintf("%.3f", p.Components["electronic"].EntropyJPerMolK),
		}
		if abs {
			row = append(row, fmt.Sprintf("%.6f", *p.AbsEnthalpyHartree), fmt.Sprintf("%.6f", *p.AbsGibbsHartree))
		}
		rows = append(rows, row)
	}
	return writeThermoTable(w, header, rows, false)
}

// writeThermoTable renders a boxed table with headers as given, numbers
// right-aligned and, if labels, the first column left-aligned.
func writeThermoTable(w io.Writer, header []string, rows [][]string, labels bool) error {
	align := tw.CellAlignment{Global: tw.AlignRight}
	if labels {
		align.PerColumn = make([]tw.Align, len(header))
		for i := range align.PerColumn {
			align.PerColumn[i] = tw.AlignRight
		}
		align.PerColumn[0] = tw.AlignLeft
	}
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithHeaderAlignment(tw.AlignCenter),
		tablewriter.WithRowAlignmentConfig(align),
	)
	t.Header(header)
	if err := t.Bulk(rows); err != nil {
		return err
	}
	return t.Render()
}

func joinNumbers(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strings.Join(s, " ")
}

// plotThermoScan draws two panels over the scan: H − E_el and G − E_el
// (kJ/mol) above, S and Cp (J/(mol K)) below; the format follows the file
// extension (.svg or .png).
func plotThermoScan(path, formula string, scan []thermoPoint) error {
	kj := units.HartreeKJPerMol
	series := func(get func(thermoPoint) float64) plotter.XYs {
		xy := make(plotter.XYs, len(scan))
		for i, p := range scan {
			xy[i].X, xy[i].Y = p.TemperatureK, get(p)
		}
		return xy
	}
	blue := color.RGBA{R: 31, G: 88, B: 160, A: 255}
	red := color.RGBA{R: 190, G: 50, B: 40, A: 255}
	panel := func(title, ylabel string, legendTop bool, names [2]string, data [2]plotter.XYs) (*plot.Plot, error) {
		p := plot.New()
		p.Title.Text = title
		p.X.Label.Text = "T (K)"
		p.Y.Label.Text = ylabel
		p.Legend.Top = legendTop
		p.Legend.Left = true
		p.Legend.XOffs = vg.Millimeter
		p.Add(plotter.NewGrid())
		for i, c := range []color.Color{blue, red} {
			l, err := plotter.NewLine(data[i])
			if err != nil {
				return nil, err
			}
			l.Color = c
			l.Width = vg.Points(1.5)
			if i == 1 {
				l.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
			}
			p.Add(l)
			p.Legend.Add(names[i], l)
		}
		return p, nil
	}
	top, err := panel(formula+": enthalpy and Gibbs energy", "kJ/mol", false, [2]string{"H − E_el", "G − E_el"},
		[2]plotter.XYs{series(func(p thermoPoint) float64 { return p.EnthalpyHartree * kj }), series(func(p thermoPoint) float64 { return p.GibbsHartree * kj })})
	if err != nil {
		return err
	}
	bottom, err := panel("entropy and heat capacity", "J/(mol K)", true, [2]string{"S", "Cp"},
		[2]plotter.XYs{series(func(p thermoPoint) float64 { return p.EntropyJPerMolK }), series(func(p thermoPoint) float64 { return p.CpJPerMolK })})
	if err != nil {
		return err
	}
	return writeStackedPlots(path, []*plot.Plot{top, bottom}, 15*vg.Centimeter, 18*vg.Centimeter)
}
