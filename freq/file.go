package freq

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"strings"

	"poise/energy/molecule"
	"poise/energy/units"
)

// FileFormat names the modes file in its "format" key.
const (
	FileFormat        = "poise-modes"
	FileFormatVersion = 1
)

// maxFileBytes bounds the size of a modes file read into memory.
const maxFileBytes = 256 << 20

// Level is the level of theory recorded in a modes file.
type Level struct {
	Method           string `json:"method"`
	Basis            string `json:"basis"`
	AngularFunctions string `json:"angular_functions,omitempty"`
	Unrestricted     bool   `json:"unrestricted"`
	GridLevel        int    `json:"grid_level,omitempty"`
	Dispersion       string `json:"dispersion,omitempty"` // e.g. "d3bj"
	// Fit is the auxiliary basis set of density fitting (e.g.
	// "def2-universal-JKFIT"), empty for exact integrals.
	Fit string `json:"fit,omitempty"`
}

// FileScaling records which scale factor fed which number.
type FileScaling struct {
	Frequency       float64 `json:"frequency_factor"`
	FrequencySource string  `json:"frequency_factor_source"`
	ZPE             float64 `json:"zero_point_factor"`
	ZPESource       string  `json:"zero_point_factor_source"`
	Enthalpy        float64 `json:"enthalpy_factor,omitempty"`
	Entropy         float64 `json:"entropy_factor,omitempty"`
	Note            string  `json:"note"`
}

// FileMotion is a Motion with atoms numbered from 1.
type FileMotion struct {
	Kind      string  `json:"kind"`
	Atoms     []int   `json:"atoms"`
	Label     string  `json:"label"`
	Amplitude float64 `json:"amplitude"`
	Share     float64 `json:"share"`
}

// FileMode is one normal mode in a modes file.
type FileMode struct {
	Number             int          `json:"number"` // from 1, ascending wavenumber
	WavenumberCm1      float64      `json:"wavenumber_cm1"`
	ScaledCm1          float64      `json:"scaled_wavenumber_cm1"`
	IRIntensityKmMol   float64      `json:"ir_intensity_km_per_mol"`
	ReducedMassU       float64      `json:"reduced_mass_u"`
	ForceConstantMdynA float64      `json:"force_constant_mdyn_per_angstrom"`
	Description        string       `json:"description"`
	Motions            []FileMotion `json:"motions"`
	// Displacement is the unit Cartesian displacement, one [x, y, z] per
	// atom.
	Displacement [][3]float64 `json:"displacement"`
}

// FileComputation records how the Hessian was computed.
type FileComputation struct {
	Displacements          int     `json:"displaced_points"`
	Computed               int     `json:"computed"`
	Reused                 int     `json:"reused_from_work_directory"`
	Gradients              int     `json:"surface_evaluations"`
	ReferenceSCFIterations int     `json:"reference_scf_iterations,omitempty"`
	MeanSCFIterations      float64 `json:"mean_scf_iterations_per_displaced_point,omitempty"`
	AsymmetryAU            float64 `json:"hessian_asymmetry_hartree_per_bohr2"`
	Threads                int     `json:"threads,omitempty"`
	Concurrent             int     `json:"concurrent_points,omitempty"`
	WallSeconds            float64 `json:"wall_seconds,omitempty"`
	// SymmetryOperations is the order of the point group used to skip
	// displaced points that are images of others (absent: none used);
	// SymmetryShiftBohr is how far the input geometry moved to be made
	// exactly symmetric.
	SymmetryOperations int     `json:"symmetry_operations,omitempty"`
	SymmetryShiftBohr  float64 `json:"symmetrized_by_bohr,omitempty"`
}

