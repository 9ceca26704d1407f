package thermo

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"poise/energy/units"
	"poise/thermo/pointgroup"
)

// Constants not in energy/units.
const (
	// StandardConcentration is c° = 1 mol/L in mol/m³ (IUPAC Green Book,
	// 3rd ed., 2007, §2.11).
	StandardConcentration = 1000.0
	// DefaultTemperatureK is the conventional standard temperature, 298.15 K.
	DefaultTemperatureK = 298.15
	// GrimmeCutoffCm1 is ω0 of S. Grimme, Chem. Eur. J. 18, 9955 (2012).
	GrimmeCutoffCm1 = 100.0
	// GrimmeAlpha is the exponent α of the damping function of the same paper.
	GrimmeAlpha = 4.0
	// GrimmeAverageMomentKgM2 is B_av = 1e-44 kg m², the moment of inertia
	// that limits the free-rotor entropy (same paper).
	GrimmeAverageMomentKgM2 = 1e-44
)

// jPerMolPerHartree converts J/mol to hartree per molecule (its inverse).
const jPerMolPerHartree = units.HartreeJoule * units.Avogadro

// Level is an electronic level.
type Level struct {
	EnergyCm1  float64 // above the lowest level, cm⁻¹
	Degeneracy int     // g ≥ 1
}

// ParseLevels reads levels written as "0:2,119.8:2" (wavenumber in cm⁻¹
// above the lowest level, colon, degeneracy). The lowest level must be at 0.
func ParseLevels(s string) ([]Level, error) {
	var out []Level
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		e, g, ok := strings.Cut(f, ":")
		if !ok {
			return nil, fmt.Errorf("electronic level %q: want WAVENUMBER:DEGENERACY, as in 0:2", f)
		}
		ev, err := strconv.ParseFloat(strings.TrimSpace(e), 64)
		if err != nil || math.IsNaN(ev) || math.IsInf(ev, 0) {
			return nil, fmt.Errorf("electronic level %q: %q is not a wavenumber in cm⁻¹", f, e)
		}
		gv, err := strconv.Atoi(strings.TrimSpace(g))
		if err != nil {
			return nil, fmt.Errorf("electronic level %q: %q is not a whole degeneracy", f, g)
		}
		out = append(out, Level{EnergyCm1: ev, Degeneracy: gv})
	}
	return out, checkLevels(out)
}

func checkLevels(levels []Level) error {
	if len(levels) == 0 {
		return errors.New("no electronic levels")
	}
	lowest := math.Inf(1)
	for _, l := range levels {
		if l.Degeneracy < 1 {
			return fmt.Errorf("electronic level at %g cm⁻¹ has degeneracy %d; it must be at least 1", l.EnergyCm1, l.Degeneracy)
		}
		if math.IsNaN(l.EnergyCm1) || math.IsInf(l.EnergyCm1, 0) {
			return errors.New("electronic level energies must be finite")
		}
		lowest = math.Min(lowest, l.EnergyCm1)
	}
	if lowest != 0 {
		return fmt.Errorf("the lowest electronic level is at %g cm⁻¹; give energies above the ground level, which is at 0", lowest)
	}
	return nil
}

// Input is what thermochemistry needs to know about a molecule.
type Input struct {
	// Atoms give labels, masses (u) and positions (bohr).
	Atoms []pointgroup.Atom
	// FrequenciesCm1 are the 3N−6 (3N−5 for linear molecules, none for an
	// atom) harmonic vibrational wavenumbers; imaginary ones as negative
	// numbers. Degenerate modes appear once per component.
	FrequenciesCm1 []float64
	// Multiplicity is 2S+1 (0 means 1). It gives the electronic degeneracy
	// when ElectronicLevels is empty.
	Multiplicity int
	// ElectronicLevels, if not empty, replaces the single level of
	// degeneracy Multiplicity.
	ElectronicLevels []Level
	// EnergyHartree is the electronic energy, used when HasEnergy is true
	// for absolute enthalpies and Gibbs energies.
	EnergyHartree float64
	HasEnergy     bool
}

// LowModes selects the quasi-harmonic treatment of low vibrational modes.
type LowModes struct {
	// Entropy interpolates each mode's entropy between the harmonic
	// oscillator and a free rotor (Grimme 2012).
	Entropy bool
	// Enthalpy interpolates each mode's energy between the harmonic
	// oscillator and RT/2 (Li, Gomes, Sharada, Bell, Head-Gordon 2015).
	Enthalpy bool
	// CutoffCm1 is ω0 of the damping function (0: 100 cm⁻¹).
	CutoffCm1 float64
	// Alpha is its exponent (0: 4).
	Alpha float64
	// AverageMomentKgM2 is B_av of the free rotor (0: 1e-44 kg m²).
	AverageMomentKgM2 float64
}

