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

// eigSym3 diagonalizes the symmetric matrix a. It returns the eigenvalues
// in ascending order and the eigenvectors as the rows of vecs (vecs[k]
// belongs to vals[k]).
func eigSym3(a mat) (vals [3]float64, vecs [3]vec) {
	flat := make([]float64, 9)
	for i := 0; i < 3; i++ {
		copy(flat[3*i:3*i+3], a[i][:])
	}
	w, v := jacobi(flat, 3)
	for k := 0; k < 3; k++ {
		vals[k] = w[k]
		vecs[k] = vec{v[0*3+k], v[1*3+k], v[2*3+k]}
	}
	return vals, vecs
}

// jacobi diagonalizes the symmetric n×n matrix a (row-major, overwritten)
// by cyclic Jacobi rotations (G. H. Golub, C. F. Van Loan, Matrix
// Computations, 4th ed., §8.5). It returns the eigenvalues in ascending
// order and the eigenvectors as the columns of v (row-major n×n).
func jacobi(a []float64, n int) (vals, v []float64) {
	v = make([]float64, n*n)
	for i := 0; i < n; i++ {
		v[i*n+i] = 1
	}
	for sweep := 0; sweep < 100; sweep++ {
		off, diag := 0.0, 0.0
		for p := 0; p < n; p++ {
			diag += a[p*n+p] * a[p*n+p]
			for q := p + 1; q < n; q++ {
				off += a[p*n+q] * a[p*n+q]
			}
		}
		if off == 0 || off <= 1e-32*diag {
			break
		}
		for p := 0; p < n-1; p++ {
			for q := p + 1; q < n; q++ {
				apq := a[p*n+q]
				if apq == 0 {
					continue
				}
				theta := (a[q*n+q] - a[p*n+p]) / (2 * apq)
				t := math.Copysign(1, theta) / (math.Abs(theta) + math.Sqrt(theta*theta+1))
				c := 1 / math.Sqrt(t*t+1)
				s := t * c
				// a ← Jᵀ a J, v ← v J with J the rotation in the (p,q) plane.
				for k := 0; k < n; k++ {
					akp, akq := a[k*n+p], a[k*n+q]
					a[k*n+p] = c*akp - s*akq
					a[k*n+q] = s*akp + c*akq
				}
				for k := 0; k < n; k++ {
					apk, aqk := a[p*n+k], a[q*n+k]
					a[p*n+k] = c*apk - s*aqk
					a[q*n+k] = s*apk + c*aqk
				}
				for k := 0; k < n; k++ {
					vkp, vkq := v[k*n+p], v[k*n+q]
					v[k*n+p] = c*vkp - s*vkq
					v[k*n+q] = s*vkp + c*vkq
				}
			}
		}
	}
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	for i := 1; i < n; i++ {
		for j := i; j > 0 && a[idx[j]*n+idx[j]] < a[idx[j-1]*n+idx[j-1]]; j-- {
			idx[j], idx[j-1] = idx[j-1], idx[j]
		}
	}
	vals = make([]float64, n)
	sorted := make([]float64, n*n)
	for k, c := range idx {
		vals[k] = a[c*n+c]
		for i := 0; i < n; i++ {
			sorted[i*n+k] = v[i*n+c]
		}
	}
	return vals, sorted
}

// bestRotation returns the rotation R that maximizes Σ w_i b_i·(R a_i), the
// weighted least-squares superposition of the points a onto b, from the
// unit quaternion of B. K. P. Horn, J. Opt. Soc. Am. A 4, 629 (1987).
func bestRotation(a, b []vec, w []float64) mat {
	var s mat // S_xy = Σ w a_x b_y
	for i := range a {
		for x := 0; x < 3; x++ {
			for y := 0; y < 3; y++ {
				s[x][y] += w[i] * a[i][x] * b[i][y]
			}
		}
	}
	sxx, sxy, sxz := s[0][0], s[0][1], s[0][2]
	syx, syy, syz := s[1][0], s[1][1], s[1][2]
	szx, szy, szz := s[2][0], s[2][1], s[2][2]
	n := []float64{
		sxx + syy + szz, syz - szy, szx - sxz, sxy - syx,
		syz - szy, sxx - syy - szz, sxy + syx, szx + sxz,
		szx - sxz, sxy + syx, -sxx + syy - szz, syz + szy,
		sxy - syx, szx + sxz, syz + szy, -sxx - syy + szz,
	}
	_, v := jacobi(n, 4)
	q0, qx, qy, qz := v[0*4+3], v[1*4+3], v[2*4+3], v[3*4+3]
	return mat{
		{q0*q0 + qx*qx - qy*qy - qz*qz, 2 * (qx*qy - q0*qz), 2 * (qx*qz + q0*qy)},
		{2 * (qy*qx + q0*qz), q0*q0 - qx*qx + qy*qy - qz*qz, 2 * (qy*qz - q0*qx)},
		{2 * (qz*qx - q0*qy), 2 * (qz*qy + q0*qx), q0*q0 - qx*qx - qy*qy + qz*qz},
	}
}
