package pointgroup

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/units"
)

// massU holds most-abundant-isotope masses (u) from AME 2020 (M. Wang et
// al., Chinese Phys. C 45, 030003 (2021)), as listed in the project's
// isotope table.
var massU = map[string]float64{
	"H":  1.0078250319,
	"B":  11.009305167,
	"C":  12.0,
	"N":  14.00307400425,
	"O":  15.9949146193,
	"F":  18.9984031621,
	"S":  31.9720711735,
	"Cl": 34.96885269,
	"Br": 78.9183376,
}

// site is an atom given in ångström.
type site struct {
	el      string
	x, y, z float64
}

func toAtoms(sites []site) []Atom {
	out := make([]Atom, len(sites))
	for i, s := range sites {
		out[i] = Atom{Label: s.el, Mass: massU[s.el],
			Position: [3]float64{s.x * units.AngstromBohr, s.y * units.AngstromBohr, s.z * units.AngstromBohr}}
	}
	return out
}

func deg(a float64) float64 { return a * math.Pi / 180 }

// ring places n atoms of el on a circle of radius r at height z, the first
// at angle phase (degrees).
func ring(el string, n int, r, z, phase float64) []site {
	var out []site
	for k := 0; k < n; k++ {
		a := deg(phase + 360*float64(k)/float64(n))
		out = append(out, site{el, r * math.Cos(a), r * math.Sin(a), z})
	}
	return out
}

func cat(parts ...[]site) []site {
	var out []site
	for _, p := range parts {
		out = append(out, p...)
	}
	return out
}

// orbit applies every operation of a group to the point p.
func orbit(el string, ops []mat, p vec) []site {
	var out []site
	for i := range ops {
		q := mulVec(&ops[i], p)
		out = append(out, site{el, q[0], q[1], q[2]})
	}
	return out
}

func mustGroup(t *testing.T, gens ...mat) []mat {
	t.Helper()
	ops := []mat{identity()}
	for i := 0; i < len(ops); i++ {
		for g := range gens {
			p := mulMat(&gens[g], &ops[i])
			known := false
			for k := range ops {
				if maxDiff(&p, &ops[k]) < 1e-9 {
					known = true
				}
			}
			if !known {
				ops = append(ops, p)
			}
		}
	}
	return ops
}

// Reasonable geometries: bond lengths and angles are experimental values
// rounded (from memory); the symmetry, not the precision, is what matters.
func water() []site {
	r, a := 0.9572, deg(104.52/2) // H2O, r_e and ∠HOH (from memory)
	return []site{{"O", 0, 0, 0}, {"H", r * math.Sin(a), 0, r * math.Cos(a)}, {"H", -r * math.Sin(a), 0, r * math.Cos(a)}}
}

func ammonia() []site {
	r, th := 1.012, deg(106.7) // NH3 (from memory)
	rho := 2 * r * math.Sin(th/2) / math.Sqrt(3)
	h := math.Sqrt(r*r - rho*rho)
	return cat([]site{{"N", 0, 0, h}}, ring("H", 3, rho, 0, 10))
}

func methane() []site {
	a := 1.087 / math.Sqrt(3) // CH4, r(C–H) 1.087 Å (from memory)
	return []site{{"C", 0, 0, 0}, {"H", a, a, a}, {"H", -a, -a, a}, {"H", -a, a, -a}, {"H", a, -a, -a}}
}

func benzene() []site {
	return cat(ring("C", 6, 1.397, 0, 0), ring("H", 6, 1.397+1.084, 0, 0)) // (from memory)
}

func ethylene() []site {
	cc, ch, a := 1.339, 1.087, deg(117.4/2) // C2H4 (from memory)
	x := cc/2 + ch*math.Cos(a)
	y := ch * math.Sin(a)
	return []site{{"C", cc / 2, 0, 0}, {"C", -cc / 2, 0, 0},
		{"H", x, y, 0}, {"H", x, -y, 0}, {"H", -x, y, 0}, {"H", -x, -y, 0}}
}

