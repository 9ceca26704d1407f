package scf

import (
	"context"
	"errors"
	"math"
	"math/rand"
	"strings"
	"testing"
	"time"

	"poise/energy/basis"
	"poise/energy/integral"
	"poise/energy/molecule"
)

// TestJKAgainstTensor checks the screened, symmetry-reduced, chunked Coulomb
// and exchange build against the plain contraction of the full integral
// tensor J_ab = Σ (ab|cd) D_cd, K_ab = Σ (ac|bd) D_cd, in memory and direct.
func TestJKAgainstTensor(t *testing.T) {
	m := mol(t, waterAngstrom, false, 0, 0)
	set, err := basis.Load("6-31g*")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	tensor := integral.NewERI(b).Tensor()
	rng := rand.New(rand.NewSource(1))
	d := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			v := rng.Float64() - 0.5
			d[i*n+j], d[j*n+i] = v, v
		}
	}
	wantJ := make([]float64, n*n)
	wantK := make([]float64, n*n)
	for a := 0; a < n; a++ {
		for bb := 0; bb < n; bb++ {
			for c := 0; c < n; c++ {
				for e := 0; e < n; e++ {
					wantJ[a*n+bb] += tensor[((a*n+bb)*n+c)*n+e] * d[c*n+e]
					wantK[a*n+bb] += tensor[((a*n+c)*n+bb)*n+e] * d[c*n+e]
				}
			}
		}
	}
	for _, mem := range []int64{1 << 30, 1} {
		jk, err := newJKBuilder(context.Background(), b, 2, mem)
		if err != nil {
			t.Fatal(err)
		}
		J, K, err := jk.build(context.Background(), [][]float64{d}, true)
		if err != nil {
			t.Fatal(err)
		}
		for i := range J {
			if math.Abs(J[i]-wantJ[i]) > 1e-11 || math.Abs(K[0][i]-wantK[i]) > 1e-11 {
				t.Fatalf("in-core %v: element %d: J %.12f want %.12f, K %.12f want %.12f",
					jk.InCore(), i, J[i], wantJ[i], K[0][i], wantK[i])
			}
		}
	}
}

// TestHydrogenExactExchange checks the exchange build on the hydrogen atom:
// for one electron the exact exchange energy −½ Tr[Dα K[Dα]] cancels the
// Coulomb self-repulsion, and for the exact density e^{−2r}/π both are
// 5/16 Eh (analytic: J = ½∫∫ρρ/r12 = 5/16 for the 1s density). A large
// basis approaches that limit from the basis-set side.
func TestHydrogenExactExchange(t *testing.T) {
	m := mol(t, []atomSpec{{"H", 0, 0, 0}}, false, 0, 0)
	set, err := basis.Load("cc-pvqz")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), m, sh, Options{})
	if err != nil {
		t.Fatal(err)
	}
	jk, err := newJKBuilder(context.Background(), integral.NewBasis(sh), 2, 1<<30)
	if err != nil {
		t.Fatal(err)
	}
	J, K, err := jk.build(context.Background(), res.Density, true)
	if err != nil {
		t.Fatal(err)
	}
	ex := -0.5 * dot(res.Density[0], K[0])
	ej := 0.5 * dot(res.Density[0], J)
	t.Logf("hydrogen atom cc-pVQZ: exact exchange %.6f Eh, Coulomb %.6f Eh", ex, ej)
	if math.Abs(ex+ej) > 1e-12 {
		t.Errorf("exchange %.12f does not cancel the self-repulsion %.12f", ex, ej)
	}
	if math.Abs(ex - -0.3125) > 1e-4 {
		t.Errorf("exact exchange %.6f Eh, want −0.3125 (analytic) within the cc-pVQZ basis error 1e-4", ex)
	}
}

