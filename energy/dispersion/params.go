package dispersion

import (
	"errors"
	"fmt"
	"strings"
)

// Params are the Becke–Johnson damping parameters of one functional:
// E = −Σ s6 C6/(r⁶ + R0⁶) + s8 C8/(r⁸ + R0⁸), R0 = a1 sqrt(C8/C6) + a2.
type Params struct {
	Functional string  // lower-case name of the row in damping_bj.tsv
	S6         float64 // scale of the C6 term
	A1         float64 // scale of the critical radius sqrt(C8/C6)
	S8         float64 // scale of the C8 term
	A2Bohr     float64 // offset of the damping radius, bohr
}

// ErrNoParams is wrapped by the error of ParamsFor for a functional that has
// no D3(BJ) parameters.
var ErrNoParams = errors.New("no D3(BJ) damping parameters")

// aliases maps method names that share another method's parameters to it:
// b3lyp5 (B3LYP with VWN5 correlation) uses the b3lyp row (issue 12).
var aliases = [...]struct{ name, target string }{{"b3lyp5", "b3lyp"}}

// ParamsFor returns the damping parameters of a functional, ignoring case
// and surrounding space ("B3LYP", "pbe0", "hf"). b3lyp5 gets the b3lyp
// parameters; the Functional field then says "b3lyp5". An unknown name is
// an error wrapping ErrNoParams that lists the available names.
func ParamsFor(functional string) (Params, error) {
	t, err := loadTables()
	if err != nil {
		return Params{}, fmt.Errorf("dispersion data: %w", err)
	}
	name := strings.ToLower(strings.TrimSpace(functional))
	target := name
	for _, a := range aliases {
		if a.name == name {
			target = a.target
		}
	}
	for _, p := range t.params {
		if p.Functional == target {
			p.Functional = name
			return p, nil
		}
	}
	return Params{}, fmt.Errorf("%w for %q: available for %s", ErrNoParams, functional, strings.Join(Functionals(), ", "))
}

// Functionals lists the names ParamsFor accepts, in the order of the data
// file, each alias right after the functional whose parameters it uses.
func Functionals() []string {
	t, err := loadTables()
	if err != nil {
		return nil
	}
	var names []string
	for _, p := range t.params {
		names = append(names, p.Functional)
		for _, a := range aliases {
			if a.target == p.Functional {
				names = append(names, a.name)
			}
		}
	}
	return names
}
