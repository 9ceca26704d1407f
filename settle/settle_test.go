package settle

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/xc"
	"poise/freq"
	"poise/gradient"
	"poise/thermo"
)

// Saddle points used as starts.
const (
	// planarNH3 is ammonia flattened to D3h: the transition state of its
	// inversion.
	planarNH3 = `4
planar ammonia
N 0.000000 0.000000 0.000000
H 1.000000 0.000000 0.000000
H -0.500000 0.866025 0.000000
H -0.500000 -0.866025 0.000000
`
	// eclipsedEthane is ethane with both methyl groups eclipsed (D3h):
	// the transition state of its internal rotation.
	eclipsedEthane = `8
eclipsed ethane
C 0.000000 0.000000 0.770000
C 0.000000 0.000000 -0.770000
H 1.020000 0.000000 1.160000
H -0.510000 0.883346 1.160000
H -0.510000 -0.883346 1.160000
H 1.020000 0.000000 -1.160000
H -0.510000 0.883346 -1.160000
H -0.510000 -0.883346 -1.160000
`
)

func parse(t testing.TB, xyz string) *molecule.Molecule {
	t.Helper()
	m, err := molecule.ParseXYZ("test.xyz", []byte(xyz))
	if err != nil {
		t.Fatal(err)
	}
	if err := m.SetSpin(0, 0); err != nil {
		t.Fatal(err)
	}
	return m
}

func hfLevel(t testing.TB, basisName string) Level {
	t.Helper()
	set, err := basis.Load(basisName)
	if err != nil {
		t.Fatal(err)
	}
	fn, err := xc.Lookup("hf")
	if err != nil {
		t.Fatal(err)
	}
	lvl := Level{Basis: set, Convention: basis.Default, Method: fn}
	lvl.SCF.Threads = 2
	return lvl
}

// counting wraps the SCF surfaces built by Run and counts their
// evaluations.
type counting struct {
	mu    sync.Mutex
	surfs []gradient.Surface
}

func (c *counting) factory(mol *molecule.Molecule, l Level) (gradient.Surface, error) {
	s, err := gradient.NewSCFSurface(mol, gradient.Config{Basis: l.Basis, Convention: l.Convention, Method: l.Method,
		GridLevel: l.GridLevel, SCF: l.SCF, Dispersion: l.Dispersion})
	if err != nil {
		return nil, err
	}
	c.mu.Lock()
	c.surfs = append(c.surfs, s)
	c.mu.Unlock()
	return s, nil
}

func (c *counting) evaluations() int {
	c.mu.Lock()
	defer c.mu.Unlock()
	n := 0
	for _, s := range c.surfs {
		n += s.Evaluations()
	}
	return n
}

func distanceAngstrom(g [][3]float64, i, j int) float64 {
	d := 0.0
	for k := 0; k < 3; k++ {
		d += (g[i][k] - g[j][k]) * (g[i][k] - g[j][k])
	}
	return math.Sqrt(d)
}

func angleDeg(g [][3]float64, i, j, k int) float64 {
	var a, b [3]float64
	for c := 0; c < 3; c++ {
		a[c], b[c] = g[i][c]-g[j][c], g[k][c]-g[j][c]
	}
	dot := a[0]*b[0] + a[1]*b[1] + a[2]*b[2]
	return math.Acos(dot/(math.Sqrt(a[0]*a[0]+a[1]*a[1]+a[2]*a[2])*math.Sqrt(b[0]*b[0]+b[1]*b[1]+b[2]*b[2]))) * 180 / math.Pi
}