func hydrogenPeroxide() []site {
	oo, oh, a, phi := 1.475, 0.950, deg(94.8), deg(111.5) // H2O2 (from memory)
	s, c := oh*math.Sin(a), oh*math.Cos(a)
	return []site{{"O", -oo / 2, 0, 0}, {"O", oo / 2, 0, 0},
		{"H", -oo/2 + c, s * math.Cos(phi/2), s * math.Sin(phi/2)},
		{"H", oo/2 - c, s * math.Cos(phi/2), -s * math.Sin(phi/2)}}
}

func bromochlorofluoromethane() []site {
	d := []vec{{1, 1, 1}, {-1, -1, 1}, {-1, 1, -1}, {1, -1, -1}}
	bond := []float64{1.09, 1.35, 1.76, 1.93} // C–H, C–F, C–Cl, C–Br (from memory)
	el := []string{"H", "F", "Cl", "Br"}
	out := []site{{"C", 0, 0, 0}}
	for i := range d {
		f := bond[i] / math.Sqrt(3)
		out = append(out, site{el[i], f * d[i][0], f * d[i][1], f * d[i][2]})
	}
	return out
}

func cyclohexaneChair() []site {
	var out []site
	rho, h, ch, beta := 1.45, 0.25, 1.09, deg(19.5)
	for k := 0; k < 6; k++ {
		a := deg(60 * float64(k))
		s := 1.0
		if k%2 == 1 {
			s = -1
		}
		x, y, z := rho*math.Cos(a), rho*math.Sin(a), s*h
		out = append(out, site{"C", x, y, z}, site{"H", x, y, z + s*ch},
			site{"H", x + ch*math.Cos(a)*math.Cos(beta), y + ch*math.Sin(a)*math.Cos(beta), z - s*ch*math.Sin(beta)})
	}
	return out
}

func allene() []site {
	return []site{{"C", 0, 0, 0}, {"C", 0, 0, 1.308}, {"C", 0, 0, -1.308},
		{"H", 0.93, 0, 1.86}, {"H", -0.93, 0, 1.86}, {"H", 0, 0.93, -1.86}, {"H", 0, -0.93, -1.86}}
}

func ethane(staggered bool) []site {
	phase := 0.0
	if staggered {
		phase = 60
	}
	return cat([]site{{"C", 0, 0, 0.765}, {"C", 0, 0, -0.765}},
		ring("H", 3, 1.02, 1.125, 0), ring("H", 3, 1.02, -1.125, phase))
}

// c60 is the truncated icosahedron: the even permutations of (0, ±1, ±3φ),
// (±1, ±(2+φ), ±2φ) and (±φ, ±2, ±φ³), edge 2, scaled to a 1.40 Å edge.
func c60() []site {
	phi := (1 + math.Sqrt(5)) / 2
	base := []vec{{0, 1, 3 * phi}, {1, 2 + phi, 2 * phi}, {phi, 2, phi * phi * phi}}
	seen := map[[3]int64]bool{}
	var out []site
	for _, b := range base {
		for sx := -1.0; sx <= 1; sx += 2 {
			for sy := -1.0; sy <= 1; sy += 2 {
				for sz := -1.0; sz <= 1; sz += 2 {
					v := vec{sx * b[0], sy * b[1], sz * b[2]}
					for c := 0; c < 3; c++ {
						p := vec{v[c%3], v[(c+1)%3], v[(c+2)%3]}
						key := [3]int64{int64(math.Round(p[0] * 1e6)), int64(math.Round(p[1] * 1e6)), int64(math.Round(p[2] * 1e6))}
						if seen[key] {
							continue
						}
						seen[key] = true
						out = append(out, site{"C", 0.7 * p[0], 0.7 * p[1], 0.7 * p[2]})
					}
				}
			}
		}
	}
	return out
}