// TestJKScreeningAndThreads checks that incremental, density-screened
// builds give the same two-electron energy as full builds without density
// screening to 1e-10 Eh (the documented bound is 1e-9), and that the
// matrices are bit-identical for 1 and 2 threads, in memory and direct.
func TestJKScreeningAndThreads(t *testing.T) {
	m := mol(t, butaneAnti(t), false, 0, 0)
	set, err := basis.Load("3-21g")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), m, sh, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	d := res.Density[0]
	// An earlier density of the same SCF: the converged one, perturbed.
	rng := rand.New(rand.NewSource(2))
	d0 := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			v := 0.95*d[i*n+j] + 1e-3*(rng.Float64()-0.5)
			d0[i*n+j], d0[j*n+i] = v, v
		}
	}
	e2 := func(J, K []float64) float64 { return 0.5*dot(d, J) - 0.25*dot(d, K) }
	ref, err := newJKBuilder(context.Background(), b, 2, 1<<30)
	if err != nil {
		t.Fatal(err)
	}
	ref.exact = true
	Jr, Kr, err := ref.build(context.Background(), [][]float64{d}, true)
	if err != nil {
		t.Fatal(err)
	}
	want := e2(Jr, Kr[0])
	// In core, semi-direct with about 40 % of the integrals stored, and
	// direct: the same numbers, bit for bit, with 1, 2 and 3 threads (the
	// direct build with the smallest ring of chunk buffers, 2 per thread).
	nq := int64(len(ref.quartets) / 2)
	semi := 16 * (nq + 1 + 4*ref.totalWords/10)
	var first []float64
	for _, mem := range []int64{1 << 30, semi, 1} {
		for _, threads := range []int{1, 2, 3} {
			jk, err := newJKBuilderConfig(context.Background(), b, jkConfig{threads: threads, memoryBytes: mem, farField: true, minSemiDirectWords: 1})
			if err != nil {
				t.Fatal(err)
			}
			if f := jk.StoredFraction(); (mem == semi) != (f > 0.3 && f < 0.5) {
				t.Fatalf("budget %d bytes: %.2f of the integrals stored", mem, f)
			}
			if _, _, err := jk.build(context.Background(), [][]float64{d0}, true); err != nil {
				t.Fatal(err)
			}
			J, K, err := jk.build(context.Background(), [][]float64{d}, true)
			if err != nil {
				t.Fatal(err)
			}
			if jk.sinceFull != 1 {
				t.Fatalf("second build was not incremental")
			}
			if got := e2(J, K[0]); math.Abs(got-want) > 1e-10 {
				t.Errorf("in-core %v, %d threads: two-electron energy %.12f, unscreened full build %.12f", jk.InCore(), threads, got, want)
			}
			all := append(append([]float64(nil), J...), K[0]...)
			if first == nil {
				first = all
				continue
			}
			for i := range all {
				if all[i] != first[i] {
					t.Fatalf("stored fraction %.2f, %d threads: element %d differs from the in-core build with 1 thread: %v, %v", jk.StoredFraction(), threads, i, all[i], first[i])
				}
			}
		}
	}
}

// TestJKCancelled cancels direct builds (the smallest ring of chunk
// buffers) at different moments: each returns the context's error instead
// of a result, and none hangs.
func TestJKCancelled(t *testing.T) {
	m := mol(t, butaneAnti(t), false, 0, 0)
	set, err := basis.Load("3-21g")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	d := make([]float64, n*n)
	for i := 0; i < n; i++ {
		d[i*n+i] = 1
	}
	for _, after := range []time.Duration{0, time.Millisecond, 5 * time.Millisecond} {
		jk, err := newJKBuilder(context.Background(), b, 3, 1)
		if err != nil {
			t.Fatal(err)
		}
		ctx, cancel := context.WithCancel(context.Background())
		if after == 0 {
			cancel()
		} else {
			time.AfterFunc(after, cancel)
		}
		J, _, err := jk.build(ctx, [][]float64{d}, true)
		cancel()
		if err == nil {
			// A build may finish before a late cancellation; then it must
			// be complete.
			if after == 0 || J == nil {
				t.Errorf("cancelled after %v: no error", after)
			}
			continue
		}
		if !errors.Is(err, context.Canceled) || J != nil {
			t.Errorf("cancelled after %v: J %v, error %v", after, J != nil, err)
		}
	}
}

// butaneAnti reads the anti-butane test molecule.
func butaneAnti(t *testing.T) []atomSpec {
	t.Helper()
	m, err := molecule.ReadXYZFile("../../testdata/molecules/butane-anti.xyz")
	if err != nil {
		t.Fatal(err)
	}
	var out []atomSpec
	for _, a := range m.PositionsAngstrom() {
		out = append(out, atomSpec{x: a[0], y: a[1], z: a[2]})
	}
	for i, a := range m.Atoms {
		out[i].sym = a.Symbol
	}
	return out
}

