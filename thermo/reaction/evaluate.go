package reaction

import (
	"errors"
	"fmt"
	"math"

	"poise/energy/units"
	"poise/thermo"
)

// Caution is the warning printed with every reaction result.
const Caution = "These are model estimates with method errors of several kJ/mol or more; " +
	"they are not a substitute for calorimetry or a process-hazard assessment. " +
	"Defer to local codes and licensed practice for safety decisions."

// ConformerResult is what a computed structure contributes: its
// electronic energy and the input of its thermochemistry.
type ConformerResult struct {
	// Source names the structure (e.g. its XYZ file) in reports.
	Source string
	// EnergyHartree is the electronic energy (at the settled geometry, or
	// a higher-level single point on it).
	EnergyHartree float64
	// Input holds geometry, masses, frequencies and multiplicity; its own
	// EnergyHartree is not used.
	Input thermo.Input
}

// ConformerValue is one conformer at the conditions.
type ConformerValue struct {
	Source          string
	EnergyHartree   float64 // electronic
	ZPEHartree      float64
	EnthalpyHartree float64 // E + H_corr(T)
	GibbsHartree    float64 // E + G_corr(T, p)
	// GibbsStandardHartree is G at the standard state of K (1 bar).
	GibbsStandardHartree float64
	CpJPerMolK           float64
	// Population is the Boltzmann fraction exp(−G_i/RT)/Σ_j exp(−G_j/RT).
	Population float64
	Warnings   []string
}

// SpeciesValue is a species at the conditions.
type SpeciesValue struct {
	Name       string
	Conformers []ConformerValue
	// Lowest indexes the conformer of lowest G, which represents the
	// species.
	Lowest int
	// GibbsMixHartree is −RT ln Σ exp(−G_i/RT), the conformer mixture
	// free energy (= G for a single structure).
	GibbsMixHartree         float64
	GibbsMixStandardHartree float64
}

// Best is the conformer of lowest G.
func (s *SpeciesValue) Best() *ConformerValue { return &s.Conformers[s.Lowest] }

// ReactionValue holds the reaction quantities per mole of reaction as
// written, in hartree per formula unit (multiply by units.HartreeKJPerMol
// for kJ/mol).
type ReactionValue struct {
	Reaction
	DeltaEHartree   float64 // electronic
	DeltaZPEHartree float64
	DeltaHHartree   float64 // at T
	DeltaGHartree   float64 // at T and p, lowest-G conformers
	// DeltaGMixHartree uses the conformer mixture free energies.
	DeltaGMixHartree float64
	// DeltaGStandardHartree is ΔG° at the standard state of K (1 bar).
	DeltaGStandardHartree    float64
	DeltaGMixStandardHartree float64
	DeltaCpJPerMolK          float64
	// Log10K is log10 of K = exp(−ΔG°/RT); Log10KMix uses ΔG°_mix.
	Log10K    float64
	Log10KMix float64
}

// K is the equilibrium constant exp(−ΔG°/RT) (may be +Inf or 0 when it
// does not fit a float64; Log10K is always finite).
func (r ReactionValue) K() float64 { return math.Pow(10, r.Log10K) }

// KMix is the equilibrium constant of the conformer mixtures.
func (r ReactionValue) KMix() float64 { return math.Pow(10, r.Log10KMix) }

// Result is the evaluation of a set of reactions at one set of conditions.
type Result struct {
	Conditions thermo.Conditions
	// StandardConditions are those of K: the same temperature at 1 bar
	// (or the 1 mol/L state if Conditions asked for it).
	StandardConditions thermo.Conditions
	// Species in order of first appearance in the reactions.
	Species   []*SpeciesValue
	Reactions []ReactionValue
}

// Lookup returns the value of the species called name.
func (r *Result) Lookup(name string) (*SpeciesValue, bool) {
	for _, s := range r.Species {
		if s.Name == name {
			return s, true
		}
	}
	return nil, false
}