type groupCase struct {
	name   string
	sites  []site
	symbol string
	sigma  int
}

func groupCases(t *testing.T) []groupCase {
	ez := vec{0, 0, 1}
	s4 := mustGroup(t, improper(ez, 4))
	c3 := rotation(scale(1/math.Sqrt(3), vec{1, 1, 1}), 2*math.Pi/3)
	tGroup := mustGroup(t, rotation(ez, math.Pi), rotation(vec{1, 0, 0}, math.Pi), c3)
	oGroup := mustGroup(t, rotation(ez, math.Pi/2), rotation(vec{1, 0, 0}, math.Pi/2))
	phi := (1 + math.Sqrt(5)) / 2
	u5, _ := unit(vec{0, 1, phi}, 0)
	iGroup := mustGroup(t, rotation(ez, math.Pi), c3, rotation(u5, 2*math.Pi/5))
	if len(tGroup) != 12 || len(oGroup) != 24 || len(iGroup) != 60 || len(s4) != 4 {
		t.Fatalf("test groups have orders %d %d %d %d", len(tGroup), len(oGroup), len(iGroup), len(s4))
	}
	// Point groups and σ: the character tables and the symmetry-number rule
	// σ = number of proper rotations (Herzberg 1945; from memory).
	return []groupCase{
		{"Ar", []site{{"Ar", 0.3, -0.2, 1}}, "Kh", 1},
		{"H2O", water(), "C2v", 2},
		{"NH3", ammonia(), "C3v", 3},
		{"CH4", methane(), "Td", 12},
		{"C6H6", benzene(), "D6h", 12},
		{"C2H4", ethylene(), "D2h", 4},
		{"CO2", []site{{"C", 0, 0, 0}, {"O", 0, 0, 1.16}, {"O", 0, 0, -1.16}}, "D∞h", 2},
		{"HCN", []site{{"H", 0, 0, -1.066}, {"C", 0, 0, 0}, {"N", 0, 0, 1.153}}, "C∞v", 1},
		{"N2", []site{{"N", 0, 0, 0}, {"N", 0, 0, 1.0977}}, "D∞h", 2},
		{"SF6", []site{{"S", 0, 0, 0}, {"F", 1.56, 0, 0}, {"F", -1.56, 0, 0}, {"F", 0, 1.56, 0},
			{"F", 0, -1.56, 0}, {"F", 0, 0, 1.56}, {"F", 0, 0, -1.56}}, "Oh", 24},
		{"H2O2", hydrogenPeroxide(), "C2", 2},
		{"CHFClBr", bromochlorofluoromethane(), "C1", 1},
		{"C6H12 chair", cyclohexaneChair(), "D3d", 6},
		{"allene", allene(), "D2d", 4},
		{"C2H6 staggered", ethane(true), "D3d", 6},
		{"C2H6 eclipsed", ethane(false), "D3h", 6},
		{"BF3", cat([]site{{"B", 0, 0, 0}}, ring("F", 3, 1.313, 0, 0)), "D3h", 6},
		{"C60", c60(), "Ih", 60},
		{"HOCl", []site{{"O", 0, 0, 0}, {"H", 0.97, 0, 0},
			{"Cl", 1.69 * math.Cos(deg(102.5)), 1.69 * math.Sin(deg(102.5)), 0}}, "Cs", 1},
		{"trans-N2H2", []site{{"N", 0.62, 0, 0}, {"N", -0.62, 0, 0},
			{"H", 0.62 + 1.03*math.Cos(deg(74)), 1.03 * math.Sin(deg(74)), 0},
			{"H", -0.62 - 1.03*math.Cos(deg(74)), -1.03 * math.Sin(deg(74)), 0}}, "C2h", 2},
		// anti meso-CHFCl–CHFCl: substituents of one carbon are the
		// inversion images of the other's.
		{"meso CHFCl-CHFCl", []site{{"C", 0, 0, 0.77}, {"C", 0, 0, -0.77},
			{"H", 1.0, 0, 1.1}, {"F", -0.6, 1.1, 1.2}, {"Cl", -0.8, -1.4, 1.3},
			{"H", -1.0, 0, -1.1}, {"F", 0.6, -1.1, -1.2}, {"Cl", 0.8, 1.4, -1.3}}, "Ci", 1},
		// Two S4 orbits with different phases admit no mirror.
		{"S4 orbits", cat([]site{{"Si", 0, 0, 0}}, orbit("C", s4, vec{1.5, 0, 0.8}), orbit("H", s4, vec{2.2, 0.9, 1.6})), "S4", 2},
		// Orbits of a general point under the rotation groups T, O, I.
		{"T orbit", cat([]site{{"C", 0, 0, 0}}, orbit("H", tGroup, vec{0.9, 0.4, 1.7})), "T", 12},
		{"O orbit", cat([]site{{"S", 0, 0, 0}}, orbit("H", oGroup, vec{0.9, 0.4, 2.3})), "O", 24},
		{"I orbit", orbit("C", iGroup, vec{0.9, 0.4, 3.7}), "I", 60},
		{"Th orbit", cat([]site{{"C", 0, 0, 0}}, orbit("H", tGroup, vec{0.9, 0.4, 1.7}), orbit("H", tGroup, vec{-0.9, -0.4, -1.7})), "Th", 12},
	}
}