// File is the JSON document of a harmonic analysis: everything needed to
// redo the analysis (for other isotopes) and the thermochemistry without
// new gradients. Its keys symbols, geometry_angstrom, masses_u,
// frequencies_cm1 (ascending, imaginary negative, vibrations only),
// multiplicity and energy_hartree are those package thermo reads.
//
// frequencies_cm1 and zero_point_energy_hartree are the harmonic
// (unscaled) values; the scaled ones are in scaled_frequencies_cm1 and
// scaled_zero_point_energy_hartree, with the factors in "scaling".
type File struct {
	Format           string       `json:"format"`
	FormatVersion    int          `json:"format_version"`
	ProgramVersion   string       `json:"program_version,omitempty"`
	Source           string       `json:"source,omitempty"`
	Formula          string       `json:"formula,omitempty"`
	Symbols          []string     `json:"symbols"`
	GeometryAngstrom [][3]float64 `json:"geometry_angstrom"`
	MassesU          []float64    `json:"masses_u"`
	// MassNote describes non-default masses, e.g. "2H at atom 2".
	MassNote      string   `json:"masses_note,omitempty"`
	Charge        int      `json:"charge"`
	Multiplicity  int      `json:"multiplicity"`
	EnergyHartree *float64 `json:"energy_hartree,omitempty"`
	Level         *Level   `json:"level_of_theory,omitempty"`
	StepBohr      float64  `json:"finite_difference_step_bohr,omitempty"`
	FourPoint     bool     `json:"finite_difference_four_point"`
	// GradientAU is the gradient at the geometry (Eh/bohr), and
	// GradientNormAU the norm of its part orthogonal to translations and
	// rotations.
	GradientAU     []float64 `json:"gradient_hartree_per_bohr,omitempty"`
	GradientNormAU float64   `json:"gradient_norm_hartree_per_bohr"`
	Stationary     bool      `json:"stationary"`

	Linear               bool         `json:"linear"`
	FrequenciesCm1       []float64    `json:"frequencies_cm1"`
	IRIntensities        []float64    `json:"ir_intensities_km_per_mol,omitempty"`
	ZPEHartree           float64      `json:"zero_point_energy_hartree"`
	Scaling              *FileScaling `json:"scaling,omitempty"`
	ScaledFrequenciesCm1 []float64    `json:"scaled_frequencies_cm1,omitempty"`
	ScaledZPEHartree     float64      `json:"scaled_zero_point_energy_hartree,omitempty"`
	ReducedMassesU       []float64    `json:"reduced_masses_u"`
	ForceConstants       []float64    `json:"force_constants_mdyn_per_angstrom"`
	Descriptions         []string     `json:"descriptions"`
	ImaginaryCount       int          `json:"imaginary_count"`
	RigidBodyCm1         []float64    `json:"rigid_body_roots_cm1"`
	Modes                []FileMode   `json:"modes"`

	// HessianAU is the Cartesian Hessian, 3N rows of 3N (Eh/bohr²).
	HessianAU [][]float64 `json:"hessian_hartree_per_bohr2"`
	// DipoleAU is the dipole moment (e·bohr) at the geometry.
	DipoleAU *[3]float64 `json:"dipole_au,omitempty"`
	// DipoleDerivAU are the atomic polar tensors about a fixed origin,
	// 3N rows [∂μx, ∂μy, ∂μz]/∂x_i (e).
	DipoleDerivAU [][]float64 `json:"dipole_derivatives_au,omitempty"`

	Computation *FileComputation `json:"computation,omitempty"`
	Warnings    []string         `json:"warnings"`
}

// FileError is a defect of a modes file; the message says what to change.
type FileError struct {
	Msg string
}

func (e *FileError) Error() string { return "modes file: " + e.Msg }

func fileErr(format string, a ...any) error { return &FileError{Msg: fmt.Sprintf(format, a...)} }

