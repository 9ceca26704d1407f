package main

import (
	"math"
	"math/rand"
	"reflect"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"poise/energy/molecule"
)

// TestFitPowerLawAgainstGonum compares the log–log least-squares fit with
// gonum's stat.LinearRegression on the logarithms, for an exact power law
// and for noisy data.
func TestFitPowerLawAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewSource(7))
	for _, tc := range []struct {
		name     string
		k, a     float64
		noise    float64
		nbfCount int
	}{
		{"exact quadratic", 2, 3e-6, 0, 5},
		{"exact 2.37", 2.37, 1e-5, 0, 7},
		{"noisy cubic", 3, 1e-7, 0.2, 9},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var x, y, lx, ly []float64
			for i := 0; i < tc.nbfCount; i++ {
				xi := 40 + 37*float64(i)
				yi := tc.a * math.Pow(xi, tc.k) * math.Exp(tc.noise*(rng.Float64()-0.5))
				x, y = append(x, xi), append(y, yi)
				lx, ly = append(lx, math.Log(xi)), append(ly, math.Log(yi))
			}
			k, a, err := fitPowerLaw(x, y)
			if err != nil {
				t.Fatal(err)
			}
			alpha, beta := stat.LinearRegression(lx, ly, nil, false)
			if math.Abs(k-beta) > 1e-12 || math.Abs(math.Log(a)-alpha) > 1e-10 {
				t.Errorf("exponent %.15g prefactor %.15g; gonum: %.15g, %.15g", k, a, beta, math.Exp(alpha))
			}
			if tc.noise == 0 && math.Abs(k-tc.k) > 1e-12 {
				t.Errorf("exact power law: exponent %.15g, want %g", k, tc.k)
			}
		})
	}
}

func TestFitPowerLawRejects(t *testing.T) {
	for _, tc := range []struct {
		name string
		x, y []float64
	}{
		{"one point", []float64{1}, []float64{1}},
		{"lengths", []float64{1, 2}, []float64{1}},
		{"zero", []float64{1, 2}, []float64{0, 1}},
		{"negative", []float64{-1, 2}, []float64{1, 1}},
		{"equal x", []float64{2, 2}, []float64{1, 3}},
	} {
		if _, _, err := fitPowerLaw(tc.x, tc.y); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

func names(ws []workload) []string {
	var out []string
	for _, w := range ws {
		out = append(out, w.name)
	}
	return out
}

func TestParseWorkloads(t *testing.T) {
	cheap := []string{"water-settle", "benzene-energy", "gradient-ratio", "gradient-ratio-hf", "alkane-exponent"}
	for _, tc := range []struct {
		list string
		all  bool
		want []string
		err  string
	}{
		{"", false, cheap, ""},
		{"  ", false, cheap, ""},
		{"", true, workloadNames(), ""},
		{"water-settle", false, []string{"water-settle"}, ""},
		{" Alkane-Exponent , water-settle,alkane-exponent", false, []string{"alkane-exponent", "water-settle"}, ""},
		{"aspirin-settle", false, []string{"aspirin-settle"}, ""},
		{"water-settle,", false, nil, "empty name"},
		{"water", false, nil, "unknown workload"},
		{"water-settle", true, nil, "exclude each other"},
	} {
		got, err := parseWorkloads(tc.list, tc.all)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%q all=%v: error %v, want one containing %q", tc.list, tc.all, err, tc.err)
			}
			continue
		}
		if err != nil {
			t.Errorf("%q all=%v: %v", tc.list, tc.all, err)
			continue
		}
		if !reflect.DeepEqual(names(got), tc.want) {
			t.Errorf("%q all=%v: %v, want %v", tc.list, tc.all, names(got), tc.want)
		}
	}
}

// FuzzParseWorkloads: any input gives workloads or an error, never a
// panic, and every returned workload is known and appears once.
func FuzzParseWorkloads(f *testing.F) {
	for _, s := range []string{"", "water-settle", "a,b", ",", "water-settle, benzene-energy,water-settle"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		ws, err := parseWorkloads(s, false)
		if err != nil {
			return
		}
		seen := map[string]bool{}
		for _, w := range ws {
			if _, ok := findWorkload(w.name); !ok || seen[w.name] {
				t.Fatalf("%q: bad or repeated workload %q", s, w.name)
			}
			seen[w.name] = true
		}
	})
}

// TestAlkaneGeometry checks the generated alkanes: formula CnH2n+2, C–C
// 1.54 Å and C–H 1.09 Å bonds (the standard values used), tetrahedral
// angles (cos = −1/3), and no two atoms closer than a bond.
func TestAlkaneGeometry(t *testing.T) {
	for _, n := range []int{1, 2, 5} {
		m, err := molecule.ParseXYZ("alkane", []byte(alkaneXYZ(n)))
		if err != nil {
			t.Fatal(err)
		}
		pos := m.PositionsAngstrom()
		nc, nh := 0, 0
		for _, a := range m.Atoms {
			switch a.Symbol {
			case "C":
				nc++
			case "H":
				nh++
			}
		}
		if nc != n || nh != 2*n+2 {
			t.Fatalf("n=%d: C%dH%d", n, nc, nh)
		}
		dist := func(i, j int) float64 {
			d := 0.0
			for k := 0; k < 3; k++ {
				d += (pos[i][k] - pos[j][k]) * (pos[i][k] - pos[j][k])
			}
			return math.Sqrt(d)
		}
		for i := range m.Atoms {
			if m.Atoms[i].Symbol != "C" {
				continue
			}
			var nb []int
			for j := range m.Atoms {
				if j == i {
					continue
				}
				d := dist(i, j)
				switch {
				case m.Atoms[j].Symbol == "C" && math.Abs(d-1.54) < 1e-5, m.Atoms[j].Symbol == "H" && math.Abs(d-1.09) < 1e-5:
					nb = append(nb, j)
				case d < 1.6:
					t.Fatalf("n=%d: atoms %d and %d %.3f Å apart", n, i, j, d)
				}
			}
			if len(nb) != 4 {
				t.Fatalf("n=%d: carbon %d has %d neighbours", n, i, len(nb))
			}
			for a := 0; a < 4; a++ {
				for b := a + 1; b < 4; b++ {
					var c float64
					for k := 0; k < 3; k++ {
						c += (pos[nb[a]][k] - pos[i][k]) * (pos[nb[b]][k] - pos[i][k])
					}
					c /= dist(i, nb[a]) * dist(i, nb[b])
					if math.Abs(c+1.0/3) > 1e-5 {
						t.Errorf("n=%d: angle at carbon %d has cos %.6f, want −1/3", n, i, c)
					}
				}
			}
		}
	}
}
