package scf

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// benchmarkEnergy times a whole SCF energy, integrals and guess included.
func benchmarkEnergy(b *testing.B, file, basisName string) {
	m, err := molecule.ReadXYZFile("../../testdata/molecules/" + file)
	if err != nil {
		b.Fatal(err)
	}
	if err := m.SetSpin(0, 0); err != nil {
		b.Fatal(err)
	}
	set, err := basis.Load(basisName)
	if err != nil {
		b.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		b.Fatal(err)
	}
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			var iters int
			for i := 0; i < b.N; i++ {
				res, err := Run(context.Background(), m, sh, Options{Threads: threads})
				if err != nil {
					b.Fatal(err)
				}
				iters = res.Iterations
			}
			b.ReportMetric(float64(iters), "iterations")
		})
	}
}

func BenchmarkHFWater631Gs(b *testing.B)   { benchmarkEnergy(b, "water.xyz", "6-31g*") }
func BenchmarkHFBenzene631Gs(b *testing.B) { benchmarkEnergy(b, "benzene.xyz", "6-31g*") }

// alkaneXYZ is the all-anti linear alkane CnH2n+2 in standard geometry
// (C–C 1.54 Å, C–H 1.09 Å, every angle tetrahedral; textbook values, from
// memory), as XYZ text.
func alkaneXYZ(n int) string {
	const (
		cc, ch = 1.54, 1.09
		sinH   = 0.816496580927726 // sin(½·109.47°) = √(2/3)
		cosH   = 0.577350269189626 // cos(½·109.47°) = √(1/3)
	)
	var lines []string
	add := func(sym string, x, y, z float64) {
		lines = append(lines, fmt.Sprintf("%s %.6f %.6f %.6f", sym, x, y, z))
	}
	for i := 0; i < n; i++ {
		x := float64(i) * cc * sinH
		s := 1.0 // +1: the neighbours lie at larger y
		y := 0.0
		if i%2 == 1 {
			s, y = -1, cc*cosH
		}
		add("C", x, y, 0)
		add("H", x, y-s*ch*cosH, ch*sinH)
		add("H", x, y-s*ch*cosH, -ch*sinH)
		if i == 0 {
			add("H", x-ch*sinH, y+s*ch*cosH, 0)
		}
		if i == n-1 {
			add("H", x+ch*sinH, y+s*ch*cosH, 0)
		}
	}
	return fmt.Sprintf("%d\nC%dH%d\n%s\n", len(lines), n, 2*n+2, strings.Join(lines, "\n"))
}

// BenchmarkFockAlkane times one integral-direct Coulomb and exchange build
// at HF/6-31G* on linear alkanes, with the density after one SCF iteration
// from the atomic guess: the scaling of the Fock build with size.
func BenchmarkFockAlkane(b *testing.B) {
	set, err := basis.Load("6-31g*")
	if err != nil {
		b.Fatal(err)
	}
	for _, n := range []int{4, 8, 12, 16} {
		m, err := molecule.ParseXYZ("alkane", []byte(alkaneXYZ(n)))
		if err != nil {
			b.Fatal(err)
		}
		if err := m.SetSpin(0, 0); err != nil {
			b.Fatal(err)
		}
		sh, err := set.Shells(m, basis.Default)
		if err != nil {
			b.Fatal(err)
		}
		res, err := Run(context.Background(), m, sh, Options{MaxIterations: 1, MemoryBytes: 1})
		if res == nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("n=%d/nbf=%d", n, res.NBF), func(b *testing.B) {
			jk, err := NewJKBuilder(context.Background(), sh, Options{Threads: 1, MemoryBytes: 1})
			if err != nil {
				b.Fatal(err)
			}
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				if _, _, err := jk.Build(context.Background(), res.Density); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