func init() {
	massU["Ar"] = 39.962383122 // AME 2020
	massU["Si"] = 27.97692653442
}

// randomMotion returns a random rotation and translation (bohr).
func randomMotion(rng *rand.Rand) (mat, vec) {
	for {
		u, ok := unit(vec{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}, 1e-3)
		if ok {
			return rotation(u, 2*math.Pi*rng.Float64()), vec{10 * rng.Float64(), -5 * rng.Float64(), 3}
		}
	}
}

func moved(atoms []Atom, r mat, t vec) []Atom {
	out := make([]Atom, len(atoms))
	for i, a := range atoms {
		a.Position = add(mulVec(&r, a.Position), t)
		out[i] = a
	}
	return out
}

func TestDetect(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, c := range groupCases(t) {
		t.Run(c.name, func(t *testing.T) {
			atoms := toAtoms(c.sites)
			for trial := 0; trial < 3; trial++ {
				in := atoms
				if trial > 0 {
					r, tr := randomMotion(rng)
					in = moved(atoms, r, tr)
				}
				got, err := Detect(in, 0)
				if err != nil {
					t.Fatal(err)
				}
				if got.Symbol != c.symbol || got.SymmetryNumber != c.sigma {
					t.Fatalf("trial %d: got %s σ=%d, want %s σ=%d (axes %v, mirrors %d, i %v)",
						trial, got.Symbol, got.SymmetryNumber, c.symbol, c.sigma, got.Axes, len(got.MirrorNormals), got.Inversion)
				}
			}
		})
	}
}

// TestSymmetrize perturbs each geometry by up to 1e-3 Å per atom and checks
// that symmetrization restores the group exactly (at a 1e-7 bohr tolerance).
func TestSymmetrize(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, c := range groupCases(t) {
		t.Run(c.name, func(t *testing.T) {
			atoms := toAtoms(c.sites)
			r, tr := randomMotion(rng)
			atoms = moved(atoms, r, tr)
			noisy := make([]Atom, len(atoms))
			for i, a := range atoms {
				for k := range a.Position {
					a.Position[k] += 1e-3 * units.AngstromBohr * (2*rng.Float64() - 1) / math.Sqrt(3)
				}
				noisy[i] = a
			}
			// Two atoms stay linear and three stay planar whatever the noise.
			if got, err := Detect(noisy, 1e-6); err != nil || (len(c.sites) > 3 && c.symbol != "C1" && got.Symbol == c.symbol) {
				t.Fatalf("the perturbed geometry is still %v (%v)", got, err)
			}
			sym, res, err := Symmetrize(noisy, 0)
			if err != nil {
				t.Fatal(err)
			}
			if res.Symbol != c.symbol {
				t.Fatalf("symmetrized to %s, want %s", res.Symbol, c.symbol)
			}
			tight, err := Detect(sym, 1e-7)
			if err != nil {
				t.Fatal(err)
			}
			if tight.Symbol != c.symbol {
				t.Fatalf("symmetrized geometry is %s at 1e-7 bohr, want %s", tight.Symbol, c.symbol)
			}
			for i := range sym {
				if d := norm(sub(sym[i].Position, noisy[i].Position)); d > 2e-3*units.AngstromBohr {
					t.Fatalf("atom %d moved by %.2g bohr", i+1, d)
				}
			}
		})
	}
}

