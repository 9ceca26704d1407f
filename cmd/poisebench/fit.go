package main

import (
	"errors"
	"math"
)

// fitPowerLaw fits y = a·x^k to the points by linear least squares on
// log y = log a + k·log x and returns the exponent k and the prefactor a.
// Every x and y must be positive; at least two distinct x are needed.
func fitPowerLaw(x, y []float64) (k, a float64, err error) {
	if len(x) != len(y) {
		return 0, 0, errors.New("fit: x and y differ in length")
	}
	n := float64(len(x))
	if len(x) < 2 {
		return 0, 0, errors.New("fit: need at least two points")
	}
	var mx, my float64
	for i := range x {
		if !(x[i] > 0) || !(y[i] > 0) {
			return 0, 0, errors.New("fit: values must be positive")
		}
		mx += math.Log(x[i])
		my += math.Log(y[i])
	}
	mx /= n
	my /= n
	var sxy, sxx float64
	for i := range x {
		dx := math.Log(x[i]) - mx
		sxy += dx * (math.Log(y[i]) - my)
		sxx += dx * dx
	}
	if sxx == 0 {
		return 0, 0, errors.New("fit: all x are equal")
	}
	k = sxy / sxx
	return k, math.Exp(my - k*mx), nil
}
