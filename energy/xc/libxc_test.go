//go:build libxc

package xc

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"poise/energy/xc/libxcref"
)

// Checks against libxc 5.2 (Debian libxc-dev), called through the cgo
// harness libxcref. Run with: go test -tags libxc ./energy/xc/...
//
// Criterion: |ours − libxc| ≤ 1e-10 · max(|libxc|, floor), i.e. relative
// error, where the floor only matters for quantities that vanish
// identically and so are round-off noise in libxc. The floor is
//   - for a sum of libxc functionals, Σ|coef·part| (PBE's gradient terms of
//     exchange and correlation cancel exactly at s = 0);
//   - for open-shell points also the magnitude of the same quantity at the
//     closed-shell density with the same ρ and |∇ρ|², and for derivatives
//     the largest of the point's derivatives of that kind (the energy of
//     LYP, ∂e/∂ρβ of Slater exchange, … vanish at full polarization).
//
// The tests log how many comparisons needed the floor.
const libxcTol = 1e-10

// libxcParts returns the libxc IDs and weights whose sum is our functional.
type libxcCase struct {
	name  string
	ours  func() *Functional
	parts []libxcPart
}

type libxcPart struct {
	id   int
	coef float64
}

func mustLookup(name string) func() *Functional {
	return func() *Functional {
		f, err := Lookup(name)
		if err != nil {
			panic(err)
		}
		return f
	}
}

func one(name string, terms ...term) func() *Functional {
	return func() *Functional { return newFunctional(name, 0, terms...) }
}

var libxcCases = []libxcCase{
	{"LDA_X 1", one("x", slaterTerm(1)), []libxcPart{{1, 1}}},
	{"LDA_C_VWN 7", one("c", vwnTerm(1, vwn5())), []libxcPart{{7, 1}}},
	{"LDA_C_VWN_RPA 8", one("c", vwnTerm(1, vwnRPA())), []libxcPart{{8, 1}}},
	{"LDA_C_PW 12", one("c", pwTerm(1, pwOriginal())), []libxcPart{{12, 1}}},
	{"LDA_C_PW_MOD 13", one("c", pwTerm(1, pwModified())), []libxcPart{{13, 1}}},
	{"GGA_X_B88 106", one("x", b88Term(1)), []libxcPart{{106, 1}}},
	{"GGA_C_LYP 131", one("c", lypTerm(1)), []libxcPart{{131, 1}}},
	{"GGA_X_PBE 101", one("x", pbexTerm(1)), []libxcPart{{101, 1}}},
	{"GGA_C_PBE 130", one("c", pbecTerm(1)), []libxcPart{{130, 1}}},
	{"b3lyp = HYB_GGA_XC_B3LYP 402", mustLookup("b3lyp"), []libxcPart{{402, 1}}},
	{"b3lyp5 = HYB_GGA_XC_B3LYP5 475", mustLookup("b3lyp5"), []libxcPart{{475, 1}}},
	{"pbe0 = HYB_GGA_XC_PBEH 406", mustLookup("pbe0"), []libxcPart{{406, 1}}},
	{"lda = LDA_X 1 + LDA_C_VWN 7", mustLookup("lda"), []libxcPart{{1, 1}, {7, 1}}},
	{"blyp = GGA_X_B88 106 + GGA_C_LYP 131", mustLookup("blyp"), []libxcPart{{106, 1}, {131, 1}}},
	{"pbe = GGA_X_PBE 101 + GGA_C_PBE 130", mustLookup("pbe"), []libxcPart{{101, 1}, {130, 1}}},
}

// points holds closed-shell (rho, sigma) and open-shell inputs.
type points struct {
	rho, sigma            []float64
	ra, rb, saa, sab, sbb []float64
}

// sigmaOf returns |∇ρ|² for density r and reduced gradient
// s = |∇ρ|/(2(3π²)^(1/3) ρ^(4/3)).
func sigmaOf(r, s float64) float64 {
	g := 2 * math.Cbrt(3*math.Pi*math.Pi) * math.Pow(r, 4.0/3.0) * s
	return g * g
}