func TestWaterSymmetrizedExactlyC2v(t *testing.T) {
	atoms := toAtoms(water())
	// Perturb each H by 1e-3 Å in different directions.
	atoms[1].Position[0] += 1e-3 * units.AngstromBohr
	atoms[2].Position[1] -= 1e-3 * units.AngstromBohr
	atoms[2].Position[2] += 1e-3 * units.AngstromBohr
	if pg, _ := Detect(atoms, 1e-5); pg.Symbol == "C2v" {
		t.Fatal("perturbed water is still C2v at a tight tolerance")
	}
	sym, _, err := Symmetrize(atoms, 0)
	if err != nil {
		t.Fatal(err)
	}
	pg, err := Detect(sym, 1e-10)
	if err != nil || pg.Symbol != "C2v" {
		t.Fatalf("symmetrized water: %v %v", pg, err)
	}
	// Both O–H bonds equal to rounding.
	d1 := norm(sub(sym[1].Position, sym[0].Position))
	d2 := norm(sub(sym[2].Position, sym[0].Position))
	if math.Abs(d1-d2) > 1e-12 {
		t.Fatalf("O–H bonds %.15g and %.15g", d1, d2)
	}
}

func TestDetectErrors(t *testing.T) {
	for _, c := range []struct {
		name  string
		atoms []Atom
	}{
		{"none", nil},
		{"zero mass", []Atom{{Label: "H", Mass: 0}}},
		{"NaN", []Atom{{Label: "H", Mass: 1, Position: [3]float64{math.NaN(), 0, 0}}}},
		{"overlap", []Atom{{Label: "H", Mass: 1}, {Label: "H", Mass: 1, Position: [3]float64{1e-4, 0, 0}}}},
	} {
		if _, err := Detect(c.atoms, 0); err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
}

func TestEigSym3(t *testing.T) {
	a := mat{{4, 1, -2}, {1, 2, 0.5}, {-2, 0.5, 3}}
	vals, vecs := eigSym3(a)
	for k := 0; k < 3; k++ {
		av := mulVec(&a, vecs[k])
		if norm(sub(av, scale(vals[k], vecs[k]))) > 1e-12 || math.Abs(norm(vecs[k])-1) > 1e-12 {
			t.Fatalf("eigenpair %d wrong: %v %v", k, vals[k], vecs[k])
		}
	}
	if !(vals[0] <= vals[1] && vals[1] <= vals[2]) {
		t.Fatalf("not ascending: %v", vals)
	}
	// Trace and determinant are invariants.
	if tr := vals[0] + vals[1] + vals[2]; math.Abs(tr-9) > 1e-12 {
		t.Fatalf("trace %v", tr)
	}
}

func BenchmarkDetectC60(b *testing.B) {
	atoms := toAtoms(c60())
	for b.Loop() {
		if _, err := Detect(atoms, 0); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkSymmetrizeC60(b *testing.B) {
	atoms := toAtoms(c60())
	for b.Loop() {
		if _, _, err := Symmetrize(atoms, 0); err != nil {
			b.Fatal(err)
		}
	}
}
