package freq

import (
	"fmt"
	"strconv"
	"strings"
)

// ScaleFactors are empirical factors that bring harmonic results of a
// level of theory closer to experiment. A zero field has no published
// value; Source says where the numbers come from.
type ScaleFactors struct {
	Method, Basis string
	// Frequency scales fundamental wavenumbers.
	Frequency float64
	// ZPE scales the zero-point energy.
	ZPE float64
	// Enthalpy and Entropy scale the wavenumbers entering the
	// vibrational thermal enthalpy H(T) − H(0) and the vibrational entropy
	// at 298 K (0: none published here).
	Enthalpy, Entropy float64
	Source            string
}

const (
	scottRadom = "A. P. Scott, L. Radom, J. Phys. Chem. 100, 16502 (1996), Table (from memory)"
	cccbdb     = "NIST CCCBDB vibrational scaling factor listing (from memory)"
)

// scaleTable is the built-in table: method as named by package xc, basis
// as named by package basis.
var scaleTable = []ScaleFactors{
	// Scott & Radom (1996): frequency, ZPE, ΔH_vib(T), S_vib(T) factors.
	{Method: "hf", Basis: "3-21G", Frequency: 0.9085, ZPE: 0.9207, Enthalpy: 0.9444, Entropy: 0.9666, Source: scottRadom},
	{Method: "hf", Basis: "6-31G*", Frequency: 0.8953, ZPE: 0.9135, Enthalpy: 0.8905, Entropy: 0.8978, Source: scottRadom},
	{Method: "hf", Basis: "6-31+G*", Frequency: 0.8970, ZPE: 0.9153, Enthalpy: 0.8945, Entropy: 0.9027, Source: scottRadom},
	{Method: "hf", Basis: "6-31G**", Frequency: 0.8992, ZPE: 0.9181, Enthalpy: 0.8912, Entropy: 0.8998, Source: scottRadom},
	{Method: "hf", Basis: "6-311G**", Frequency: 0.9051, ZPE: 0.9248, Enthalpy: 0.8960, Entropy: 0.9021, Source: scottRadom},
	{Method: "b3lyp", Basis: "6-31G*", Frequency: 0.9614, ZPE: 0.9806, Enthalpy: 0.9989, Entropy: 1.0015, Source: scottRadom},
	{Method: "blyp", Basis: "6-31G*", Frequency: 0.9945, ZPE: 1.0126, Enthalpy: 1.0633, Entropy: 1.0670, Source: scottRadom},
	// A frequency factor only.
	{Method: "hf", Basis: "STO-3G", Frequency: 0.817, Source: cccbdb},
}

// LookupScale returns the built-in factors of a level of theory (method
// name as in package xc, case-insensitive; basis name as in package
// basis), and whether there are any.
func LookupScale(method, basis string) (ScaleFactors, bool) {
	m := strings.ToLower(strings.TrimSpace(method))
	b := strings.ToUpper(strings.TrimSpace(basis))
	for _, f := range scaleTable {
		if f.Method == m && strings.ToUpper(f.Basis) == b {
			return f, true
		}
	}
	return ScaleFactors{}, false
}

// ScaleTable returns a copy of the built-in table.
func ScaleTable() []ScaleFactors { return append([]ScaleFactors(nil), scaleTable...) }

// Scaling says which factor fed which number.
type Scaling struct {
	// Frequency scaled the wavenumbers, ZPE the zero-point energy;
	// Enthalpy and Entropy are passed on where published (0 otherwise).
	Frequency, ZPE, Enthalpy, Entropy float64
	// FrequencySource and ZPESource explain each factor.
	FrequencySource, ZPESource string
	// Auto is true for factors from the built-in table, Found when the
	// table had the level.
	Auto, Found bool
}

// ChooseScaling resolves a --scale setting: "auto" (the built-in factors
// of the level, or 1 with an explanation when there are none), "none" (1),
// or a number (used for the wavenumbers and the zero-point energy alike).
func ChooseScaling(setting, method, basis string) (Scaling, error) {
	s := strings.ToLower(strings.TrimSpace(setting))
	switch s {
	case "auto", "":
		f, ok := LookupScale(method, basis)
		if !ok {
			src := fmt.Sprintf("no built-in factor for %s/%s: unscaled (1)", strings.ToUpper(method), basis)
			return Scaling{Frequency: 1, ZPE: 1, FrequencySource: src, ZPESource: src, Auto: true}, nil
		}
		sc := Scaling{Frequency: f.Frequency, ZPE: f.ZPE, Enthalpy: f.Enthalpy, Entropy: f.Entropy,
			FrequencySource: fmt.Sprintf("frequency factor for %s/%s, %s", strings.ToUpper(method), f.Basis, f.Source),
			ZPESource:       fmt.Sprintf("zero-point factor for %s/%s, %s", strings.ToUpper(method), f.Basis, f.Source),
			Auto:            true, Found: true}
		if f.ZPE == 0 {
			sc.ZPE = f.Frequency
			sc.ZPESource = fmt.Sprintf("no separate zero-point factor for %s/%s: the frequency factor, %s", strings.ToUpper(method), f.Basis, f.Source)
		}
		return sc, nil
	case "none", "off", "1":
		return Scaling{Frequency: 1, ZPE: 1, FrequencySource: "unscaled", ZPESource: "unscaled"}, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || !(v > 0.5 && v < 1.5) {
		return Scaling{}, fmt.Errorf("--scale %q: give auto, none, or a factor between 0.5 and 1.5 (e.g. 0.96)", setting)
	}
	src := fmt.Sprintf("factor %g given by the user", v)
	return Scaling{Frequency: v, ZPE: v, FrequencySource: src, ZPESource: src}, nil
}