// A saddle-point start ends as a confirmed minimum, and a second identical
// run is served by the store without any SCF.
func TestSaddleStartEndsAtMinimumAndIsStored(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	cases := []struct {
		name, xyz string
		// pointGroup of the minimum (from the known structures: pyramidal
		// ammonia C3v, staggered ethane D3d).
		pointGroup string
		check      func(t *testing.T, s *Summary)
	}{
		{"planar NH3", planarNH3, "C3v", func(t *testing.T, s *Summary) {
			// HF/3-21G ammonia: r(NH) 1.003 Å, ∠HNH 112.4° (NIST CCCBDB,
			// calculated geometries; from memory).
			if r := distanceAngstrom(s.GeometryAngstrom, 0, 1); math.Abs(r-1.003) > 0.005 {
				t.Errorf("r(NH) = %.4f Å, want 1.003 ± 0.005", r)
			}
			if a := angleDeg(s.GeometryAngstrom, 1, 0, 2); math.Abs(a-112.4) > 1.0 {
				t.Errorf("HNH = %.2f°, want 112.4 ± 1", a)
			}
		}},
		{"eclipsed ethane", eclipsedEthane, "D3d", func(t *testing.T, s *Summary) {
			// Staggered ethane at HF/3-21G: r(CC) 1.542 Å (NIST CCCBDB,
			// calculated geometries; from memory).
			if r := distanceAngstrom(s.GeometryAngstrom, 0, 1); math.Abs(r-1.542) > 0.01 {
				t.Errorf("r(CC) = %.4f Å, want 1.542 ± 0.01", r)
			}
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			mol := parse(t, tc.xyz)
			lvl := hfLevel(t, "3-21g")
			store, err := OpenStore(t.TempDir())
			if err != nil {
				t.Fatal(err)
			}
			var cnt counting
			opts := DefaultOptions()
			opts.ProgramVersion = "test"
			opts.Store = store
			opts.NewSurface = cnt.factory
			res, err := Run(context.Background(), mol, lvl, opts)
			if err != nil {
				t.Fatal(err)
			}
			s := res.Summary
			if s.Verdict != VerdictMinimum || s.ImaginaryCount != 0 {
				t.Fatalf("verdict %q with %d imaginary modes %v; want a minimum", s.Verdict, s.ImaginaryCount, s.ImaginaryCm1)
			}
			if s.Cycles < 1 {
				t.Errorf("%d displacement cycles: a saddle-point start needs at least one", s.Cycles)
			}
			if s.PointGroup != tc.pointGroup {
				t.Errorf("point group %s, want %s", s.PointGroup, tc.pointGroup)
			}
			if s.FrequenciesCm1[0] <= 0 {
				t.Errorf("lowest wavenumber %.1f cm⁻¹ at a confirmed minimum", s.FrequenciesCm1[0])
			}
			tc.check(t, s)
			if cnt.evaluations() == 0 || s.Evaluations != cnt.evaluations() {
				t.Errorf("summary counts %d evaluations, surfaces %d", s.Evaluations, cnt.evaluations())
			}

			// Second run: from the store, no evaluation at all.
			var cnt2 counting
			opts.NewSurface = cnt2.factory
			again, err := Run(context.Background(), mol, lvl, opts)
			if err != nil {
				t.Fatal(err)
			}
			if !again.Reused || cnt2.evaluations() != 0 || len(cnt2.surfs) != 0 {
				t.Errorf("second run: reused %v, %d surfaces, %d evaluations; want the stored result and no SCF",
					again.Reused, len(cnt2.surfs), cnt2.evaluations())
			}
			if again.Summary.GibbsHartree != s.GibbsHartree || again.Summary.Key != s.Key {
				t.Errorf("stored Gibbs energy %.10f (key %s), computed %.10f (key %s)", again.Summary.GibbsHartree, again.Summary.Key, s.GibbsHartree, s.Key)
			}
		})
	}
}

// With no displacement cycle allowed, a saddle point stays one.
func TestNoCyclesLeavesSaddle(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxation and Hessian")
	}
	opts := DefaultOptions()
	opts.MaxCycles = 0
	res, err := Run(context.Background(), parse(t, planarNH3), hfLevel(t, "sto-3g"), opts)
	if err != nil {
		t.Fatal(err)
	}
	s := res.Summary
	// The inversion mode of planar ammonia is its one imaginary mode
	// (D3h saddle point of the umbrella inversion; textbook chemistry).
	if s.Verdict != VerdictNotMinimum || s.ImaginaryCount != 1 || len(s.ImaginaryCm1) != 1 || s.ImaginaryCm1[0] >= -NoiseThresholdHFCm1 {
		t.Errorf("verdict %q, %d imaginary modes %v; want not a minimum with one", s.Verdict, s.ImaginaryCount, s.ImaginaryCm1)
	}
}

