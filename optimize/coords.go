package optimize

import (
	"fmt"
	"math"
)

// Kind is the kind of a primitive internal coordinate.
type Kind int

// The primitive internal coordinates.
const (
	// Bond is the distance between Atoms[0] and Atoms[1] (bohr).
	Bond Kind = iota
	// Angle is the angle Atoms[0]–Atoms[1]–Atoms[2] at Atoms[1] (radians,
	// 0 to π).
	Angle
	// LinearBend is one component of the bending of a near-linear
	// Atoms[0]–Atoms[1]–Atoms[2]: Axis·(e₁₀ + e₁₂), the e unit vectors from
	// the middle atom to the ends, Axis a fixed unit vector perpendicular
	// to the line (dimensionless; about the deviation from 180° in
	// radians, projected on Axis). Two components with perpendicular axes
	// describe the bend in every direction.
	LinearBend
	// Dihedral is the torsion angle Atoms[0]–Atoms[1]–Atoms[2]–Atoms[3]
	// (radians, −π to π): the angle between the planes 0-1-2 and 1-2-3,
	// positive clockwise looking from 1 to 2.
	Dihedral
	// OutOfPlane is the dihedral Atoms[0]–Atoms[1]–Atoms[2]–Atoms[3] of
	// three neighbours of Atoms[3] and Atoms[3] itself (radians, −π to π):
	// 0 or ±π when Atoms[3] lies in the plane of its neighbours.
	OutOfPlane
)