// Evaluate computes every reaction at cond from the species' conformers,
// with thermochemistry options opt (symmetry, low modes). Every species of
// every reaction must have at least one conformer.
func Evaluate(rxns []Reaction, species map[string][]ConformerResult, cond thermo.Conditions, opt thermo.Options) (*Result, error) {
	if len(rxns) == 0 {
		return nil, errors.New("no reactions to evaluate")
	}
	std := cond
	if std.StandardState == thermo.PressureState {
		std.PressurePa = units.StandardPressurePa
	}
	res := &Result{Conditions: cond, StandardConditions: std}
	index := map[string]*SpeciesValue{}
	for _, r := range rxns {
		for _, t := range append(append([]Term(nil), r.Reactants...), r.Products...) {
			if _, ok := index[t.Species]; ok {
				continue
			}
			sv, err := evaluateSpecies(t.Species, species[t.Species], cond, std, opt)
			if err != nil {
				return nil, err
			}
			index[t.Species] = sv
			res.Species = append(res.Species, sv)
		}
	}
	rt := units.Boltzmann * std.TemperatureK / units.HartreeJoule // hartree
	for _, r := range rxns {
		v := ReactionValue{Reaction: r}
		// Fixed order (reactants, then products, as written) so that the
		// sums do not depend on map iteration.
		terms := make([]Term, 0, len(r.Reactants)+len(r.Products))
		for _, t := range r.Reactants {
			terms = append(terms, Term{Coefficient: -t.Coefficient, Species: t.Species})
		}
		terms = append(terms, r.Products...)
		for _, t := range terms {
			nu, s := t.Coefficient, index[t.Species]
			b := s.Best()
			v.DeltaEHartree += nu * b.EnergyHartree
			v.DeltaZPEHartree += nu * b.ZPEHartree
			v.DeltaHHartree += nu * b.EnthalpyHartree
			v.DeltaGHartree += nu * b.GibbsHartree
			v.DeltaGStandardHartree += nu * b.GibbsStandardHartree
			v.DeltaGMixHartree += nu * s.GibbsMixHartree
			v.DeltaGMixStandardHartree += nu * s.GibbsMixStandardHartree
			v.DeltaCpJPerMolK += nu * b.CpJPerMolK
		}
		v.Log10K = -v.DeltaGStandardHartree / rt / math.Ln10
		v.Log10KMix = -v.DeltaGMixStandardHartree / rt / math.Ln10
		res.Reactions = append(res.Reactions, v)
	}
	return res, nil
}

func evaluateSpecies(name string, confs []ConformerResult, cond, std thermo.Conditions, opt thermo.Options) (*SpeciesValue, error) {
	if len(confs) == 0 {
		return nil, fmt.Errorf("species %q: no computed structure", name)
	}
	sv := &SpeciesValue{Name: name}
	for _, c := range confs {
		if math.IsNaN(c.EnergyHartree) || math.IsInf(c.EnergyHartree, 0) {
			return nil, fmt.Errorf("species %q, %s: the electronic energy must be finite", name, c.Source)
		}
		in := c.Input
		in.EnergyHartree, in.HasEnergy = c.EnergyHartree, true
		model, err := thermo.NewModel(in, opt)
		if err != nil {
			return nil, fmt.Errorf("species %q, %s: %w", name, c.Source, err)
		}
		p, err := model.Properties(cond)
		if err != nil {
			return nil, fmt.Errorf("species %q, %s: %w", name, c.Source, err)
		}
		ps, err := model.Properties(std)
		if err != nil {
			return nil, fmt.Errorf("species %q, %s: %w", name, c.Source, err)
		}
		sv.Conformers = append(sv.Conformers, ConformerValue{
			Source:               c.Source,
			EnergyHartree:        c.EnergyHartree,
			ZPEHartree:           p.ZeroPointEnergyHartree,
			EnthalpyHartree:      p.AbsoluteEnthalpyHartree,
			GibbsHartree:         p.AbsoluteGibbsHartree,
			GibbsStandardHartree: ps.AbsoluteGibbsHartree,
			CpJPerMolK:           p.CpJPerMolK,
			Warnings:             model.Warnings,
		})
	}
	g := make([]float64, len(sv.Conformers))
	gs := make([]float64, len(sv.Conformers))
	for i, c := range sv.Conformers {
		g[i], gs[i] = c.GibbsHartree, c.GibbsStandardHartree
		if c.GibbsHartree < sv.Conformers[sv.Lowest].GibbsHartree {
			sv.Lowest = i
		}
	}
	rt := units.Boltzmann * cond.TemperatureK / units.HartreeJoule
	var pop []float64
	sv.GibbsMixHartree, pop = MixtureGibbs(g, rt)
	sv.GibbsMixStandardHartree, _ = MixtureGibbs(gs, rt)
	for i := range sv.Conformers {
		sv.Conformers[i].Population = pop[i]
	}
	return sv, nil
}

// MixtureGibbs returns the conformer mixture free energy
// −kT ln Σ exp(−G_i/kT) and the populations exp(−G_i/kT)/Σ, for Gibbs
// energies g and kT in the same unit. It subtracts the lowest G first so
// that nothing overflows.
func MixtureGibbs(g []float64, kt float64) (float64, []float64) {
	if len(g) == 0 {
		return math.NaN(), nil
	}
	lo := g[0]
	for _, x := range g[1:] {
		lo = math.Min(lo, x)
	}
	pop := make([]float64, len(g))
	sum := 0.0
	for i, x := range g {
		pop[i] = math.Exp(-(x - lo) / kt)
		sum += pop[i]
	}
	for i := range pop {
		pop[i] /= sum
	}
	return lo - kt*math.Log(sum), pop
}