// Enabled reports whether any low-mode treatment is on.
func (l LowModes) Enabled() bool { return l.Entropy || l.Enthalpy }

func (l LowModes) withDefaults() LowModes {
	if l.CutoffCm1 <= 0 {
		l.CutoffCm1 = GrimmeCutoffCm1
	}
	if l.Alpha <= 0 {
		l.Alpha = GrimmeAlpha
	}
	if l.AverageMomentKgM2 <= 0 {
		l.AverageMomentKgM2 = GrimmeAverageMomentKgM2
	}
	return l
}

// Weight returns the damping w(ν) = 1/(1 + (ω0/ν)^α) of a mode at ν cm⁻¹:
// 1 for a harmonic oscillator, 0 for a free rotor.
func (l LowModes) Weight(nuCm1 float64) float64 {
	l = l.withDefaults()
	return 1 / (1 + math.Pow(l.CutoffCm1/nuCm1, l.Alpha))
}

// Options control the model beyond its input.
type Options struct {
	// SymmetryToleranceBohr is the point-group tolerance (0: default).
	SymmetryToleranceBohr float64
	// SymmetryNumber, if positive, replaces the one of the point group.
	SymmetryNumber int
	// Symmetrize makes the geometry exactly symmetric before the moments
	// of inertia are computed.
	Symmetrize bool
	// LowModes selects the quasi-harmonic treatment of low modes.
	LowModes LowModes
}

// BentLimitBohr is the largest distance of an atom from the molecular
// axis at which the Hessian analysis still counts a molecule linear
// (freq.LinearToleranceBohr, 1e-3 bohr). A molecule linear within the
// point-group tolerance but bent by more than this comes from the Hessian
// analysis with 3N−6 frequencies; NewModel then treats it as bent.
const BentLimitBohr = 1e-3

// offAxisBohr is the largest distance of an atom from the axis of the
// smallest principal moment of inertia through the centre of mass.
func offAxisBohr(atoms []pointgroup.Atom) float64 {
	var com [3]float64
	total := 0.0
	for _, a := range atoms {
		for k := range com {
			com[k] += a.Mass * a.Position[k]
		}
		total += a.Mass
	}
	_, axes := pointgroup.Inertia(atoms)
	u := axes[0]
	worst := 0.0
	for _, a := range atoms {
		var p [3]float64
		for k := range p {
			p[k] = a.Position[k] - com[k]/total
		}
		h := p[0]*u[0] + p[1]*u[1] + p[2]*u[2]
		worst = math.Max(worst, math.Sqrt(math.Pow(p[0]-h*u[0], 2)+math.Pow(p[1]-h*u[1], 2)+math.Pow(p[2]-h*u[2], 2)))
	}
	return worst
}

// Model is a molecule prepared for thermochemistry at any conditions.
type Model struct {
	Atoms          []pointgroup.Atom  // as used (symmetrized if asked)
	PointGroup     *pointgroup.Result // of Atoms
	SymmetryNumber int                // σ used
	Rotor          Rotor
	MassU          float64
	// VibrationsCm1 are the real modes used, ascending.
	VibrationsCm1 []float64
	// ImaginaryCm1 are the modes left out (negative: imaginary; zero).
	ImaginaryCm1  []float64
	Levels        []Level // electronic levels used
	LowModes      LowModes
	Warnings      []string
	EnergyHartree float64
	HasEnergy     bool
}

