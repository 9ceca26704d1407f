package gradient

import (
	"bytes"
	"context"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/scf"
)

// Point.State is the converged density, the same as the warm start a
// plain evaluation leaves; a central-difference pair started as freq does
// it (the −h point from the +h point's state, weight −1) converges to the
// energy and gradient of a start from the reference density in fewer
// iterations. HF/3-21G water, orbital-gradient tolerance 1e-8 as for
// Hessian points: two converged solutions differ in energy by at most the
// energy-change criterion (1e-10 Eh, scf.DefaultEnergyTolerance) and in
// gradient by about the residual orbital gradient times a factor of order
// 1–10 (common practice: a non-variational quantity errs linearly), so
// 1e-7 Eh/bohr.
func TestExtrapolatedStart(t *testing.T) {
	ctx := context.Background()
	m := makeMol(t, waterDistorted, 0, 1)
	s := surface(t, m, "hf", "3-21g", basis.Default, 0, scf.Options{GradientTolerance: 1e-8})
	x0 := Coordinates(m)
	var ref Point
	if err := s.Evaluate(ctx, x0, Request{Gradient: true, State: true}, &ref); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(ref.State, encodeState(s.WarmStart())) {
		t.Fatal("Point.State is not the warm start the evaluation left")
	}
	const h = 0.0025
	xp := append([]float64(nil), x0...)
	xm := append([]float64(nil), x0...)
	xp[1] += h
	xm[1] -= h
	var plus, minus, minusX Point
	if err := s.Evaluate(ctx, xp, Request{Gradient: true, KeepWarmStart: true, State: true}, &plus); err != nil {
		t.Fatal(err)
	}
	if err := s.Evaluate(ctx, xm, Request{Gradient: true, KeepWarmStart: true}, &minus); err != nil {
		t.Fatal(err)
	}
	if err := s.Evaluate(ctx, xm, Request{Gradient: true, KeepWarmStart: true, Start: &Extrapolation{From: plus.State, Weight: -1}}, &minusX); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(encodeState(s.WarmStart()), ref.State) {
		t.Error("KeepWarmStart evaluations changed the warm start")
	}
	t.Logf("−h point: %d iterations from the reference density, %d extrapolated", minus.SCFIterations, minusX.SCFIterations)
	if minusX.SCFIterations >= minus.SCFIterations {
		t.Errorf("extrapolated start took %d iterations, the reference density %d", minusX.SCFIterations, minus.SCFIterations)
	}
	if d := math.Abs(minusX.EnergyHartree - minus.EnergyHartree); d > 1e-10 {
		t.Errorf("energies from the two starts differ by %.2e Eh", d)
	}
	for i := range minus.Gradient {
		if d := math.Abs(minusX.Gradient[i] - minus.Gradient[i]); d > 1e-7 {
			t.Errorf("gradient %d from the two starts differs by %.2e Eh/bohr", i, d)
		}
	}
	// A state that does not fit (another basis; damaged bytes) leaves the
	// warm start: the same iterations and energy as without it.
	other := surface(t, m, "hf", "sto-3g", basis.Default, 0, scf.Options{GradientTolerance: 1e-8})
	var p, plain Point
	if err := other.Evaluate(ctx, x0, Request{}, &p); err != nil {
		t.Fatal(err)
	}
	if err := other.Evaluate(ctx, xm, Request{KeepWarmStart: true}, &plain); err != nil {
		t.Fatal(err)
	}
	for name, from := range map[string][]byte{"3-21G state": plus.State, "damaged": plus.State[:len(plus.State)-3]} {
		if err := other.Evaluate(ctx, xm, Request{KeepWarmStart: true, Start: &Extrapolation{From: from, Weight: -1}}, &p); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if p.SCFIterations != plain.SCFIterations || p.EnergyHartree != plain.EnergyHartree {
			t.Errorf("%s: %d iterations, E %.12f; from the warm start %d, %.12f", name, p.SCFIterations, p.EnergyHartree, plain.SCFIterations, plain.EnergyHartree)
		}
	}
}

// The encoding round-trips, and damaged encodings are refused.
func TestStateEncoding(t *testing.T) {
	st := &scf.State{NBF: 2, Density: [][]float64{{1, 0.5, 0.5, -2}, {0.25, 0, 0, 3}}}
	b := encodeState(st)
	got, err := decodeState(b)
	if err != nil {
		t.Fatal(err)
	}
	if got.NBF != 2 || len(got.Density) != 2 || got.Density[1][3] != 3 || got.Density[0][1] != 0.5 {
		t.Errorf("round trip: %+v", got)
	}
	for name, bad := range map[string][]byte{
		"empty":     nil,
		"truncated": b[:len(b)-1],
		"longer":    append(append([]byte(nil), b...), 0),
		"magic":     append([]byte("x"), b[1:]...),
		"nan":       encodeState(&scf.State{NBF: 1, Density: [][]float64{{math.NaN()}}}),
		"3 spins":   encodeState(&scf.State{NBF: 1, Density: [][]float64{{1}, {1}, {1}}}),
	} {
		if _, err := decodeState(bad); err == nil {
			t.Errorf("%s encoding accepted", name)
		}
	}
	if _, err := extrapolate(st, &scf.State{NBF: 2, Density: st.Density[:1]}, -1); err == nil {
		t.Error("extrapolation between states of different spins accepted")
	}
}

// FuzzDecodeState: state files are read back from work directories, so
// any bytes must give a state or an error, never a panic; a decoded state
// encodes back to the same bytes.
func FuzzDecodeState(f *testing.F) {
	f.Add(encodeState(&scf.State{NBF: 1, Density: [][]float64{{2}}}))
	f.Add(encodeState(&scf.State{NBF: 2, Density: [][]float64{{1, 0, 0, 1}, {0.5, 0, 0, 0.5}}}))
	f.Add([]byte(stateMagic + "\xff\xff\xff\xff\x01\x00\x00\x00"))
	f.Fuzz(func(t *testing.T, b []byte) {
		st, err := decodeState(b)
		if err != nil {
			return
		}
		if !bytes.Equal(encodeState(st), b) {
			t.Errorf("decoded state does not encode back to its bytes")
		}
	})
}
