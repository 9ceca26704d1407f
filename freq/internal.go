package freq

import (
	"math"
	"sort"
	"strings"

	"poise/energy/molecule"
	"poise/optimize"
)

// linearAngleDeg is the angle above which a bend a–b–c is treated as a
// linear bend (two perpendicular components) and torsions through it are
// left out.
const linearAngleDeg = 175.0

// Motion is the change of one internal coordinate in a normal mode.
type Motion struct {
	// Kind is "stretch", "bend", "linear bend" or "torsion".
	Kind string
	// Atoms are the atoms of the coordinate (from 0): 2, 3 or 4.
	Atoms []int
	// Label names the coordinate by its elements, e.g. "O–H stretch".
	Label string
	// Amplitude is the change of the coordinate for a unit Cartesian
	// displacement along the mode (bohr per bohr); bends and torsions are
	// turned into arc lengths (angle change times the geometric mean of
	// the arms) so that they compare with stretches. A linear bend's
	// amplitude is its larger component, sign included, scaled by the
	// length of both.
	Amplitude float64
	// Share is Amplitude² over the sum for all coordinates.
	Share float64
}

// internalSet is the set of primitive internal coordinates of a geometry.
type internalSet struct {
	z      []int
	x      []float64
	coords []primitive
}

type primitive struct {
	kind  string
	atoms []int
	label string
	scale float64       // arc length per radian (bends, torsions); 1 for stretches
	perp  [2][3]float64 // linear bends: the two bending directions
}