// ReadFile reads and checks a modes file.
func ReadFile(path string) (*File, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m, err := Read(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return m, nil
}

// Read reads a modes document and checks what a new analysis needs:
// known element symbols, one geometry row and one positive mass per atom,
// a finite square Hessian of 3N rows and, if present, 3N rows of dipole
// derivatives.
func Read(r io.Reader) (*File, error) {
	data, err := io.ReadAll(io.LimitReader(r, maxFileBytes+1))
	if err != nil {
		return nil, err
	}
	if len(data) > maxFileBytes {
		return nil, fileErr("larger than %d MiB", maxFileBytes>>20)
	}
	var f File
	dec := json.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&f); err != nil {
		return nil, fileErr("not valid JSON of the expected shape: %v", err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, fileErr("extra data after the JSON object")
	}
	if err := f.check(); err != nil {
		return nil, err
	}
	return &f, nil
}

func (f *File) check() error {
	if f.Format != FileFormat {
		return fileErr(`"format" is %q, want %q: is this a file written by poise modes?`, f.Format, FileFormat)
	}
	if f.FormatVersion != FileFormatVersion {
		return fileErr(`"format_version" %d is not supported (this program reads %d)`, f.FormatVersion, FileFormatVersion)
	}
	nat := len(f.Symbols)
	if nat == 0 {
		return fileErr(`"symbols" is missing or empty`)
	}
	for i, s := range f.Symbols {
		if _, ok := molecule.ElementBySymbol(s); !ok {
			return fileErr(`"symbols"[%d] = %q is not an element poise supports (H–Kr)`, i, s)
		}
	}
	if len(f.GeometryAngstrom) != nat {
		return fileErr(`"geometry_angstrom" has %d rows for %d symbols`, len(f.GeometryAngstrom), nat)
	}
	for i, row := range f.GeometryAngstrom {
		for _, v := range row {
			if !finite(v) {
				return fileErr(`"geometry_angstrom"[%d] is not finite`, i)
			}
		}
	}
	if len(f.MassesU) != nat {
		return fileErr(`"masses_u" has %d entries for %d atoms`, len(f.MassesU), nat)
	}
	for i, m := range f.MassesU {
		if !(m > 0) || !finite(m) {
			return fileErr(`"masses_u"[%d] = %g: masses must be positive`, i, m)
		}
	}
	n := 3 * nat
	if len(f.HessianAU) != n {
		return fileErr(`"hessian_hartree_per_bohr2" has %d rows, want 3N = %d`, len(f.HessianAU), n)
	}
	for i, row := range f.HessianAU {
		if len(row) != n {
			return fileErr(`"hessian_hartree_per_bohr2"[%d] has %d numbers, want %d`, i, len(row), n)
		}
		for _, v := range row {
			if !finite(v) {
				return fileErr(`"hessian_hartree_per_bohr2"[%d] is not finite`, i)
			}
		}
	}
	if f.DipoleDerivAU != nil {
		if len(f.DipoleDerivAU) != n {
			return fileErr(`"dipole_derivatives_au" has %d rows, want 3N = %d`, len(f.DipoleDerivAU), n)
		}
		for i, row := range f.DipoleDerivAU {
			if len(row) != 3 {
				return fileErr(`"dipole_derivatives_au"[%d] has %d numbers, want 3`, i, len(row))
			}
			for _, v := range row {
				if !finite(v) {
					return fileErr(`"dipole_derivatives_au"[%d] is not finite`, i)
				}
			}
		}
	}
	if f.Multiplicity < 0 {
		return fileErr(`"multiplicity" %d: it must be 2S+1 ≥ 1`, f.Multiplicity)
	}
	if f.EnergyHartree != nil && !finite(*f.EnergyHartree) {
		return fileErr(`"energy_hartree" is not finite`)
	}
	if f.Level != nil && strings.TrimSpace(f.Level.Method) == "" {
		return fileErr(`"level_of_theory" has no method`)
	}
	return nil
}

// AtomicNumbers returns the atomic numbers of the file's symbols (checked
// by Read).
func (f *File) AtomicNumbers() []int {
	z := make([]int, len(f.Symbols))
	for i, s := range f.Symbols {
		z[i], _ = molecule.ElementBySymbol(s)
	}
	return z
}

// System returns the analysis input stored in the file, with the masses
// given (nil: the file's masses).
func (f *File) System(massesU []float64) System {
	nat := len(f.Symbols)
	n := 3 * nat
	sys := System{Z: f.AtomicNumbers(), MassesU: massesU, CoordsBohr: make([]float64, n), HessianAU: make([]float64, 0, n*n)}
	if sys.MassesU == nil {
		sys.MassesU = append([]float64(nil), f.MassesU...)
	}
	for a, row := range f.GeometryAngstrom {
		for k := 0; k < 3; k++ {
			sys.CoordsBohr[3*a+k] = row[k] * units.AngstromBohr
		}
	}
	for _, row := range f.HessianAU {
		sys.HessianAU = append(sys.HessianAU, row...)
	}
	if f.DipoleDerivAU != nil {
		sys.DipoleDerivAU = make([]float64, 0, 3*n)
		for _, row := range f.DipoleDerivAU {
			sys.DipoleDerivAU = append(sys.DipoleDerivAU, row...)
		}
	}
	return sys
}

// Write writes the file as indented JSON, atomically.
func (f *File) Write(path string) error {
	data, err := json.MarshalIndent(f, "", " ")
	if err != nil {
		return err
	}
	return WriteFileAtomic(path, append(data, '\n'))
}

// SetAnalysis fills the results of the analysis a, scaled with sc, into
// the file (frequencies, intensities, zero-point energies, modes).
func (f *File) SetAnalysis(a *Analysis, sc Scaling) {
	nm := len(a.Modes)
	f.Linear = a.Linear
	f.FrequenciesCm1 = make([]float64, nm)
	f.ScaledFrequenciesCm1 = make([]float64, nm)
	f.ReducedMassesU = make([]float64, nm)
	f.ForceConstants = make([]float64, nm)
	f.Descriptions = make([]string, nm)
	f.IRIntensities = nil
	if a.HasIntensities {
		f.IRIntensities = make([]float64, nm)
	}
	f.Modes = make([]FileMode, nm)
	f.ImaginaryCount = 0
	for p, m := range a.Modes {
		f.FrequenciesCm1[p] = m.WavenumberCm1
		f.ScaledFrequenciesCm1[p] = sc.Frequency * m.WavenumberCm1
		f.ReducedMassesU[p] = m.ReducedMassU
		f.ForceConstants[p] = m.ForceConstantMdynA
		f.Descriptions[p] = m.Description
		if a.HasIntensities {
			f.IRIntensities[p] = m.IRIntensityKmMol
		}
		if m.WavenumberCm1 < 0 {
			f.ImaginaryCount++
		}
		fm := FileMode{Number: p + 1, WavenumberCm1: m.WavenumberCm1, ScaledCm1: sc.Frequency * m.WavenumberCm1,
			IRIntensityKmMol: m.IRIntensityKmMol, ReducedMassU: m.ReducedMassU, ForceConstantMdynA: m.ForceConstantMdynA,
			Description: m.Description, Motions: []FileMotion{}}
		for _, mo := range m.Motions {
			at := make([]int, len(mo.Atoms))
			for i, x := range mo.Atoms {
				at[i] = x + 1
			}
			fm.Motions = append(fm.Motions, FileMotion{Kind: mo.Kind, Atoms: at, Label: mo.Label, Amplitude: mo.Amplitude, Share: mo.Share})
		}
		fm.Displacement = make([][3]float64, len(m.Displacement)/3)
		for i := range fm.Displacement {
			copy(fm.Displacement[i][:], m.Displacement[3*i:3*i+3])
		}
		f.Modes[p] = fm
	}
	f.ZPEHartree = a.ZeroPointHartree
	f.ScaledZPEHartree = sc.ZPE * a.ZeroPointHartree
	f.RigidBodyCm1 = append([]float64{}, a.RigidBodyCm1...)
	f.Scaling = &FileScaling{Frequency: sc.Frequency, FrequencySource: sc.FrequencySource, ZPE: sc.ZPE, ZPESource: sc.ZPESource,
		Enthalpy: sc.Enthalpy, Entropy: sc.Entropy,
		Note: "frequency_factor scaled scaled_frequencies_cm1; zero_point_factor scaled scaled_zero_point_energy_hartree; frequencies_cm1 and zero_point_energy_hartree are unscaled"}
}
