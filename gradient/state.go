package gradient

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"

	"poise/energy/scf"
)

// stateMagic starts an encoded SCF state (Point.State): format and
// version, then the number of basis functions and of densities (uint32,
// little-endian) and the density elements (float64, little-endian).
const stateMagic = "poise-scf-state/1\n"

// maxStateNBF bounds the basis size of a decoded state (so that the size
// check cannot overflow): far above any molecule poise can treat.
const maxStateNBF = 1 << 20

// encodeState encodes st for Point.State.
func encodeState(st *scf.State) []byte {
	if st == nil {
		return nil
	}
	size := len(stateMagic) + 8
	for _, d := range st.Density {
		size += 8 * len(d)
	}
	b := make([]byte, 0, size)
	b = append(b, stateMagic...)
	b = binary.LittleEndian.AppendUint32(b, uint32(st.NBF))
	b = binary.LittleEndian.AppendUint32(b, uint32(len(st.Density)))
	for _, d := range st.Density {
		for _, v := range d {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
	}
	return b
}

// decodeState decodes a Point.State.
func decodeState(b []byte) (*scf.State, error) {
	if len(b) < len(stateMagic)+8 || string(b[:len(stateMagic)]) != stateMagic {
		return nil, errors.New("not an SCF state of this program")
	}
	b = b[len(stateMagic):]
	nbf := int(binary.LittleEndian.Uint32(b))
	nd := int(binary.LittleEndian.Uint32(b[4:]))
	b = b[8:]
	if nbf <= 0 || nbf > maxStateNBF || nd < 1 || nd > 2 || len(b) != 8*nd*nbf*nbf {
		return nil, fmt.Errorf("SCF state of %d bytes does not hold %d densities of %d basis functions", len(b), nd, nbf)
	}
	st := &scf.State{NBF: nbf, Density: make([][]float64, nd)}
	for k := range st.Density {
		d := make([]float64, nbf*nbf)
		for i := range d {
			d[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
			if math.IsNaN(d[i]) || math.IsInf(d[i], 0) {
				return nil, fmt.Errorf("SCF state: density element %d is %v", i, d[i])
			}
		}
		b = b[8*len(d):]
		st.Density[k] = d
	}
	return st, nil
}

// extrapolate returns s0 + w·(from − s0), which must describe the same
// basis and spins.
func extrapolate(s0, from *scf.State, w float64) (*scf.State, error) {
	if from.NBF != s0.NBF || len(from.Density) != len(s0.Density) {
		return nil, fmt.Errorf("a state of %d basis functions and %d densities for a surface with %d and %d",
			from.NBF, len(from.Density), s0.NBF, len(s0.Density))
	}
	if math.IsNaN(w) || math.IsInf(w, 0) {
		return nil, fmt.Errorf("extrapolation weight %v", w)
	}
	out := &scf.State{NBF: s0.NBF, Density: make([][]float64, len(s0.Density))}
	for k, d0 := range s0.Density {
		d := make([]float64, len(d0))
		f := from.Density[k]
		for i, v := range d0 {
			d[i] = v + w*(f[i]-v)
		}
		out.Density[k] = d
	}
	return out, nil
}
