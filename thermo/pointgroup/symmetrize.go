package pointgroup

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Symmetrize detects the point group of atoms within toleranceBohr and
// returns a copy of atoms whose positions are exactly symmetric under that
// group (to rounding), in the original frame and with the original center
// of mass, together with the point group of the new geometry.
func Symmetrize(atoms []Atom, toleranceBohr float64) ([]Atom, *Result, error) {
	d, com, err := newDetector(atoms, toleranceBohr)
	if err != nil {
		return nil, nil, err
	}
	r, err := d.detect()
	if err != nil {
		return nil, nil, err
	}
	pos, err := d.symmetrize(r)
	if err != nil {
		return nil, nil, fmt.Errorf("symmetrize to %s: %w", r.Symbol, err)
	}
	out := make([]Atom, len(atoms))
	for i, a := range atoms {
		a.Position = add(pos[i], com)
		out[i] = a
	}
	nr, err := Detect(out, d.tol)
	if err != nil {
		return nil, nil, err
	}
	if nr.Symbol != r.Symbol {
		return nil, nil, fmt.Errorf("symmetrize: the geometry became %s instead of %s; try a smaller tolerance", nr.Symbol, r.Symbol)
	}
	return out, nr, nil
}

// symmetrize returns the centered positions averaged over the ideal group.
func (d *detector) symmetrize(r *Result) ([]vec, error) {
	n := len(d.pos)
	out := make([]vec, n)
	switch {
	case r.Symbol == "Kh":
		return out, nil // the atom sits at its center of mass
	case r.Linear:
		u := r.MainAxis
		for i, p := range d.pos {
			out[i] = scale(dot(p, u), u)
		}
		if r.Inversion {
			perm := make([]int, n)
			if !d.linearInversion(u, perm) {
				return nil, errors.New("inversion lost")
			}
			avg := make([]vec, n)
			for i := range out {
				avg[i] = scale(0.5, sub(out[i], out[perm[i]]))
			}
			out = avg
		}
		return out, nil
	case r.Symbol == "C1":
		copy(out, d.pos)
		return out, nil
	}
	var lastErr error
	for _, gens := range d.idealGenerators(r) {
		ops, err := closure(gens, r.Order)
		if err != nil {
			return nil, err
		}
		perms := make([][]int, len(ops))
		ok := true
		for k := range ops {
			perms[k] = make([]int, n)
			if !d.mapsWithin(&ops[k], perms[k], 3*d.tol) {
				ok = false
				break
			}
		}
		if !ok {
			lastErr = errors.New("the ideal group does not map the atoms onto each other")
			continue
		}
		// Average over the group, then turn the ideal group so that the
		// average lies as close as possible to the input (a few rounds of
		// least-squares superposition), and average again.
		for round := 0; ; round++ {
			d.average(ops, perms, out)
			if round == 8 {
				break
			}
			rot := bestRotation(out, d.pos, d.mass)
			id := identity()
			if maxDiff(&rot, &id) < 1e-13 {
				break
			}
			for k := range ops {
				ops[k] = conj(&rot, ops[k])
			}
		}
		return out, nil
	}
	return nil, lastErr
}

// closure generates the group from gens and checks its order.
func closure(gens []mat, order int) ([]mat, error) {
	ops := []mat{identity()}
	for i := 0; i < len(ops); i++ {
		for g := range gens {
			p := mulMat(&gens[g], &ops[i])
			known := false
			for k := range ops {
				if maxDiff(&p, &ops[k]) < 1e-6 {
					known = true
					break
				}
			}
			if !known {
				ops = append(ops, p)
				if len(ops) > 240 {
					return nil, errors.New("the generated group is too large")
				}
			}
		}
	}
	if len(ops) != order {
		return nil, fmt.Errorf("the generated group has %d operations, want %d", len(ops), order)
	}
	return ops, nil
}

// frame returns the matrix whose columns are x, y, z.
func frame(x, y, z vec) mat {
	return mat{{x[0], y[0], z[0]}, {x[1], y[1], z[1]}, {x[2], y[2], z[2]}}
}

// conj returns F g Fᵀ: the operation g given in the frame F, in molecular
// coordinates.
func conj(f *mat, g mat) mat {
	ft := transpose(f)
	t := mulMat(&g, &ft)
	return mulMat(f, &t)
}

// orthoFrame completes the unit vector z and a direction x (not parallel
// to z) to a right-handed orthonormal frame.
func orthoFrame(z, x vec) mat {
	x, ok := unit(sub(x, scale(dot(x, z), z)), 1e-8)
	if !ok {
		x = anyPerpendicular(z)
	}
	y := cross(z, x)
	return frame(x, y, z)
}

func anyPerpendicular(z vec) vec {
	e := vec{1, 0, 0}
	if math.Abs(z[0]) > 0.6 {
		e = vec{0, 1, 0}
	}
	u, _ := unit(sub(e, scale(dot(e, z), z)), 1e-12)
	return u
}