// NewModel checks the input, finds the point group and the rotor and
// sorts the vibrations.
func NewModel(in Input, opt Options) (*Model, error) {
	if len(in.Atoms) == 0 {
		return nil, errors.New("no atoms")
	}
	m := &Model{EnergyHartree: in.EnergyHartree, HasEnergy: in.HasEnergy}
	if in.HasEnergy && (math.IsNaN(in.EnergyHartree) || math.IsInf(in.EnergyHartree, 0)) {
		return nil, errors.New("the electronic energy must be a finite number of hartree")
	}
	var err error
	if opt.Symmetrize {
		m.Atoms, m.PointGroup, err = pointgroup.Symmetrize(in.Atoms, opt.SymmetryToleranceBohr)
	} else {
		m.Atoms = append([]pointgroup.Atom(nil), in.Atoms...)
		m.PointGroup, err = pointgroup.Detect(in.Atoms, opt.SymmetryToleranceBohr)
	}
	if err != nil {
		return nil, err
	}
	// Bent by more than the Hessian analysis allows for a linear molecule,
	// but linear within the symmetry tolerance: the 3N−6 frequencies
	// decide, and the point group is found again below the bend.
	if n := len(in.Atoms); n >= 3 && m.PointGroup.Linear && len(in.FrequenciesCm1) == 3*n-6 {
		if off := offAxisBohr(in.Atoms); off > BentLimitBohr {
			tol := opt.SymmetryToleranceBohr
			if !(tol > 0) {
				tol = pointgroup.DefaultToleranceBohr
			}
			tight := math.Min(tol, off/2)
			if opt.Symmetrize {
				m.Atoms, m.PointGroup, err = pointgroup.Symmetrize(in.Atoms, tight)
			} else {
				m.PointGroup, err = pointgroup.Detect(in.Atoms, tight)
			}
			if err != nil {
				return nil, err
			}
			m.Warnings = append(m.Warnings, fmt.Sprintf("an atom lies %.4f Å off the molecular axis: linear within the symmetry tolerance (%.4f Å), "+
				"but the %d frequencies are those of a bent molecule (3N−6), so it is treated as bent (%s, point group found at %.4f Å); "+
				"if the molecule is linear at its minimum, relax it tightly and compute its modes again",
				off*units.BohrAngstrom, tol*units.BohrAngstrom, len(in.FrequenciesCm1), m.PointGroup.Symbol, tight*units.BohrAngstrom))
		}
	}
	m.SymmetryNumber = m.PointGroup.SymmetryNumber
	if opt.SymmetryNumber > 0 {
		m.SymmetryNumber = opt.SymmetryNumber
	} else if opt.SymmetryNumber < 0 {
		return nil, fmt.Errorf("symmetry number %d: it must be positive", opt.SymmetryNumber)
	}
	for _, a := range m.Atoms {
		m.MassU += a.Mass
	}
	m.Rotor = NewRotor(m.Atoms, m.PointGroup)

	n := len(m.Atoms)
	want := 3*n - 6
	switch {
	case n == 1:
		want = 0
	case m.Rotor.Type == LinearRotor:
		want = 3*n - 5
	}
	if n == 1 && len(in.FrequenciesCm1) != 0 {
		return nil, fmt.Errorf("%d frequencies for a single atom: an atom has no vibrations, give none", len(in.FrequenciesCm1))
	}
	if len(in.FrequenciesCm1) != want {
		hint := ""
		if m.Rotor.Type == LinearRotor && n >= 3 && len(in.FrequenciesCm1) == want-1 {
			hint = "; the geometry is linear within the symmetry tolerance"
		}
		return nil, fmt.Errorf("%d frequencies for %d atoms (%s): give the %d vibrational wavenumbers (3N−%d), degenerate modes once per component%s",
			len(in.FrequenciesCm1), n, m.Rotor.Type, want, 3*n-want, hint)
	}
	for _, nu := range in.FrequenciesCm1 {
		switch {
		case math.IsNaN(nu) || math.IsInf(nu, 0):
			return nil, errors.New("frequencies must be finite numbers of cm⁻¹")
		case nu > 0:
			m.VibrationsCm1 = append(m.VibrationsCm1, nu)
		default:
			m.ImaginaryCm1 = append(m.ImaginaryCm1, nu)
		}
	}
	sort.Float64s(m.VibrationsCm1)
	if k := len(m.ImaginaryCm1); k > 0 {
		m.Warnings = append(m.Warnings, fmt.Sprintf("%d imaginary or zero mode(s) left out of the vibrational sums: %s cm⁻¹ (not a minimum?)",
			k, joinFloats(m.ImaginaryCm1)))
	}

	m.LowModes = opt.LowModes
	if m.LowModes.Enabled() {
		m.LowModes = m.LowModes.withDefaults()
	} else if len(m.VibrationsCm1) > 0 && m.VibrationsCm1[0] < 50 {
		m.Warnings = append(m.Warnings, fmt.Sprintf("lowest mode %.1f cm⁻¹: its harmonic entropy is unreliable; consider the low-mode treatment", m.VibrationsCm1[0]))
	}

	mult := in.Multiplicity
	if mult == 0 {
		mult = 1
	}
	if mult < 0 {
		return nil, fmt.Errorf("multiplicity %d: it must be 2S+1 ≥ 1", mult)
	}
	if len(in.ElectronicLevels) > 0 {
		if err := checkLevels(in.ElectronicLevels); err != nil {
			return nil, err
		}
		m.Levels = append([]Level(nil), in.ElectronicLevels...)
	} else {
		m.Levels = []Level{{EnergyCm1: 0, Degeneracy: mult}}
	}
	return m, nil
}