func vsub(a, b [3]float64) [3]float64 { return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func vdot(a, b [3]float64) float64    { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func vnorm(a [3]float64) float64      { return math.Sqrt(vdot(a, a)) }
func vcross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func vscale(a [3]float64, s float64) [3]float64 { return [3]float64{a[0] * s, a[1] * s, a[2] * s} }

func pos(x []float64, a int) [3]float64 { return [3]float64{x[3*a], x[3*a+1], x[3*a+2]} }

func angleOf(x []float64, a, b, c int) float64 {
	u, v := vsub(pos(x, a), pos(x, b)), vsub(pos(x, c), pos(x, b))
	cs := vdot(u, v) / (vnorm(u) * vnorm(v))
	return math.Acos(math.Max(-1, math.Min(1, cs)))
}

func torsionOf(x []float64, a, b, c, d int) float64 {
	b1, b2, b3 := vsub(pos(x, b), pos(x, a)), vsub(pos(x, c), pos(x, b)), vsub(pos(x, d), pos(x, c))
	n1, n2 := vcross(b1, b2), vcross(b2, b3)
	m := vcross(n1, vscale(b2, 1/vnorm(b2)))
	return math.Atan2(vdot(m, n2), vdot(n1, n2))
}

// elementLabel joins element symbols with en dashes, read from the end
// that puts the heavier element first (alphabetical on ties), so that the
// same kind of coordinate always gets the same label.
func elementLabel(z []int, atoms []int) string {
	n := len(atoms)
	fwd, rev := make([]int, n), make([]int, n)
	for i, a := range atoms {
		fwd[i] = z[a]
		rev[n-1-i] = z[a]
	}
	use := fwd
	for i := 0; i < n; i++ {
		if fwd[i] != rev[i] {
			if rev[i] > fwd[i] {
				use = rev
			}
			break
		}
	}
	s := make([]string, n)
	for i, zz := range use {
		s[i] = molecule.Symbol(zz)
	}
	return strings.Join(s, "–")
}

// newInternalSet finds bonds (covalent radii; separate fragments joined by
// their closest pair of atoms), bends between bonds sharing an atom, and
// torsions about bonds.
func newInternalSet(z []int, x []float64) *internalSet {
	nat := len(z)
	s := &internalSet{z: z, x: x}
	dist := func(a, b int) float64 { return vnorm(vsub(pos(x, a), pos(x, b))) }
	bonded := make([][]bool, nat)
	for i := range bonded {
		bonded[i] = make([]bool, nat)
	}
	for a := 0; a < nat; a++ {
		for b := a + 1; b < nat; b++ {
			if dist(a, b) < optimize.BondFactor*(optimize.CovalentRadiusBohr(z[a])+optimize.CovalentRadiusBohr(z[b])) {
				bonded[a][b], bonded[b][a] = true, true
			}
		}
	}
	// Join fragments: repeatedly connect the component of atom 0 to its
	// nearest atom outside.
	for {
		comp := make([]bool, nat)
		stack := []int{0}
		comp[0] = true
		for len(stack) > 0 {
			a := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for b := 0; b < nat; b++ {
				if bonded[a][b] && !comp[b] {
					comp[b] = true
					stack = append(stack, b)
				}
			}
		}
		best, ba, bb := math.Inf(1), -1, -1
		for a := 0; a < nat; a++ {
			for b := 0; b < nat; b++ {
				if comp[a] && !comp[b] && dist(a, b) < best {
					best, ba, bb = dist(a, b), a, b
				}
			}
		}
		if ba < 0 {
			break
		}
		bonded[ba][bb], bonded[bb][ba] = true, true
	}
	var bonds [][2]int
	for a := 0; a < nat; a++ {
		for b := a + 1; b < nat; b++ {
			if bonded[a][b] {
				bonds = append(bonds, [2]int{a, b})
				s.coords = append(s.coords, primitive{kind: "stretch", atoms: []int{a, b},
					label: elementLabel(z, []int{a, b}) + " stretch", scale: 1})
			}
		}
	}
	linearRad := linearAngleDeg * math.Pi / 180
	isLinear := func(a, b, c int) bool { return angleOf(x, a, b, c) > linearRad }
	for b := 0; b < nat; b++ {
		for a := 0; a < nat; a++ {
			for c := a + 1; c < nat; c++ {
				if !bonded[a][b] || !bonded[c][b] || a == b || c == b {
					continue
				}
				p := primitive{kind: "bend", atoms: []int{a, b, c}, label: elementLabel(z, []int{a, b, c}) + " bend",
					scale: math.Sqrt(dist(a, b) * dist(c, b))}
				if isLinear(a, b, c) {
					p.kind = "linear bend"
					p.perp = perpendiculars(vsub(pos(x, c), pos(x, a)))
				}
				s.coords = append(s.coords, p)
			}
		}
	}
	for _, bc := range bonds {
		b, c := bc[0], bc[1]
		for a := 0; a < nat; a++ {
			if a == c || !bonded[a][b] || isLinear(a, b, c) {
				continue
			}
			for d := 0; d < nat; d++ {
				if d == b || d == a || !bonded[d][c] || isLinear(b, c, d) {
					continue
				}
				arm := math.Sqrt(dist(a, b) * math.Sin(angleOf(x, a, b, c)) * dist(c, d) * math.Sin(angleOf(x, b, c, d)))
				s.coords = append(s.coords, primitive{kind: "torsion", atoms: []int{a, b, c, d},
					label: elementLabel(z, []int{a, b, c, d}) + " torsion", scale: arm})
			}
		}
	}
	return s
}

// perpendiculars returns two unit vectors perpendicular to axis and to
// each other, chosen from the axis alone (so that all linear bends about
// one axis share them).
func perpendiculars(axis [3]float64) [2][3]float64 {
	u := vscale(axis, 1/vnorm(axis))
	// The coordinate axis least aligned with u.
	ref := [3]float64{1, 0, 0}
	if math.Abs(u[1]) < math.Abs(u[0]) && math.Abs(u[1]) <= math.Abs(u[2]) {
		ref = [3]float64{0, 1, 0}
	} else if math.Abs(u[2]) < math.Abs(u[0]) && math.Abs(u[2]) < math.Abs(u[1]) {
		ref = [3]float64{0, 0, 1}
	}
	p1 := vsub(ref, vscale(u, vdot(ref, u)))
	p1 = vscale(p1, 1/vnorm(p1))
	p2 := vcross(u, p1)
	return [2][3]float64{p1, p2}
}

// amplitude is the first-order change of coordinate p along the Cartesian
// direction l (unit length), as an arc length for angles.
func (s *internalSet) amplitude(p *primitive, l []float64) float64 {
	x := s.x
	switch p.kind {
	case "stretch":
		a, b := p.atoms[0], p.atoms[1]
		r := vsub(pos(x, a), pos(x, b))
		return vdot(r, vsub(pos(l, a), pos(l, b))) / vnorm(r)
	case "linear bend":
		a, b, c := p.atoms[0], p.atoms[1], p.atoms[2]
		rab, rcb := vnorm(vsub(pos(x, a), pos(x, b))), vnorm(vsub(pos(x, c), pos(x, b)))
		da, dc := vsub(pos(l, a), pos(l, b)), vsub(pos(l, c), pos(l, b))
		var comp [2]float64
		for k, e := range p.perp {
			comp[k] = vdot(da, e)/rab + vdot(dc, e)/rcb
		}
		v := comp[0]
		if math.Abs(comp[1]) > math.Abs(comp[0]) {
			v = comp[1]
		}
		mag := math.Hypot(comp[0], comp[1])
		if v < 0 {
			mag = -mag
		}
		return mag * p.scale
	}
	// Bends and torsions: a central difference of the coordinate.
	const eps = 1e-4 // bohr
	xp := make([]float64, len(x))
	xm := make([]float64, len(x))
	for i := range x {
		xp[i] = x[i] + eps*l[i]
		xm[i] = x[i] - eps*l[i]
	}
	var d float64
	if p.kind == "bend" {
		d = angleOf(xp, p.atoms[0], p.atoms[1], p.atoms[2]) - angleOf(xm, p.atoms[0], p.atoms[1], p.atoms[2])
	} else {
		a, b, c, dd := p.atoms[0], p.atoms[1], p.atoms[2], p.atoms[3]
		d = torsionOf(xp, a, b, c, dd) - torsionOf(xm, a, b, c, dd)
		d = math.Remainder(d, 2*math.Pi)
	}
	return d / (2 * eps) * p.scale
}

// maxMotions bounds the motions kept per mode; motions with a share below
// minShare are dropped.
const (
	maxMotions = 8
	minShare   = 0.02
)

// motions returns the coordinates that l moves, largest share first.
func (s *internalSet) motions(l []float64) []Motion {
	all := make([]Motion, len(s.coords))
	total := 0.0
	for i := range s.coords {
		p := &s.coords[i]
		amp := s.amplitude(p, l)
		all[i] = Motion{Kind: p.kind, Atoms: p.atoms, Label: p.label, Amplitude: amp}
		total += amp * amp
	}
	if total == 0 {
		return nil
	}
	for i := range all {
		all[i].Share = all[i].Amplitude * all[i].Amplitude / total
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].Share > all[j].Share+1e-12 })
	var out []Motion
	for _, m := range all {
		if m.Share < minShare || len(out) == maxMotions {
			break
		}
		m.Atoms = append([]int(nil), m.Atoms...)
		out = append(out, m)
	}
	return out
}