// makePoints draws count closed-shell and count open-shell points:
// ρ log-uniform in [1e-8, 1e3], s uniform in [0, 10] (some exactly 0),
// ζ uniform in [−1, 1] with exact ±1 (ρσ = 0), 0 and 1 − 1e-9 mixed in,
// spin gradients in random relative directions.
func makePoints(seed uint64, count int) points {
	rng := rand.New(rand.NewPCG(seed, 7))
	var p points
	for i := 0; i < count; i++ {
		r := math.Pow(10, -8+11*rng.Float64())
		s := 10 * rng.Float64()
		if i%25 == 0 {
			s = 0
		}
		p.rho = append(p.rho, r)
		p.sigma = append(p.sigma, sigmaOf(r, s))

		n := math.Pow(10, -8+11*rng.Float64())
		zeta := 2*rng.Float64() - 1
		switch i % 20 {
		case 0:
			zeta = 1
		case 1:
			zeta = -1
		case 2:
			zeta = 0
		case 3:
			zeta = 1 - 1e-9
		case 4:
			zeta = -1 + 1e-6
		}
		ra, rb := n*(1+zeta)/2, n*(1-zeta)/2
		if zeta == 1 {
			rb = 0
		} else if zeta == -1 {
			ra = 0
		}
		ga := math.Sqrt(sigmaOf(ra, 10*rng.Float64()))
		gb := math.Sqrt(sigmaOf(rb, 10*rng.Float64()))
		if i%25 == 5 {
			ga, gb = 0, 0
		}
		cosT := 2*rng.Float64() - 1
		p.ra = append(p.ra, ra)
		p.rb = append(p.rb, rb)
		p.saa = append(p.saa, ga*ga)
		p.sbb = append(p.sbb, gb*gb)
		p.sab = append(p.sab, ga*gb*cosT)
	}
	return p
}

// refUnpol evaluates Σ coef·libxc on closed-shell points: e (per volume), vrho, vsigma.
// The second triple holds Σ|coef·part| of each.
func refUnpol(t *testing.T, parts []libxcPart, rho, sigma []float64) (e, vrho, vsigma []float64, abs [3][]float64) {
	t.Helper()
	n := len(rho)
	e, vrho, vsigma = make([]float64, n), make([]float64, n), make([]float64, n)
	for k := range abs {
		abs[k] = make([]float64, n)
	}
	for _, pt := range parts {
		f, err := libxcref.New(pt.id, false)
		if err != nil {
			t.Fatal(err)
		}
		zk, vr, vs := f.Eval(n, rho, sigma)
		for i := 0; i < n; i++ {
			e[i] += pt.coef * zk[i] * rho[i]
			vrho[i] += pt.coef * vr[i]
			abs[0][i] += math.Abs(pt.coef * zk[i] * rho[i])
			abs[1][i] += math.Abs(pt.coef * vr[i])
			if vs != nil {
				vsigma[i] += pt.coef * vs[i]
				abs[2][i] += math.Abs(pt.coef * vs[i])
			}
		}
		f.Close()
	}
	return e, vrho, vsigma, abs
}

// refPol evaluates Σ coef·libxc on open-shell points; outputs e, vrhoA,
// vrhoB, vsigmaAA, vsigmaAB, vsigmaBB, and Σ|coef·part| of each.
func refPol(t *testing.T, parts []libxcPart, p *points) (out, abs [6][]float64) {
	t.Helper()
	n := len(p.ra)
	for k := range out {
		out[k] = make([]float64, n)
		abs[k] = make([]float64, n)
	}
	rho := make([]float64, 2*n)
	sig := make([]float64, 3*n)
	for i := 0; i < n; i++ {
		rho[2*i], rho[2*i+1] = p.ra[i], p.rb[i]
		sig[3*i], sig[3*i+1], sig[3*i+2] = p.saa[i], p.sab[i], p.sbb[i]
	}
	for _, pt := range parts {
		f, err := libxcref.New(pt.id, true)
		if err != nil {
			t.Fatal(err)
		}
		zk, vr, vs := f.Eval(n, rho, sig)
		for i := 0; i < n; i++ {
			v := [6]float64{zk[i] * (p.ra[i] + p.rb[i]), vr[2*i], vr[2*i+1]}
			if vs != nil {
				v[3], v[4], v[5] = vs[3*i], vs[3*i+1], vs[3*i+2]
			}
			for k := range v {
				out[k][i] += pt.coef * v[k]
				abs[k][i] += math.Abs(pt.coef * v[k])
			}
		}
		f.Close()
	}
	return out, abs
}

// polFloors returns the floors of the six open-shell outputs at point i.
func polFloors(i int, abs [6][]float64, cse, csv, css []float64) [6]float64 {
	fv := max(math.Abs(csv[i]), abs[1][i], abs[2][i])
	fs := max(math.Abs(css[i]), abs[3][i], abs[4][i], abs[5][i])
	return [6]float64{max(math.Abs(cse[i]), abs[0][i]), fv, fv, fs, fs, fs}
}

// compare checks got against want with floor and reports failures.
type comparer struct {
	t        *testing.T
	name     string
	fails    int
	worst    float64
	floored  int
	compared int
}