// TestCutChunks checks that chunks cover every quartet once, in order,
// are not empty, number at most maxChunks, and are cut the same way
// whatever the weights' scale.
func TestCutChunks(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	for _, nq := range []int{0, 1, 2047, 2049, 100000, 3000000} {
		w := make([]int64, nq)
		var total int64
		for i := range w {
			w[i] = int64(1 + rng.Intn(1296))
			total += w[i]
		}
		c := cutChunks(w, total)
		if c[0] != 0 || c[len(c)-1] != nq {
			t.Fatalf("nq=%d: chunks %v… do not span the quartets", nq, c[:min(len(c), 4)])
		}
		if nc := len(c) - 1; nc > maxChunks || (nq > 0 && nc < min(maxChunks, (nq+minQuartetsPerChunk-1)/minQuartetsPerChunk)) {
			t.Errorf("nq=%d: %d chunks", nq, nc)
		}
		for i := 1; i < len(c); i++ {
			if nq > 0 && c[i] <= c[i-1] {
				t.Fatalf("nq=%d: chunk %d empty or out of order", nq, i-1)
			}
		}
	}
}

// TestDirectNotice checks the notices when the integrals do not fit in
// half of the memory budget (semi-direct when part of them does, direct
// when the budget is tiny), and their absence when they do.
func TestDirectNotice(t *testing.T) {
	m := mol(t, waterAngstrom, false, 0, 0)
	set, err := basis.Load("6-31g*")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	all, err := newJKBuilder(context.Background(), b, 1, 1<<30)
	if err != nil {
		t.Fatal(err)
	}
	half := 16 * (int64(len(all.quartets)/2) + 1 + all.totalWords/2)
	for _, tc := range []struct {
		mem  int64
		says string // "": no notice
	}{{1 << 30, ""}, {half, "semi-direct"}, {4096, "integral-direct"}} {
		var got []string
		jk, err := newJKBuilderConfig(context.Background(), b, jkConfig{threads: 1, memoryBytes: tc.mem, farField: true,
			minSemiDirectWords: 1, log: func(s string) { got = append(got, s) }})
		if err != nil {
			t.Fatal(err)
		}
		if jk.InCore() != (tc.says == "") || (len(got) == 1) != (tc.says != "") {
			t.Errorf("budget %d bytes: in core %v, notices %q", tc.mem, jk.InCore(), got)
			continue
		}
		if tc.says != "" && !strings.Contains(got[0], tc.says) {
			t.Errorf("budget %d bytes: notice %q does not say %q", tc.mem, got[0], tc.says)
		}
	}
}

