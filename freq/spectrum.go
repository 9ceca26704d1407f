package freq

import "math"

// Spectrum returns the IR absorption at each wavenumber of grid (cm⁻¹):
// every band a Lorentzian of full width at half maximum fwhmCm1 and area
// its intensity,
//
//	ε(ν̃) = Σ_p A_p · (γ/π) / ((ν̃ − ν̃_p)² + γ²),  γ = fwhm/2,
//
// in km/mol per cm⁻¹ when the intensities A_p are in km/mol. Imaginary
// modes (negative wavenumbers) are left out.
func Spectrum(wavenumbersCm1, intensitiesKmMol []float64, fwhmCm1 float64, grid []float64) []float64 {
	out := make([]float64, len(grid))
	g := fwhmCm1 / 2
	if !(g > 0) {
		return out
	}
	for p, nu := range wavenumbersCm1 {
		if nu <= 0 || p >= len(intensitiesKmMol) {
			continue
		}
		a := intensitiesKmMol[p]
		for i, x := range grid {
			d := x - nu
			out[i] += a * g / math.Pi / (d*d + g*g)
		}
	}
	return out
}

// AnimationFrames returns frames geometries (3N, bohr) over one period of
// the mode: x0 + A·sin(2πk/frames)·d, with d the unit Cartesian
// displacement of the mode and A chosen so that the atom that moves most
// moves maxShiftBohr at the turning points.
func AnimationFrames(x0, displacement []float64, maxShiftBohr float64, frames int) [][]float64 {
	big := 0.0
	for a := 0; a+2 < len(displacement); a += 3 {
		d := math.Sqrt(displacement[a]*displacement[a] + displacement[a+1]*displacement[a+1] + displacement[a+2]*displacement[a+2])
		big = math.Max(big, d)
	}
	amp := 0.0
	if big > 0 {
		amp = maxShiftBohr / big
	}
	out := make([][]float64, frames)
	for k := range out {
		s := amp * math.Sin(2*math.Pi*float64(k)/float64(frames))
		x := make([]float64, len(x0))
		for i := range x {
			x[i] = x0[i] + s*displacement[i]
		}
		out[k] = x
	}
	return out
}