// The Summary's thermochemistry is that of package thermo at the same
// conditions, and At reproduces it.
func TestSummaryAt(t *testing.T) {
	// N2: r 1.0977 Å, ωe 2358.6 cm⁻¹ (Huber & Herzberg, Constants of
	// Diatomic Molecules, 1979; from memory).
	s := &Summary{Symbols: []string{"N", "N"}, MassesU: []float64{14.00307400443, 14.00307400443},
		GeometryAngstrom: [][3]float64{{0, 0, 0}, {0, 0, 1.0977}}, FrequenciesCm1: []float64{2358.6},
		Multiplicity: 1, EnergyHartree: -1.0}
	p, err := s.At(thermo.DefaultConditions())
	if err != nil {
		t.Fatal(err)
	}
	// N2 standard entropy 191.61 J/(mol K) at 298.15 K, 1 bar (CODATA Key
	// Values for Thermodynamics, 1989; from memory); the rigid rotor and
	// harmonic oscillator give it within 0.1 J/(mol K).
	if math.Abs(p.EntropyJPerMolK-191.61) > 0.1 {
		t.Errorf("S(N2) = %.3f J/(mol K), want 191.61", p.EntropyJPerMolK)
	}
	if math.Abs(p.AbsoluteEnthalpyHartree-(-1+p.EnthalpyHartree)) > 1e-15 {
		t.Errorf("absolute enthalpy %.12f is not E + correction", p.AbsoluteEnthalpyHartree)
	}
}

func TestKeyChangesWithInputs(t *testing.T) {
	mol := parse(t, planarNH3)
	lvl := hfLevel(t, "sto-3g")
	base := DefaultOptions()
	base.ProgramVersion = "1"
	k0 := Key(mol, lvl, base)
	if Key(mol, lvl, base) != k0 {
		t.Fatal("Key is not deterministic")
	}
	threads := lvl
	threads.SCF.Threads = 1
	if Key(mol, threads, base) != k0 {
		t.Error("the thread count changed the key; it does not change the numbers")
	}
	moved := mol.Clone()
	moved.Atoms[1].Position[0] += 1e-9
	charged := mol.Clone()
	charged.Charge = 1
	charged.Multiplicity = 2
	other := hfLevel(t, "3-21g")
	cart := lvl
	cart.Convention = basis.Cartesian
	tight := lvl
	tight.SCF.EnergyTolerance = 1e-12
	dft := lvl
	b3, err := xc.Lookup("b3lyp")
	if err != nil {
		t.Fatal(err)
	}
	dft.Method = b3
	grid := dft
	grid.GridLevel = 5
	ver := base
	ver.ProgramVersion = "2"
	step := base
	step.StepBohr = 0.005
	temp := base
	temp.TemperatureK = 500
	energyAt := base
	energyAt.EnergyAt = &other
	for _, c := range []struct {
		name string
		key  string
	}{
		{"geometry", Key(moved, lvl, base)},
		{"charge", Key(charged, lvl, base)},
		{"basis", Key(mol, other, base)},
		{"convention", Key(mol, cart, base)},
		{"SCF threshold", Key(mol, tight, base)},
		{"method", Key(mol, dft, base)},
		{"grid", Key(mol, grid, base)},
		{"version", Key(mol, lvl, ver)},
		{"step", Key(mol, lvl, step)},
		{"temperature", Key(mol, lvl, temp)},
		{"energy level", Key(mol, lvl, energyAt)},
	} {
		if c.key == k0 {
			t.Errorf("changing the %s left the key unchanged", c.name)
		}
	}
}