func (c *comparer) check(what string, i int, got, want, floor float64, where string) {
	c.compared++
	diff := math.Abs(got - want)
	scale := math.Abs(want)
	if floor > scale {
		scale = floor
		if diff > libxcTol*math.Abs(want) {
			c.floored++
		}
	}
	rel := 0.0
	if diff > 0 {
		rel = diff / scale
	}
	if rel > c.worst {
		c.worst = rel
	}
	if !(diff <= libxcTol*scale) {
		c.fails++
		if c.fails <= 10 {
			c.t.Errorf("%s: %s at point %d %s: got %.17g, libxc %.17g (rel %.2e)", c.name, what, i, where, got, want, rel)
		}
	}
}

func TestLibxcUnpolarized(t *testing.T) {
	p := makePoints(1, 400)
	n := len(p.rho)
	for _, tc := range libxcCases {
		t.Run(tc.name, func(t *testing.T) {
			f := tc.ours()
			e, vrho, vsigma := make([]float64, n), make([]float64, n), make([]float64, n)
			f.EvalUnpolarized(n, p.rho, p.sigma, e, vrho, vsigma)
			we, wv, ws, abs := refUnpol(t, tc.parts, p.rho, p.sigma)
			c := &comparer{t: t, name: tc.name}
			for i := 0; i < n; i++ {
				where := fmt.Sprintf("(ρ=%.4g σ=%.4g)", p.rho[i], p.sigma[i])
				c.check("e", i, e[i], we[i], abs[0][i], where)
				c.check("vrho", i, vrho[i], wv[i], abs[1][i], where)
				if f.IsGGA() {
					c.check("vsigma", i, vsigma[i], ws[i], abs[2][i], where)
				}
			}
			t.Logf("%d comparisons, worst %.2e; %d needed the floor", c.compared, c.worst, c.floored)
		})
	}
}

func TestLibxcPolarized(t *testing.T) {
	p := makePoints(2, 400)
	n := len(p.ra)
	// Closed-shell equivalents for the floors.
	rhoT := make([]float64, n)
	sigT := make([]float64, n)
	for i := 0; i < n; i++ {
		rhoT[i] = p.ra[i] + p.rb[i]
		sigT[i] = max(0, p.saa[i]+2*p.sab[i]+p.sbb[i])
	}
	names := [6]string{"e", "vrhoA", "vrhoB", "vsigmaAA", "vsigmaAB", "vsigmaBB"}
	for _, tc := range libxcCases {
		t.Run(tc.name, func(t *testing.T) {
			f := tc.ours()
			var got [6][]float64
			for k := range got {
				got[k] = make([]float64, n)
			}
			f.EvalPolarized(n, p.ra, p.rb, p.saa, p.sab, p.sbb,
				got[0], got[1], got[2], got[3], got[4], got[5])
			want, abs := refPol(t, tc.parts, &p)
			fe, fv, fs, _ := refUnpol(t, tc.parts, rhoT, sigT)
			c := &comparer{t: t, name: tc.name}
			nk := 3
			if f.IsGGA() {
				nk = 6
			}
			for i := 0; i < n; i++ {
				where := fmt.Sprintf("(ρα=%.4g ρβ=%.4g σ=%.4g,%.4g,%.4g)", p.ra[i], p.rb[i], p.saa[i], p.sab[i], p.sbb[i])
				floors := polFloors(i, abs, fe, fv, fs)
				for k := 0; k < nk; k++ {
					c.check(names[k], i, got[k][i], want[k][i], floors[k], where)
				}
			}
			t.Logf("%d comparisons, worst %.2e; %d needed the floor", c.compared, c.worst, c.floored)
		})
	}
}