// idealGenerators returns one or more candidate generator sets (in the
// molecular frame) of the ideal group r.Symbol.
func (d *detector) idealGenerators(r *Result) [][]mat {
	ex, ey, ez := vec{1, 0, 0}, vec{0, 1, 0}, vec{0, 0, 1}
	in := func(f mat, gs ...mat) []mat {
		out := make([]mat, len(gs))
		for i, g := range gs {
			out[i] = conj(&f, g)
		}
		return out
	}
	sym := r.Symbol
	switch sym {
	case "Ci":
		return [][]mat{{inversion()}}
	case "Cs":
		return [][]mat{{reflection(r.MainAxis)}}
	case "T", "Td", "Th", "O", "Oh", "I", "Ih":
		want := 2
		if sym == "O" || sym == "Oh" {
			want = 4
		}
		var x, y vec
		found := false
		for i, a := range r.Axes {
			if a.Order != want {
				continue
			}
			for _, b := range r.Axes[i+1:] {
				if b.Order == want && perpendicular(a.Direction, b.Direction) {
					x, y, found = a.Direction, b.Direction, true
					break
				}
			}
			if found {
				break
			}
		}
		if !found {
			return nil
		}
		z, _ := unit(cross(x, y), 1e-8)
		f := orthoFrame(z, x)
		c3 := rotation(scale(1/math.Sqrt(3), vec{1, 1, 1}), 2*math.Pi/3)
		switch sym {
		case "T":
			return [][]mat{in(f, rotation(ez, math.Pi), rotation(ex, math.Pi), c3)}
		case "Td":
			return [][]mat{in(f, rotation(ez, math.Pi), rotation(ex, math.Pi), c3,
				reflection(scale(1/math.Sqrt2, vec{1, -1, 0})))}
		case "Th":
			return [][]mat{in(f, rotation(ez, math.Pi), rotation(ex, math.Pi), c3, inversion())}
		case "O":
			return [][]mat{in(f, rotation(ez, math.Pi/2), rotation(ex, math.Pi/2))}
		case "Oh":
			return [][]mat{in(f, rotation(ez, math.Pi/2), rotation(ex, math.Pi/2), inversion())}
		}
		// Icosahedral: with C2 along x, y, z, the C5 axes point to the
		// vertices (0, ±1, ±φ) of an icosahedron or to those of its mirror
		// image (0, ±φ, ±1); try both.
		phi := (1 + math.Sqrt(5)) / 2
		var sets [][]mat
		for _, v := range []vec{{0, 1, phi}, {0, phi, 1}} {
			u, _ := unit(v, 0)
			gs := []mat{rotation(ez, math.Pi), rotation(ex, math.Pi), c3, rotation(u, 2*math.Pi/5)}
			if sym == "Ih" {
				gs = append(gs, inversion())
			}
			sets = append(sets, in(f, gs...))
		}
		return sets
	}
	// Axial groups: the letter, the order n and the suffix.
	letter := sym[:1]
	rest := sym[1:]
	suffix := strings.TrimLeft(rest, "0123456789")
	n, err := strconv.Atoi(strings.TrimSuffix(rest, suffix))
	if err != nil || n < 1 {
		return nil
	}
	z := r.MainAxis
	var f mat
	switch {
	case letter == "D":
		var c2 vec
		for _, a := range r.Axes {
			if a.Order%2 == 0 && perpendicular(a.Direction, z) {
				c2 = a.Direction
				break
			}
		}
		f = orthoFrame(z, c2)
	case suffix == "v":
		var m vec
		for _, nm := range r.MirrorNormals {
			if perpendicular(nm, z) {
				m = nm
				break
			}
		}
		// The mirror normal is y; x = y × z.
		y, ok := unit(sub(m, scale(dot(m, z), z)), 1e-8)
		if !ok {
			return nil
		}
		f = frame(cross(y, z), y, z)
	default:
		f = orthoFrame(z, anyPerpendicular(z))
	}
	cn := rotation(ez, 2*math.Pi/float64(n))
	if letter == "S" {
		return [][]mat{in(f, improper(ez, n))}
	}
	switch {
	case letter == "C" && suffix == "":
		return [][]mat{in(f, cn)}
	case letter == "C" && suffix == "h":
		return [][]mat{in(f, cn, reflection(ez))}
	case letter == "C" && suffix == "v":
		return [][]mat{in(f, cn, reflection(ey))}
	case letter == "D" && suffix == "":
		return [][]mat{in(f, cn, rotation(ex, math.Pi))}
	case letter == "D" && suffix == "h":
		return [][]mat{in(f, cn, rotation(ex, math.Pi), reflection(ez))}
	case letter == "D" && suffix == "d":
		a := math.Pi / (2 * float64(n))
		return [][]mat{in(f, cn, rotation(ex, math.Pi), reflection(vec{-math.Sin(a), math.Cos(a), 0}))}
	}
	return nil
}

// average sets out[i] = (1/|G|) Σ_R Rᵀ x_{π_R(i)}.
func (d *detector) average(ops []mat, perms [][]int, out []vec) {
	for i := range out {
		var s vec
		for k := range ops {
			t := transpose(&ops[k])
			s = add(s, mulVec(&t, d.pos[perms[k][i]]))
		}
		out[i] = scale(1/float64(len(ops)), s)
	}
}