func TestStoreCorruptAndConcurrent(t *testing.T) {
	dir := t.TempDir()
	st, err := OpenStore(dir)
	if err != nil {
		t.Fatal(err)
	}
	key := Key(parse(t, planarNH3), hfLevel(t, "sto-3g"), DefaultOptions())
	if _, ok := st.Get(key); ok {
		t.Fatal("empty store returned an entry")
	}
	res := fakeResult()
	var wg sync.WaitGroup
	errs := make([]error, 8)
	for i := range errs {
		wg.Add(1)
		go func(i int) {
			defer wg.Done()
			errs[i] = st.Put(key, res)
		}(i)
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	got, ok := st.Get(key)
	if !ok || got.Summary.EnergyHartree != res.Summary.EnergyHartree {
		t.Fatalf("after concurrent writes: ok %v", ok)
	}
	files, _ := filepath.Glob(filepath.Join(dir, key[:2], "*"))
	if len(files) != 1 {
		t.Errorf("%d files for one entry (%v); want one and no temporaries", len(files), files)
	}
	for _, bad := range []string{"", "{", `{"format":"other"}`, "null"} {
		if err := os.WriteFile(st.path(key), []byte(bad), 0o644); err != nil {
			t.Fatal(err)
		}
		if _, ok := st.Get(key); ok {
			t.Errorf("corrupt entry %q accepted", bad)
		}
	}
	if err := st.Put("not-a-key", res); err == nil {
		t.Error("Put accepted a malformed key")
	}
}

func fakeResult() *Result {
	s := &Summary{Verdict: VerdictMinimum, ImaginaryCm1: []float64{}, EnergyHartree: -56.1, Symbols: []string{"N"},
		GeometryAngstrom: [][3]float64{{0, 0, 0}}, MassesU: []float64{14.003074}}
	return &Result{Summary: s, Modes: &freq.File{Symbols: []string{"N"}}}
}

func TestRotatableBonds(t *testing.T) {
	read := func(name string) *molecule.Molecule {
		m, err := molecule.ReadXYZFile(filepath.Join("..", "testdata", "molecules", name))
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	for _, c := range []struct {
		name string
		mol  *molecule.Molecule
		want int
	}{
		// Butane has one rotatable bond (the central C–C), ethane and
		// benzene none (methyl rotors and ring bonds do not count; common
		// practice of rotatable-bond counts).
		{"butane", read("butane-anti.xyz"), 1},
		{"benzene", read("benzene.xyz"), 0},
		{"ethane", parse(t, eclipsedEthane), 0},
		{"water", read("water.xyz"), 0},
	} {
		got := RotatableBonds(atomicNumbers(c.mol), gradient.Coordinates(c.mol))
		if got != c.want {
			t.Errorf("%s: %d rotatable bonds, want %d", c.name, got, c.want)
		}
	}
}

// --energy-at: the final energy is the single point of that level on the
// settled geometry, and H and G add the settle level's corrections to it;
// the prerelaxation is recorded.
func TestEnergyAtAndPrerelax(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	mol := parse(t, planarNH3)
	lvl := hfLevel(t, "sto-3g")
	hi := hfLevel(t, "3-21g")
	pre := hfLevel(t, "sto-3g")
	opts := DefaultOptions()
	opts.EnergyAt = &hi
	opts.Prerelax = &pre
	res, err := Run(context.Background(), mol, lvl, opts)
	if err != nil {
		t.Fatal(err)
	}
	s := res.Summary
	if s.EnergyLevel != "HF/3-21G" || s.PrerelaxLevel != "HF/STO-3G" || s.LevelOfTheory != "HF/STO-3G" {
		t.Errorf("levels: energy %q, prerelax %q, settle %q", s.EnergyLevel, s.PrerelaxLevel, s.LevelOfTheory)
	}
	final := mol.Clone()
	for i := range final.Atoms {
		for k := 0; k < 3; k++ {
			final.Atoms[i].Position[k] = s.GeometryAngstrom[i][k] / 0.529177210903 // CODATA 2018 bohr in Å
		}
	}
	surf, err := gradient.NewSCFSurface(final, gradient.Config{Basis: hi.Basis, Method: hi.Method, SCF: hi.SCF})
	if err != nil {
		t.Fatal(err)
	}
	var p gradient.Point
	if err := surf.Evaluate(context.Background(), gradient.Coordinates(final), gradient.Request{}, &p); err != nil {
		t.Fatal(err)
	}
	if math.Abs(p.EnergyHartree-s.EnergyHartree) > 1e-7 {
		t.Errorf("energy at HF/3-21G %.10f, single point %.10f", s.EnergyHartree, p.EnergyHartree)
	}
	if math.Abs(s.EnergyHartree-s.SettleEnergyHartree) < 0.1 {
		t.Errorf("3-21G and STO-3G energies %.6f and %.6f should differ by far more than 0.1 Eh", s.EnergyHartree, s.SettleEnergyHartree)
	}
	if math.Abs(s.EnthalpyHartree-(s.EnergyHartree+s.EnthalpyCorrectionHartree)) > 1e-12 ||
		math.Abs(s.GibbsHartree-(s.EnergyHartree+s.GibbsCorrectionHartree)) > 1e-12 {
		t.Errorf("H %.10f, G %.10f are not E %.10f plus the corrections", s.EnthalpyHartree, s.GibbsHartree, s.EnergyHartree)
	}
}