func joinFloats(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strings.Join(s, ", ")
}

// StandardState selects the reference state of the translational
// partition function.
type StandardState int

const (
	// PressureState is the ideal gas at the pressure of the conditions.
	PressureState StandardState = iota
	// MolarState is the ideal gas at c° = 1 mol/L.
	MolarState
)

// Conditions are the temperature and the standard state.
type Conditions struct {
	TemperatureK  float64
	PressurePa    float64 // for PressureState; the reference p° of the 1 M conversion
	StandardState StandardState
}

// DefaultConditions are 298.15 K and 1 bar.
func DefaultConditions() Conditions {
	return Conditions{TemperatureK: DefaultTemperatureK, PressurePa: units.StandardPressurePa}
}

// Component is one contribution to the thermodynamic functions.
type Component struct {
	// EnergyHartree is U(T) − E_el, per molecule; the vibrational one
	// includes the zero-point energy.
	EnergyHartree   float64
	EntropyJPerMolK float64
	CvJPerMolK      float64
}

// Properties are the thermodynamic functions at one set of conditions.
// Energies are per molecule in hartree and relative to the electronic
// energy (corrections), unless named absolute.
type Properties struct {
	Conditions
	Translation, Rotation, Vibration, Electronic Component

	ZeroPointEnergyHartree float64 // harmonic, of the real modes
	ThermalEnergyHartree   float64 // U − E_el (includes the ZPE)
	EnthalpyHartree        float64 // H − E_el = U − E_el + kT
	GibbsHartree           float64 // G − E_el = H − E_el − TS
	EntropyJPerMolK        float64
	CvJPerMolK             float64
	CpJPerMolK             float64 // Cv + R
	// ConcentrationHartree is RT ln(c°RT/p°), included in GibbsHartree
	// for the 1 mol/L standard state (0 otherwise).
	ConcentrationHartree float64
	// Absolute values E_el + correction, valid when HasEnergy.
	HasEnergy               bool
	AbsoluteEnthalpyHartree float64
	AbsoluteGibbsHartree    float64
}

