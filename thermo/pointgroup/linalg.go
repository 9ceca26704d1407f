package pointgroup

import "math"

// vec is a 3-vector, mat a 3×3 matrix stored by rows.
type (
	vec = [3]float64
	mat = [3][3]float64
)

func add(a, b vec) vec           { return vec{a[0] + b[0], a[1] + b[1], a[2] + b[2]} }
func sub(a, b vec) vec           { return vec{a[0] - b[0], a[1] - b[1], a[2] - b[2]} }
func scale(s float64, a vec) vec { return vec{s * a[0], s * a[1], s * a[2]} }
func dot(a, b vec) float64       { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func norm(a vec) float64         { return math.Sqrt(dot(a, a)) }

func cross(a, b vec) vec {
	return vec{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

// unit returns a/|a| and false when |a| is below tiny.
func unit(a vec, tiny float64) (vec, bool) {
	n := norm(a)
	if n <= tiny || math.IsNaN(n) {
		return vec{}, false
	}
	return scale(1/n, a), true
}

func identity() mat { return mat{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}} }

func mulVec(m *mat, a vec) vec {
	return vec{
		m[0][0]*a[0] + m[0][1]*a[1] + m[0][2]*a[2],
		m[1][0]*a[0] + m[1][1]*a[1] + m[1][2]*a[2],
		m[2][0]*a[0] + m[2][1]*a[1] + m[2][2]*a[2],
	}
}

func mulMat(a, b *mat) mat {
	var c mat
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			c[i][j] = a[i][0]*b[0][j] + a[i][1]*b[1][j] + a[i][2]*b[2][j]
		}
	}
	return c
}

func transpose(a *mat) mat {
	var t mat
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			t[i][j] = a[j][i]
		}
	}
	return t
}

// rotation returns the proper rotation by angle (radians) about the unit
// axis u (Rodrigues' formula).
func rotation(u vec, angle float64) mat {
	c, s := math.Cos(angle), math.Sin(angle)
	t := 1 - c
	x, y, z := u[0], u[1], u[2]
	return mat{
		{c + x*x*t, x*y*t - z*s, x*z*t + y*s},
		{y*x*t + z*s, c + y*y*t, y*z*t - x*s},
		{z*x*t - y*s, z*y*t + x*s, c + z*z*t},
	}
}

// reflection returns the reflection through the plane with unit normal n.
func reflection(n vec) mat {
	var m mat
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			m[i][j] = -2 * n[i] * n[j]
		}
		m[i][i]++
	}
	return m
}

// improper returns S_n about the unit axis u: rotation by 2π/n followed by
// reflection through the plane perpendicular to u.
func improper(u vec, n int) mat {
	r := rotation(u, 2*math.Pi/float64(n))
	s := reflection(u)
	return mulMat(&s, &r)
}

func inversion() mat { return mat{{-1, 0, 0}, {0, -1, 0}, {0, 0, -1}} }

// maxDiff returns the largest absolute element difference of a and b.
func maxDiff(a, b *mat) float64 {
	d := 0.0
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			d = math.Max(d, math.Abs(a[i][j]-b[i][j]))
		}
	}
	return d
}

// eigSym3 diagonalizes the symmetric matrix a by cyclic Jacobi rotations.
// It returns the eigenvalues in ascending order and the eigenvectors as the
// rows of vecs (vecs[k] belongs to vals[k]).
func eigSym3(a mat) (vals [3]float64, vecs [3]vec) {
	v := identity()
	for sweep := 0; sweep < 50; sweep++ {
		off := a[0][1]*a[0][1] + a[0][2]*a[0][2] + a[1][2]*a[1][2]
		scaleA := a[0][0]*a[0][0] + a[1][1]*a[1][1] + a[2][2]*a[2][2]
		if off <= 1e-30*scaleA || off == 0 {
			break
		}
		for p := 0; p < 2; p++ {
			for q := p + 1; q < 3; q++ {
				if a[p][q] == 0 {
					continue
				}
				theta := (a[q][q] - a[p][p]) / (2 * a[p][q])
				t := math.Copysign(1, theta) / (math.Abs(theta) + math.Sqrt(theta*theta+1))
				c := 1 / math.Sqrt(t*t+1)
				s := t * c
				// a ← Jᵀ a J with J the rotation in the (p,q) plane.
				for k := 0; k < 3; k++ {
					akp, akq := a[k][p], a[k][q]
					a[k][p] = c*akp - s*akq
					a[k][q] = s*akp + c*akq
				}
				for k := 0; k < 3; k++ {
					apk, aqk := a[p][k], a[q][k]
					a[p][k] = c*apk - s*aqk
					a[q][k] = s*apk + c*aqk
				}
				for k := 0; k < 3; k++ {
					vkp, vkq := v[k][p], v[k][q]
					v[k][p] = c*vkp - s*vkq
					v[k][q] = s*vkp + c*vkq
				}
			}
		}
	}
	idx := [3]int{0, 1, 2}
	for i := 1; i < 3; i++ {
		for j := i; j > 0 && a[idx[j]][idx[j]] < a[idx[j-1]][idx[j-1]]; j-- {
			idx[j], idx[j-1] = idx[j-1], idx[j]
		}
	}
	for k, c := range idx {
		vals[k] = a[c][c]
		vecs[k] = vec{v[0][c], v[1][c], v[2][c]}
	}
	return vals, vecs
}