// TestFarFieldScreeningAlkane checks the far-field screening of shell
// quartets on a long chain, C12H26 in 3-21G: the far-field bound must drop
// quartets that Schwarz screening keeps, and the two-electron part of the
// Fock matrix, G = J − ½K of the density after one SCF iteration, must
// agree with the unscreened-by-distance build (Schwarz screening only, no
// density-weighted screening) to 1e-10 Eh per element and the two-electron
// energy to 1e-8 Eh. Each dropped quartet is below 1e-12 by a rigorous
// bound, so the differences found are sums of such terms.
func TestFarFieldScreeningAlkane(t *testing.T) {
	m, err := molecule.ParseXYZ("C12H26", []byte(alkaneXYZ(12)))
	if err != nil {
		t.Fatal(err)
	}
	if err := m.SetSpin(0, 0); err != nil {
		t.Fatal(err)
	}
	set, err := basis.Load("3-21g")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	res, _ := Run(context.Background(), m, sh, Options{MaxIterations: 1, MemoryBytes: 1})
	if res == nil {
		t.Fatal("no density after one iteration")
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	ref, err := newJKBuilderConfig(context.Background(), b, jkConfig{threads: 2, memoryBytes: 1})
	if err != nil {
		t.Fatal(err)
	}
	ref.exact = true
	jk, err := newJKBuilderConfig(context.Background(), b, jkConfig{threads: 2, memoryBytes: 1, farField: true})
	if err != nil {
		t.Fatal(err)
	}
	nRef, nFar := len(ref.quartets)/2, len(jk.quartets)/2
	t.Logf("C12H26 3-21G (%d functions): %d quartets with Schwarz screening, %d with the far-field bound too", n, nRef, nFar)
	if nFar >= nRef {
		t.Errorf("far-field bound dropped no quartet: %d of %d kept", nFar, nRef)
	}
	Jr, Kr, err := ref.build(context.Background(), res.Density, true)
	if err != nil {
		t.Fatal(err)
	}
	J, K, err := jk.build(context.Background(), res.Density, true)
	if err != nil {
		t.Fatal(err)
	}
	var worst float64
	for i := range J {
		worst = math.Max(worst, math.Abs((J[i]-0.5*K[0][i])-(Jr[i]-0.5*Kr[0][i])))
	}
	d := res.Density[0]
	e2 := func(J, K []float64) float64 { return 0.5*dot(d, J) - 0.25*dot(d, K) }
	dE := math.Abs(e2(J, K[0]) - e2(Jr, Kr[0]))
	t.Logf("with density-weighted screening: largest Fock-matrix difference %.2e Eh, two-electron energy difference %.2e Eh", worst, dE)
	// The far-field bound alone (density-weighted screening off too).
	jk.exact = true
	J, K, err = jk.build(context.Background(), res.Density, true)
	if err != nil {
		t.Fatal(err)
	}
	var farOnly float64
	for i := range J {
		farOnly = math.Max(farOnly, math.Abs((J[i]-0.5*K[0][i])-(Jr[i]-0.5*Kr[0][i])))
	}
	t.Logf("far-field bound alone: largest Fock-matrix difference %.2e Eh", farOnly)
	if farOnly > 1e-10 {
		t.Errorf("far-field screening alone changes the Fock matrix by up to %.2e Eh, want ≤ 1e-10", farOnly)
	}
	if worst > 1e-10 {
		t.Errorf("Fock matrices differ by up to %.2e Eh, want ≤ 1e-10", worst)
	}
	if dE > 1e-8 {
		t.Errorf("two-electron energies differ by %.2e Eh, want ≤ 1e-8", dE)
	}
}

// TestSemiDirectSelection checks the choice of a semi-direct store on
// anti-butane in 3-21G: it stays within its budget, fills most of it, and
// keeps the quartets estimated costliest per integral (up to the
// resolution of the binning, 2^(1/8)).
func TestSemiDirectSelection(t *testing.T) {
	m := mol(t, butaneAnti(t), false, 0, 0)
	set, err := basis.Load("3-21g")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	jk, err := newJKBuilderConfig(context.Background(), b, jkConfig{threads: 2, memoryBytes: 1, farField: true})
	if err != nil {
		t.Fatal(err)
	}
	nq := len(jk.quartets) / 2
	weights := make([]int64, nq)
	for q := range weights {
		weights[q] = int64(jk.quartetWords(q))
	}
	for _, frac := range []float64{0.01, 0.1, 0.4, 0.9} {
		budget := int64(frac * float64(jk.totalWords))
		offsets := jk.selectCostliest(weights, budget)
		stored := int64(offsets[nq])
		if stored > budget || float64(stored) < 0.9*float64(budget) {
			t.Errorf("budget %d words: %d stored", budget, stored)
		}
		minStored, maxOther := math.Inf(1), 0.0
		var sum int64
		next := 0
		for q := 0; q < nq; q++ {
			c := jk.costPerIntegral(q)
			if offsets[q] < 0 {
				maxOther = max(maxOther, c)
				continue
			}
			if offsets[q] != next {
				t.Fatalf("budget %d words: quartet %d stored at %d, want %d (quartet order)", budget, q, offsets[q], next)
			}
			next += int(weights[q])
			sum += weights[q]
			minStored = min(minStored, c)
		}
		if sum != stored {
			t.Errorf("budget %d words: blocks add up to %d words, offsets say %d", budget, sum, stored)
		}
		if minStored < maxOther/math.Pow(2, 1.0/8) {
			t.Errorf("budget %d words: a quartet of estimated cost %.3g is stored while one of %.3g is not", budget, minStored, maxOther)
		}
	}
}