// Properties evaluates the thermodynamic functions at c.
func (m *Model) Properties(c Conditions) (Properties, error) {
	t := c.TemperatureK
	if !(t > 0) || math.IsInf(t, 0) {
		return Properties{}, fmt.Errorf("temperature %g K: it must be positive", t)
	}
	if !(c.PressurePa > 0) || math.IsInf(c.PressurePa, 0) {
		return Properties{}, fmt.Errorf("pressure %g Pa: it must be positive", c.PressurePa)
	}
	const r = units.GasConstant
	p := Properties{Conditions: c, HasEnergy: m.HasEnergy}

	// Translation: Sackur–Tetrode.
	pEff := c.PressurePa
	if c.StandardState == MolarState {
		pEff = StandardConcentration * r * t
		p.ConcentrationHartree = r * t * math.Log(pEff/c.PressurePa) / jPerMolPerHartree
	}
	massKg := m.MassU * units.AtomicMassUnitKg
	kt := units.Boltzmann * t
	lambda := units.Planck / math.Sqrt(2*math.Pi*massKg*kt) // thermal wavelength, m
	qt := kt / pEff / (lambda * lambda * lambda)
	p.Translation = Component{
		EnergyHartree:   1.5 * r * t / jPerMolPerHartree,
		EntropyJPerMolK: r * (math.Log(qt) + 2.5),
		CvJPerMolK:      1.5 * r,
	}

	// Rotation: classical rigid rotor.
	sigma := float64(m.SymmetryNumber)
	theta := func(iAmuBohr2 float64) float64 { // rotational temperature, K
		return units.Planck * units.Planck / (8 * math.Pi * math.Pi * momentKgM2(iAmuBohr2) * units.Boltzmann)
	}
	switch m.Rotor.Type {
	case AtomRotor:
	case LinearRotor:
		q := t / (sigma * theta(m.Rotor.MomentsAmuBohr2[2]))
		p.Rotation = Component{EnergyHartree: r * t / jPerMolPerHartree, EntropyJPerMolK: r * (math.Log(q) + 1), CvJPerMolK: r}
	default:
		mo := m.Rotor.MomentsAmuBohr2
		q := math.Sqrt(math.Pi) / sigma * math.Sqrt(t*t*t/(theta(mo[0])*theta(mo[1])*theta(mo[2])))
		p.Rotation = Component{EnergyHartree: 1.5 * r * t / jPerMolPerHartree, EntropyJPerMolK: r * (math.Log(q) + 1.5), CvJPerMolK: 1.5 * r}
	}

	// Vibration: harmonic oscillators, optionally damped toward free rotors.
	var uVib, sVib, cvVib, zpe float64 // J/mol, J/(mol K)
	for _, nu := range m.VibrationsCm1 {
		th := units.Planck * units.SpeedOfLight * 100 * nu / units.Boltzmann
		x := th / t
		em1 := math.Expm1(x)
		z := r * th / 2
		u := z + r*th/em1
		s := r * (x/em1 - math.Log(-math.Expm1(-x)))
		om := -math.Expm1(-x) // 1 − e^{−x}
		cv := r * x * x * math.Exp(-x) / (om * om)
		zpe += z
		if m.LowModes.Enabled() {
			w := m.LowModes.Weight(nu)
			if m.LowModes.Entropy {
				s = w*s + (1-w)*freeRotorEntropy(nu, t, m.LowModes.AverageMomentKgM2)
			}
			if m.LowModes.Enthalpy {
				u = w*u + (1-w)*r*t/2
				cv = w*cv + (1-w)*r/2
			}
		}
		uVib += u
		sVib += s
		cvVib += cv
	}
	p.Vibration = Component{EnergyHartree: uVib / jPerMolPerHartree, EntropyJPerMolK: sVib, CvJPerMolK: cvVib}
	p.ZeroPointEnergyHartree = zpe / jPerMolPerHartree

	// Electronic levels.
	var q, e1, e2 float64 // Σ g e^{-βε}, Σ g ε e^{-βε}, Σ g ε² e^{-βε}; ε in J
	for _, l := range m.Levels {
		eps := units.Planck * units.SpeedOfLight * 100 * l.EnergyCm1
		b := float64(l.Degeneracy) * math.Exp(-eps/kt)
		q += b
		e1 += b * eps
		e2 += b * eps * eps
	}
	mean := e1 / q
	uEl := units.Avogadro * mean
	p.Electronic = Component{
		EnergyHartree:   uEl / jPerMolPerHartree,
		EntropyJPerMolK: r*math.Log(q) + uEl/t,
		CvJPerMolK:      units.Avogadro * (e2/q - mean*mean) / (units.Boltzmann * t * t),
	}

	for _, comp := range []Component{p.Translation, p.Rotation, p.Vibration, p.Electronic} {
		p.ThermalEnergyHartree += comp.EnergyHartree
		p.EntropyJPerMolK += comp.EntropyJPerMolK
		p.CvJPerMolK += comp.CvJPerMolK
	}
	p.EnthalpyHartree = p.ThermalEnergyHartree + r*t/jPerMolPerHartree
	p.CpJPerMolK = p.CvJPerMolK + r
	p.GibbsHartree = p.EnthalpyHartree - t*p.EntropyJPerMolK/jPerMolPerHartree
	if m.HasEnergy {
		p.AbsoluteEnthalpyHartree = m.EnergyHartree + p.EnthalpyHartree
		p.AbsoluteGibbsHartree = m.EnergyHartree + p.GibbsHartree
	}
	return p, nil
}

// freeRotorEntropy is the entropy (J/(mol K)) of a free rotor whose moment
// of inertia μ = h/(8π²cν̃) matches a vibration of ν̃ cm⁻¹, limited by
// μ' = μB/(μ+B): S = R[1/2 + ln √(8π³μ'kT/h²)] (Grimme 2012, Eqs. 4–6).
func freeRotorEntropy(nuCm1, t, bav float64) float64 {
	mu := units.Planck / (8 * math.Pi * math.Pi * units.SpeedOfLight * 100 * nuCm1)
	mup := mu * bav / (mu + bav)
	arg := 8 * math.Pi * math.Pi * math.Pi * mup * units.Boltzmann * t / (units.Planck * units.Planck)
	return units.GasConstant * (0.5 + 0.5*math.Log(arg))
}