// describe turns motions into a short phrase: the kind of coordinate
// (label) with the largest total share, "in phase" or "out of phase" when
// several coordinates of that kind move (alike or with mixed signs), and a
// second kind when it carries at least a quarter of the motion.
func describe(ms []Motion) string {
	type group struct {
		label  string
		share  float64
		signs  []float64
		shares []float64
	}
	var groups []*group
	find := map[string]*group{}
	for _, m := range ms {
		g := find[m.Label]
		if g == nil {
			g = &group{label: m.Label}
			find[m.Label] = g
			groups = append(groups, g)
		}
		g.share += m.Share
		g.signs = append(g.signs, m.Amplitude)
		g.shares = append(g.shares, m.Share)
	}
	if len(groups) == 0 {
		return ""
	}
	sort.SliceStable(groups, func(i, j int) bool { return groups[i].share > groups[j].share+1e-12 })
	phrase := func(g *group) string {
		pos, neg := 0, 0
		for i, a := range g.signs {
			if g.shares[i] < 0.1*g.share {
				continue
			}
			if a > 0 {
				pos++
			} else {
				neg++
			}
		}
		switch {
		case pos+neg < 2:
			return g.label
		case pos == 0 || neg == 0:
			return g.label + ", in phase"
		default:
			return g.label + ", out of phase"
		}
	}
	d := phrase(groups[0])
	if len(groups) > 1 && groups[1].share >= 0.25 {
		d += "; " + groups[1].label
	}
	return d
}