// String names the kind.
func (k Kind) String() string {
	switch k {
	case Bond:
		return "bond"
	case Angle:
		return "angle"
	case LinearBend:
		return "linear bend"
	case Dihedral:
		return "dihedral"
	case OutOfPlane:
		return "out-of-plane"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Coordinate is a primitive internal coordinate over atoms numbered from 0.
type Coordinate struct {
	Kind  Kind
	Atoms [4]int // the first 2 (Bond), 3 (Angle, LinearBend) or 4 (Dihedral, OutOfPlane) are used
	// Axis is the fixed direction of a LinearBend component (unit vector).
	Axis [3]float64
}

// NumAtoms is the number of atoms the coordinate involves.
func (c Coordinate) NumAtoms() int {
	switch c.Kind {
	case Bond:
		return 2
	case Angle, LinearBend:
		return 3
	}
	return 4
}

// Label writes the coordinate with atom numbers from 1 ("O1–H2",
// "H2–O1–H3").
func (c Coordinate) Label(symbols []string) string {
	s := ""
	for i := 0; i < c.NumAtoms(); i++ {
		if i > 0 {
			s += "–"
		}
		a := c.Atoms[i]
		if a < len(symbols) {
			s += symbols[a]
		}
		s += fmt.Sprint(a + 1)
	}
	return s
}

// Value is the coordinate at the positions xBohr (3N, bohr): bohr for a
// bond, radians for angles and dihedrals.
func (c Coordinate) Value(xBohr []float64) float64 {
	var d [4][3]float64
	return c.eval(xBohr, &d, false)
}

// Derivative writes ∂q/∂x of the coordinate for each of its atoms into d
// (d[i] belongs to Atoms[i]) and returns the value.
func (c Coordinate) Derivative(xBohr []float64, d *[4][3]float64) float64 {
	return c.eval(xBohr, d, true)
}

func pos(x []float64, a int) [3]float64 { return [3]float64{x[3*a], x[3*a+1], x[3*a+2]} }

func sub(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func add(a, b [3]float64) [3]float64 { return [3]float64{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func scale(s float64, a [3]float64) [3]float64 {
	return [3]float64{s * a[0], s * a[1], s * a[2]}
}
func dot(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func norm(a [3]float64) float64 { return math.Sqrt(dot(a, a)) }

// eval computes the value and, with deriv, the Wilson B-matrix elements
// (E. B. Wilson, J. C. Decius, P. C. Cross, Molecular Vibrations, 1955,
// ch. 4; dihedral derivatives in the form of A. Blondel, M. Karplus,
// J. Comput. Chem. 17, 1132 (1996), which has no singularity at 0 or π).
func (c Coordinate) eval(x []float64, d *[4][3]float64, deriv bool) float64 {
	switch c.Kind {
	case Bond:
		u := sub(pos(x, c.Atoms[0]), pos(x, c.Atoms[1]))
		r := norm(u)
		if deriv {
			e := scale(1/r, u)
			d[0] = e
			d[1] = scale(-1, e)
		}
		return r
	case Angle:
		b := pos(x, c.Atoms[1])
		u := sub(pos(x, c.Atoms[0]), b)
		v := sub(pos(x, c.Atoms[2]), b)
		lu, lv := norm(u), norm(v)
		eu, ev := scale(1/lu, u), scale(1/lv, v)
		cos := dot(eu, ev)
		sin := norm(cross(eu, ev))
		theta := math.Atan2(sin, cos)
		if deriv {
			if sin < 1e-12 {
				sin = 1e-12
			}
			d[0] = scale(1/(lu*sin), sub(scale(cos, eu), ev))
			d[2] = scale(1/(lv*sin), sub(scale(cos, ev), eu))
			d[1] = scale(-1, add(d[0], d[2]))
		}
		return theta
	case LinearBend:
		b := pos(x, c.Atoms[1])
		u := sub(pos(x, c.Atoms[0]), b)
		v := sub(pos(x, c.Atoms[2]), b)
		lu, lv := norm(u), norm(v)
		eu, ev := scale(1/lu, u), scale(1/lv, v)
		w := c.Axis
		if deriv {
			d[0] = scale(1/lu, sub(w, scale(dot(w, eu), eu)))
			d[2] = scale(1/lv, sub(w, scale(dot(w, ev), ev)))
			d[1] = scale(-1, add(d[0], d[2]))
		}
		return dot(w, add(eu, ev))
	case Dihedral, OutOfPlane:
		p0, p1, p2, p3 := pos(x, c.Atoms[0]), pos(x, c.Atoms[1]), pos(x, c.Atoms[2]), pos(x, c.Atoms[3])
		f := sub(p0, p1)
		g := sub(p1, p2)
		h := sub(p3, p2)
		a := cross(f, g)
		bb := cross(h, g)
		lg := norm(g)
		phi := math.Atan2(dot(cross(bb, a), g)/lg, dot(a, bb))
		if deriv {
			a2, b2 := dot(a, a), dot(bb, bb)
			if a2 < 1e-24 {
				a2 = 1e-24
			}
			if b2 < 1e-24 {
				b2 = 1e-24
			}
			fg, hg := dot(f, g), dot(h, g)
			d[0] = scale(-lg/a2, a)
			d[3] = scale(lg/b2, bb)
			t := sub(scale(fg/(a2*lg), a), scale(hg/(b2*lg), bb))
			d[1] = sub(t, d[0])
			d[2] = sub(scale(-1, t), d[3])
		}
		return phi
	}
	return math.NaN()
}

// difference returns q1 − q0 for values of c, a dihedral difference
// wrapped into (−π, π].
func (c Coordinate) difference(q1, q0 float64) float64 {
	d := q1 - q0
	if c.Kind == Dihedral || c.Kind == OutOfPlane {
		d = wrapAngle(d)
	}
	return d
}

// wrapAngle maps an angle into (−π, π].
func wrapAngle(a float64) float64 {
	if a > math.Pi || a <= -math.Pi {
		a = math.Mod(a+math.Pi, 2*math.Pi)
		if a <= 0 {
			a += 2 * math.Pi
		}
		a -= math.Pi
	}
	return a
}

// sameAtoms reports whether a and b are the same coordinate (atoms in
// either direction; linear bends compared by their axis too).
func sameAtoms(a, b Coordinate) bool {
	if a.Kind != b.Kind {
		return false
	}
	n := a.NumAtoms()
	fwd, rev := true, true
	for i := 0; i < n; i++ {
		if a.Atoms[i] != b.Atoms[i] {
			fwd = false
		}
		if a.Atoms[i] != b.Atoms[n-1-i] {
			rev = false
		}
	}
	if a.Kind == LinearBend {
		return (fwd || rev) && math.Abs(dot(a.Axis, b.Axis)) > 0.999
	}
	return fwd || rev
}
