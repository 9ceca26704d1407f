package integral

import "math"

// Boys function F_m(t) = ∫₀¹ u^{2m} e^{−t u²} du.
//
// Method (S. F. Boys, Proc. R. Soc. London A 200, 542 (1950) for the
// function; the tabulation scheme is the usual one, e.g. T. Helgaker,
// P. Jørgensen, J. Olsen, "Molecular Electronic-Structure Theory", Wiley
// 2000, section 9.8):
//
//   - t < boysTabMax: F_m at the nearest grid point t₀ = k·h (h = 0.1) is
//     read from a table and shifted to t by the Taylor series
//     F_m(t₀−δ) = Σ_k F_{m+k}(t₀) δ^k/k!, |δ| ≤ h/2, with boysTaylor terms
//     (truncation error below (h/2)^8/8! ≈ 1e−15 relative). Only the highest
//     order requested is obtained this way; lower orders follow from the
//     downward recursion F_m = (2t F_{m+1} + e^{−t})/(2m+1), which is stable.
//     For few orders the Taylor series is applied to every order instead,
//     saving the exponential.
//   - t ≥ boysTabMax: F_0 = ½√(π/t) (erf √t = 1 to double precision) and the
//     upward recursion F_{m+1} = ((2m+1)F_m − e^{−t})/(2t), which is stable
//     there for all supported orders.
//
// The table is package-level read-only data computed once in init() from the
// convergent series F_m(t) = e^{−t} Σ_k (2t)^k / ((2m+1)(2m+3)…(2m+2k+1))
// (all terms positive, summed with compensation) at the top order followed
// by downward recursion.

const (
	// BoysMaxOrder is the highest order m that Boys supports.
	BoysMaxOrder = 32

	boysStep    = 0.1  // grid spacing h
	boysInvStep = 10.0 // 1/h
	boysTabMax  = 36.0 // table covers 0 ≤ t < boysTabMax
	boysTaylor  = 8    // Taylor terms
	boysCols    = BoysMaxOrder + boysTaylor
	boysRows    = int(boysTabMax*boysInvStep) + 1
	// boysDirect: up to this many orders the Taylor series is applied to
	// each order separately (cheaper than an exponential plus recursion).
	boysDirect = 1
)

// boysTable[k*boysCols+m] = F_m(k·h).
var boysTable = makeBoysTable()

// boysInvOdd[m] = 1/(2m+1).
var boysInvOdd = func() (r [boysCols + 1]float64) {
	for m := range r {
		r[m] = 1 / float64(2*m+1)
	}
	return
}()

// boysTaylorInv[k] = 1/(k+1), the factors of the nested Taylor sum.
var boysTaylorInv = func() (r [boysTaylor]float64) {
	for k := range r {
		r[k] = 1 / float64(k+1)
	}
	return
}()

func makeBoysTable() []float64 {
	tab := make([]float64, boysRows*boysCols)
	for k := 0; k < boysRows; k++ {
		t := float64(k) * boysStep
		row := tab[k*boysCols : (k+1)*boysCols]
		top := boysCols - 1
		row[top] = boysSeries(top, t)
		e := math.Exp(-t)
		for m := top - 1; m >= 0; m-- {
			row[m] = (2*t*row[m+1] + e) / float64(2*m+1)
		}
	}
	return tab
}

// boysSeries evaluates F_m(t) = e^{−t} Σ_k (2t)^k / ((2m+1)(2m+3)…(2m+2k+1))
// with Neumaier-compensated summation. It converges for every t but needs
// about 2t terms; it is used only to build the table.
func boysSeries(m int, t float64) float64 {
	term := 1 / float64(2*m+1)
	sum, comp := term, 0.0
	for k := 1; k < 10000; k++ {
		term *= 2 * t / float64(2*m+2*k+1)
		s := sum + term
		if math.Abs(sum) >= math.Abs(term) {
			comp += (sum - s) + term
		} else {
			comp += (term - s) + sum
		}
		sum = s
		if term < 1e-20*sum {
			break
		}
	}
	return math.Exp(-t) * (sum + comp)
}

// Boys fills out[0..mmax] with F_m(t) = ∫₀¹ u^{2m} e^{−t u²} du for
// m = 0 … mmax. It requires 0 ≤ mmax ≤ BoysMaxOrder, t ≥ 0 and
// len(out) > mmax. Relative accuracy is about 1e−15 (a few units in the
// last place); it allocates nothing.
func Boys(mmax int, t float64, out []float64) {
	out = out[:mmax+1]
	if t < boysTabMax {
		k := int(t*boysInvStep + 0.5)
		d := float64(k)*boysStep - t // δ = t₀ − t
		row := boysTable[k*boysCols : k*boysCols+boysCols]
		if mmax < boysDirect {
			for m := 0; m <= mmax; m++ {
				out[m] = boysTaylorSum(row[m:m+boysTaylor], d)
			}
			return
		}
		f := boysTaylorSum(row[mmax:mmax+boysTaylor], d)
		out[mmax] = f
		e := math.Exp(-t)
		t2 := 2 * t
		// F_m = a_m F_{m+1} + b_m with a_m = 2t/(2m+1), b_m = e^{−t}/(2m+1):
		// only one multiply-add per order lies on the dependency chain.
		for m := mmax - 1; m >= 0; m-- {
			inv := boysInvOdd[m]
			f = t2*inv*f + e*inv
			out[m] = f
		}
		return
	}
	f := 0.5 * math.Sqrt(math.Pi/t)
	out[0] = f
	if mmax == 0 {
		return
	}
	e := math.Exp(-t)
	h := 0.5 / t
	for m := 0; m < mmax; m++ {
		f = (float64(2*m+1)*f - e) * h
		out[m+1] = f
	}
}

// boysTaylorSum returns Σ_k r[k] d^k/k! for k < boysTaylor by nested
// multiplication.
func boysTaylorSum(r []float64, d float64) float64 {
	_ = r[boysTaylor-1]
	f := r[boysTaylor-1]
	for k := boysTaylor - 2; k >= 0; k-- {
		f = r[k] + f*d*boysTaylorInv[k]
	}
	return f
}
