package main

import (
	"fmt"
	"strings"
)

// alkaneXYZ is the all-anti linear alkane CnH2n+2 in a standard geometry
// (C–C 1.54 Å, C–H 1.09 Å, every angle tetrahedral: textbook values, from
// memory), as XYZ text. The carbons zigzag in the xy plane.
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
		s, y := 1.0, 0.0 // s = +1: the neighbouring carbons lie at larger y
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
	return fmt.Sprintf("%d\nC%dH%d, linear all-anti, standard geometry\n%s\n", len(lines), n, 2*n+2, strings.Join(lines, "\n"))
}
