package integral

import "math"

// Boys function values for the generated ERI code (eri_gen.go), which
// evaluates F_m(t) inline. For t < eriBoysTMax it uses the Taylor series
// about the nearest grid point t₀ = k·h (h = eriBoysStep),
//
//	F_m(t₀+d) = Σ_j F_{m+j}(t₀) (−d)^j / j!,   |d| ≤ h/2,
//
// with 8 terms (truncation below (h/2)^8/8! ≈ 1e−15 relative, since
// F_{m+j} ≤ F_m), the coefficients F_{m+j}(t₀)(−1)^j/j! tabulated here from
// Boys (boys.go). For t ≥ eriBoysTMax the generated code uses the
// asymptotic forms F_0 = ½√(π/t), F_{m+1} = (2m+1)/(2t)·F_m (in the form
// of the primitive charges kf, without dividing by t), which drop
// terms of order e^{−t}(2t)^{m−1}/((2m−1)!!F_0(t)) relative, below 1e−16
// for m ≤ eriBoysMaxM at t = 60 (checked by TestERIBoysInline).

const (
	eriBoysMaxM    = 9 // highest order tabulated (four d shells; three-centre derivatives (dd|g))
	eriBoysTerms   = 8 // Taylor terms per order
	eriBoysRow     = (eriBoysMaxM + 1) * eriBoysTerms
	eriBoysStep    = 0.1  // grid spacing h
	eriBoysInvStep = 10.0 // 1/h
	eriBoysTMax    = 60.0 // the table covers 0 ≤ t < eriBoysTMax
)

// eriBoysRows is the number of grid points t₀ = 0, h, …, eriBoysTMax.
const eriBoysRows = int(eriBoysTMax*eriBoysInvStep) + 1

// eriBoysTab[k][m*eriBoysTerms + j] = F_{m+j}(k·h)·(−1)^j/j!.
// Read-only after initialization.
var eriBoysTab = func() *[eriBoysRows][eriBoysRow]float64 {
	tab := new([eriBoysRows][eriBoysRow]float64)
	var f [eriBoysMaxM + eriBoysTerms]float64
	for k := range tab {
		Boys(eriBoysMaxM+eriBoysTerms-1, float64(k)*eriBoysStep, f[:])
		for m := 0; m <= eriBoysMaxM; m++ {
			fact := 1.0
			for j := 0; j < eriBoysTerms; j++ {
				if j > 0 {
					fact *= -float64(j)
				}
				tab[k][m*eriBoysTerms+j] = f[m+j] / fact
			}
		}
	}
	return tab
}()

// eriBoysInline fills f[0..L] with F_m(t) exactly as the generated code
// does when every order comes from its own Taylor series (L ≤ eriBoysMaxM).
// It exists for tests of the table.
func eriBoysInline(L int, t float64, f []float64) {
	if t < eriBoysTMax {
		k := int(t*eriBoysInvStep + 0.5)
		d := t - float64(k)*eriBoysStep
		for m := 0; m <= L; m++ {
			c := eriBoysTab[k][m*eriBoysTerms : (m+1)*eriBoysTerms]
			v := c[eriBoysTerms-1]
			for j := eriBoysTerms - 2; j >= 0; j-- {
				v = c[j] + d*v
			}
			f[m] = v
		}
		return
	}
	f[0] = 0.5 * math.Sqrt(math.Pi/t)
	h := 0.5 / t
	for m := 0; m < L; m++ {
		f[m+1] = float64(2*m+1) * h * f[m]
	}
}