// TestLibxcThresholds compares points around each functional's density
// threshold, including points libxc sets to zero.
func TestLibxcThresholds(t *testing.T) {
	for _, tc := range libxcCases {
		t.Run(tc.name, func(t *testing.T) {
			f := tc.ours()
			var thr []float64
			for _, pt := range tc.parts {
				r, err := libxcref.New(pt.id, false)
				if err != nil {
					t.Fatal(err)
				}
				thr = append(thr, r.Thresholds().Dens)
				for _, c := range r.Components() {
					thr = append(thr, c.Thresholds.Dens)
				}
				r.Close()
			}
			var p points
			for _, d := range thr {
				for _, m := range []float64{0, 0.5, 0.999, 1, 1.001, 1.5, 2, 2.001, 3, 10, 1e3} {
					r := m * d
					p.rho = append(p.rho, r)
					p.sigma = append(p.sigma, sigmaOf(r, 1))
					for _, other := range []float64{0, 0.5 * d, d, 2 * d, 1e-3, 30, 1e3} {
						p.ra = append(p.ra, r)
						p.rb = append(p.rb, other)
						p.saa = append(p.saa, sigmaOf(r, 1))
						p.sab = append(p.sab, 0)
						p.sbb = append(p.sbb, sigmaOf(other, 2))
					}
				}
			}
			n := len(p.rho)
			e, vr, vs := make([]float64, n), make([]float64, n), make([]float64, n)
			f.EvalUnpolarized(n, p.rho, p.sigma, e, vr, vs)
			we, wv, ws, abs := refUnpol(t, tc.parts, p.rho, p.sigma)
			c := &comparer{t: t, name: tc.name + " closed-shell"}
			for i := 0; i < n; i++ {
				where := fmt.Sprintf("(ρ=%.4g)", p.rho[i])
				c.check("e", i, e[i], we[i], abs[0][i], where)
				c.check("vrho", i, vr[i], wv[i], abs[1][i], where)
				if f.IsGGA() {
					c.check("vsigma", i, vs[i], ws[i], abs[2][i], where)
				}
			}
			np := len(p.ra)
			var got [6][]float64
			for k := range got {
				got[k] = make([]float64, np)
			}
			f.EvalPolarized(np, p.ra, p.rb, p.saa, p.sab, p.sbb, got[0], got[1], got[2], got[3], got[4], got[5])
			want, pabs := refPol(t, tc.parts, &p)
			rhoT := make([]float64, np)
			sigT := make([]float64, np)
			for i := range rhoT {
				rhoT[i] = p.ra[i] + p.rb[i]
				sigT[i] = p.saa[i] + p.sbb[i]
			}
			fe, fv, fs, _ := refUnpol(t, tc.parts, rhoT, sigT)
			cp := &comparer{t: t, name: tc.name + " open-shell"}
			nk := 3
			if f.IsGGA() {
				nk = 6
			}
			names := [6]string{"e", "vrhoA", "vrhoB", "vsigmaAA", "vsigmaAB", "vsigmaBB"}
			for i := 0; i < np; i++ {
				where := fmt.Sprintf("(ρα=%.4g ρβ=%.4g)", p.ra[i], p.rb[i])
				floors := polFloors(i, pabs, fe, fv, fs)
				for k := 0; k < nk; k++ {
					cp.check(names[k], i, got[k][i], want[k][i], floors[k], where)
				}
			}
			t.Logf("thresholds %v: %d+%d comparisons, worst %.2e / %.2e, %d+%d needed the floor",
				thr, c.compared, cp.compared, c.worst, cp.worst, c.floored, cp.floored)
		})
	}
}

// TestLibxcThresholdValues checks the thresholds documented in doc.go and
// the exact-exchange fractions against libxc.
func TestLibxcThresholdValues(t *testing.T) {
	want := map[int]float64{1: densThresholdDefault, 7: densThresholdDefault, 8: densThresholdDefault,
		12: densThresholdDefault, 13: densThresholdDefault, 106: densThresholdDefault,
		101: densThresholdDefault, 131: densThresholdLYP, 130: densThresholdPBEC}
	for id, d := range want {
		f, err := libxcref.New(id, true)
		if err != nil {
			t.Fatal(err)
		}
		th := f.Thresholds()
		f.Close()
		if th.Dens != d || th.Zeta != zetaThreshold {
			t.Errorf("libxc %d: thresholds %+v, ours dens %g zeta %g", id, th, d, zetaThreshold)
		}
		sc := newScreen(d)
		if math.Abs(sc.sigma2-th.Sigma*th.Sigma) > 1e-14*sc.sigma2 {
			t.Errorf("libxc %d: sigma threshold² %g, ours %g", id, th.Sigma*th.Sigma, sc.sigma2)
		}
	}
	for _, c := range []struct {
		id     int
		method string
	}{{402, "b3lyp"}, {475, "b3lyp5"}, {406, "pbe0"}} {
		f, _ := libxcref.New(c.id, false)
		ref := f.ExactExchange()
		comps := f.Components()
		f.Close()
		ours, _ := Lookup(c.method)
		if ours.ExactExchange() != ref {
			t.Errorf("%s: exact exchange %g, libxc %g", c.method, ours.ExactExchange(), ref)
		}
		var desc []string
		for _, cc := range comps {
			desc = append(desc, fmt.Sprintf("%g×%d", cc.Coef, cc.ID))
		}
		t.Logf("%s: libxc mixture %s, exact exchange %g", c.method, strings.Join(desc, " + "), ref)
	}
}
