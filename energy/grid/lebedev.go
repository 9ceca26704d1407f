package grid

import (
	"bufio"
	"bytes"
	"embed"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// The Lebedev–Laikov rules used by the levels, copied unchanged from the
// project's shared collection. NOTICE: Lebedev–Laikov angular quadrature
// rules, V. I. Lebedev, D. N. Laikov, "A quadrature formula for the sphere of
// the 131st algebraic order of accuracy", Doklady Mathematics 59, 477–481
// (1999).
//
//go:embed data/lebedev-*.txt
var lebedevFiles embed.FS

// angularRule is a Lebedev–Laikov rule on the unit sphere: unit vectors and
// weights that sum to one (multiply by 4π for the surface integral).
type angularRule struct {
	n       int
	x, y, z []float64
	w       []float64
}

// loadLebedev reads the embedded rule with n points.
func loadLebedev(n int) (*angularRule, error) {
	name := fmt.Sprintf("data/lebedev-%04d.txt", n)
	data, err := lebedevFiles.ReadFile(name)
	if err != nil {
		return nil, fmt.Errorf("grid: no embedded Lebedev–Laikov rule with %d points: %w", n, err)
	}
	r, err := parseLebedev(data)
	if err != nil {
		return nil, fmt.Errorf("grid: %s: %w", name, err)
	}
	if r.n != n {
		return nil, fmt.Errorf("grid: %s: has %d points, want %d", name, r.n, n)
	}
	return r, nil
}

// parseLebedev reads a rule in the shared text layout: '#' comment lines,
// then one point per line, "x y z w". Points must lie on the unit sphere
// (to 1e-12) and the weights must sum to one (to 1e-12).
func parseLebedev(data []byte) (*angularRule, error) {
	r := &angularRule{}
	sc := bufio.NewScanner(bytes.NewReader(data))
	line := 0
	for sc.Scan() {
		line++
		s := strings.TrimSpace(sc.Text())
		if s == "" || strings.HasPrefix(s, "#") {
			continue
		}
		f := strings.Fields(s)
		if len(f) != 4 {
			return nil, fmt.Errorf("line %d: want 4 columns (x y z w), got %d", line, len(f))
		}
		var v [4]float64
		for i := range v {
			x, err := strconv.ParseFloat(f[i], 64)
			if err != nil {
				return nil, fmt.Errorf("line %d: %w", line, err)
			}
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, fmt.Errorf("line %d: non-finite value %q", line, f[i])
			}
			v[i] = x
		}
		if n2 := v[0]*v[0] + v[1]*v[1] + v[2]*v[2]; math.Abs(n2-1) > 1e-12 {
			return nil, fmt.Errorf("line %d: point not on the unit sphere (|r|² = %g)", line, n2)
		}
		r.x = append(r.x, v[0])
		r.y = append(r.y, v[1])
		r.z = append(r.z, v[2])
		r.w = append(r.w, v[3])
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	r.n = len(r.w)
	if r.n == 0 {
		return nil, fmt.Errorf("no points")
	}
	sum := 0.0
	for _, w := range r.w {
		sum += w
	}
	if math.Abs(sum-1) > 1e-12 {
		return nil, fmt.Errorf("weights sum to %.16g, want 1", sum)
	}
	return r, nil
}
