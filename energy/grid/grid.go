package grid

import (
	"fmt"
	"math"
	"sync"
)

// DefaultLevel is the accuracy level used when none is asked for.
const DefaultLevel = 3

// MinLevel and MaxLevel bound the accuracy levels.
const (
	MinLevel = 1
	MaxLevel = 5
)

// Pruning boundaries, as fractions of the atom's Bragg–Slater radius R:
// radial shells with r < pruneInner·R use the inner angular rule, those with
// r < pruneMiddle·R the middle one, all others the full one.
const (
	pruneInner  = 0.25
	pruneMiddle = 0.5
)

// weightCutoff is the smallest point weight kept; points whose total weight
// (radial × angular × cell function) is below it are dropped.
const weightCutoff = 1e-15

// maxBatchPoints is the largest number of points in one batch.
const maxBatchPoints = 256

// LevelSpec describes one accuracy level.
type LevelSpec struct {
	Level int
	// Radial is the number of radial shells per atom for the rows of the
	// periodic table: [0] H–He, [1] Li–Ne, [2] Na–Ar, [3] K–Kr, [4] Rb–Xe.
	Radial [5]int
	// Angular is the number of Lebedev–Laikov points on a radial shell:
	// [0] for r < 0.25 R, [1] for 0.25 R ≤ r < 0.5 R, [2] beyond, with R the
	// atom's Bragg–Slater radius.
	Angular [3]int
}

// levels is the table of accuracy levels.
var levels = [MaxLevel]LevelSpec{
	{Level: 1, Radial: [5]int{30, 40, 45, 55, 60}, Angular: [3]int{26, 50, 194}},
	{Level: 2, Radial: [5]int{40, 55, 60, 70, 75}, Angular: [3]int{38, 86, 302}},
	{Level: 3, Radial: [5]int{55, 70, 80, 90, 95}, Angular: [3]int{50, 110, 590}},
	{Level: 4, Radial: [5]int{70, 90, 100, 110, 120}, Angular: [3]int{86, 194, 770}},
	{Level: 5, Radial: [5]int{90, 115, 125, 140, 150}, Angular: [3]int{110, 302, 1202}},
}

// LevelInfo returns the description of an accuracy level.
func LevelInfo(level int) (LevelSpec, error) {
	if level < MinLevel || level > MaxLevel {
		return LevelSpec{}, fmt.Errorf("grid: level %d out of range %d–%d", level, MinLevel, MaxLevel)
	}
	return levels[level-1], nil
}

// Batch is a spatially compact block of consecutive grid points, all
// belonging to one atom.
type Batch struct {
	Start, End int        // points Start ≤ i < End
	Atom       int        // index of the atom the points belong to
	Center     [3]float64 // center of the bounding sphere, bohr
	Radius     float64    // radius of the bounding sphere, bohr
}

// Grid is a molecular integration grid: ∫ f(r) d³r ≈ Σ_i W[i] f(X[i], Y[i], Z[i]).
type Grid struct {
	X, Y, Z []float64 // point coordinates, bohr
	W       []float64 // weights, bohr³ (cell function included)
	Atom    []int     // atom each point belongs to
	Batches []Batch   // consecutive blocks of points in order
	Level   int
	Frame   Frame
	// Dropped counts points whose weight fell below 1e-15.
	Dropped int
}

// NumPoints returns the number of grid points.
func (g *Grid) NumPoints() int { return len(g.W) }

// New builds the molecular grid for atoms with atomic numbers z (1–54) at
// positions (bohr), at an accuracy level 1–5, with angular grids oriented by
// frame, using up to threads goroutines. The result does not depend on
// threads.
func New(z []int, positions [][3]float64, level int, frame Frame, threads int) (*Grid, error) {
	spec, err := LevelInfo(level)
	if err != nil {
		return nil, err
	}
	return build(z, positions, spec, frame, threads)
}

// atomPoints is the raw grid of one atom before the cell function.
type atomPoints struct {
	x, y, z, w []float64
}

func build(z []int, positions [][3]float64, spec LevelSpec, frame Frame, threads int) (*Grid, error) {
	if len(z) != len(positions) {
		return nil, fmt.Errorf("grid: %d atomic numbers but %d positions", len(z), len(positions))
	}
	if len(z) == 0 {
		return nil, fmt.Errorf("grid: no atoms")
	}
	if threads < 1 {
		return nil, fmt.Errorf("grid: threads = %d, want at least 1", threads)
	}
	if err := frame.check(); err != nil {
		return nil, err
	}
	for i, p := range positions {
		if z[i] < 1 || z[i] > maxZ {
			return nil, fmt.Errorf("grid: atom %d: atomic number %d outside 1–%d", i+1, z[i], maxZ)
		}
		for _, c := range p {
			if math.IsNaN(c) || math.IsInf(c, 0) {
				return nil, fmt.Errorf("grid: atom %d: position %v is not finite", i+1, p)
			}
		}
		for j := 0; j < i; j++ {
			if sqDist(p, positions[j]) < 1e-8 {
				return nil, fmt.Errorf("grid: atoms %d and %d coincide", j+1, i+1)
			}
		}
	}
	rules := map[int]*angularRule{}
	for _, n := range spec.Angular {
		if rules[n] != nil {
			continue
		}
		r, err := loadLebedev(n)
		if err != nil {
			return nil, err
		}
		rules[n] = r
	}

	// Raw atomic grids.
	nat := len(z)
	raw := make([]atomPoints, nat)
	for a := 0; a < nat; a++ {
		raw[a] = atomGrid(z[a], positions[a], spec, frame, rules)
	}

	// Cell functions, in fixed chunks of points, in parallel.
	part := newPartition(z, positions)
	cellW := make([][]float64, nat)
	type chunk struct{ atom, lo, hi int }
	var chunks []chunk
	const chunkSize = 1024
	for a := 0; a < nat; a++ {
		n := len(raw[a].w)
		cellW[a] = make([]float64, n)
		for lo := 0; lo < n; lo += chunkSize {
			chunks = append(chunks, chunk{a, lo, min(lo+chunkSize, n)})
		}
	}
	parallel(threads, len(chunks), func() func(int) {
		d := make([]float64, nat)
		cell := make([]float64, nat)
		return func(i int) {
			c := chunks[i]
			rp := &raw[c.atom]
			for k := c.lo; k < c.hi; k++ {
				r := [3]float64{rp.x[k], rp.y[k], rp.z[k]}
				cellW[c.atom][k] = rp.w[k] * part.weight(r, c.atom, d, cell)
			}
		}
	})

	// Drop tiny weights and cut each atom's points into batches.
	type atomOut struct {
		x, y, z, w []float64
		batches    []Batch
		dropped    int
	}
	outs := make([]atomOut, nat)
	parallel(threads, nat, func() func(int) {
		return func(a int) {
			rp := &raw[a]
			var idx []int
			for k, w := range cellW[a] {
				if math.Abs(w) >= weightCutoff {
					idx = append(idx, k)
				}
			}
			o := &outs[a]
			o.dropped = len(cellW[a]) - len(idx)
			var leaves [][]int
			leaves = splitBatches(rp, idx, leaves)
			n := len(idx)
			o.x = make([]float64, 0, n)
			o.y = make([]float64, 0, n)
			o.z = make([]float64, 0, n)
			o.w = make([]float64, 0, n)
			for _, leaf := range leaves {
				b := Batch{Start: len(o.w), Atom: a}
				lo := [3]float64{math.Inf(1), math.Inf(1), math.Inf(1)}
				hi := [3]float64{math.Inf(-1), math.Inf(-1), math.Inf(-1)}
				for _, k := range leaf {
					p := [3]float64{rp.x[k], rp.y[k], rp.z[k]}
					for c := 0; c < 3; c++ {
						lo[c] = math.Min(lo[c], p[c])
						hi[c] = math.Max(hi[c], p[c])
					}
					o.x = append(o.x, p[0])
					o.y = append(o.y, p[1])
					o.z = append(o.z, p[2])
					o.w = append(o.w, cellW[a][k])
				}
				b.End = len(o.w)
				for c := 0; c < 3; c++ {
					b.Center[c] = 0.5 * (lo[c] + hi[c])
				}
				r2 := 0.0
				for i := b.Start; i < b.End; i++ {
					r2 = math.Max(r2, sqDist(b.Center, [3]float64{o.x[i], o.y[i], o.z[i]}))
				}
				b.Radius = math.Sqrt(r2)
				o.batches = append(o.batches, b)
			}
		}
	})

	g := &Grid{Level: spec.Level, Frame: frame}
	total := 0
	for a := range outs {
		total += len(outs[a].w)
	}
	g.X = make([]float64, 0, total)
	g.Y = make([]float64, 0, total)
	g.Z = make([]float64, 0, total)
	g.W = make([]float64, 0, total)
	g.Atom = make([]int, 0, total)
	for a := range outs {
		o := &outs[a]
		off := len(g.W)
		g.X = append(g.X, o.x...)
		g.Y = append(g.Y, o.y...)
		g.Z = append(g.Z, o.z...)
		g.W = append(g.W, o.w...)
		for range o.w {
			g.Atom = append(g.Atom, a)
		}
		for _, b := range o.batches {
			b.Start += off
			b.End += off
			g.Batches = append(g.Batches, b)
		}
		g.Dropped += o.dropped
	}
	return g, nil
}

// atomGrid returns the pruned product grid of one atom (weights without the
// cell function).
func atomGrid(z int, center [3]float64, spec LevelSpec, f Frame, rules map[int]*angularRule) atomPoints {
	rr, wr := radialM4(spec.Radial[row(z)-1], xi(z))
	rbs := braggSlaterBohr(z)
	shellRule := func(r float64) *angularRule {
		switch {
		case r < pruneInner*rbs:
			return rules[spec.Angular[0]]
		case r < pruneMiddle*rbs:
			return rules[spec.Angular[1]]
		}
		return rules[spec.Angular[2]]
	}
	total := 0
	for _, r := range rr {
		total += shellRule(r).n
	}
	p := atomPoints{
		x: make([]float64, 0, total), y: make([]float64, 0, total),
		z: make([]float64, 0, total), w: make([]float64, 0, total),
	}
	for k, r := range rr {
		ang := shellRule(r)
		for j := 0; j < ang.n; j++ {
			u, v, t := ang.x[j], ang.y[j], ang.z[j]
			p.x = append(p.x, center[0]+r*(u*f[0][0]+v*f[1][0]+t*f[2][0]))
			p.y = append(p.y, center[1]+r*(u*f[0][1]+v*f[1][1]+t*f[2][1]))
			p.z = append(p.z, center[2]+r*(u*f[0][2]+v*f[1][2]+t*f[2][2]))
			p.w = append(p.w, 4*math.Pi*wr[k]*ang.w[j])
		}
	}
	return p
}

// splitBatches cuts the points idx of one atom into spatially compact
// leaves of at most maxBatchPoints points by recursive median bisection
// along the longest extent of the bounding box. Points are ordered by
// coordinate, then index, a total order, so the result is deterministic.
func splitBatches(p *atomPoints, idx []int, leaves [][]int) [][]int {
	if len(idx) == 0 {
		return leaves
	}
	if len(idx) <= maxBatchPoints {
		return append(leaves, idx)
	}
	lo := [3]float64{math.Inf(1), math.Inf(1), math.Inf(1)}
	hi := [3]float64{math.Inf(-1), math.Inf(-1), math.Inf(-1)}
	coord := [3][]float64{p.x, p.y, p.z}
	for _, k := range idx {
		for c := 0; c < 3; c++ {
			v := coord[c][k]
			if v < lo[c] {
				lo[c] = v
			}
			if v > hi[c] {
				hi[c] = v
			}
		}
	}
	axis := 0
	for c := 1; c < 3; c++ {
		if hi[c]-lo[c] > hi[axis]-lo[axis] {
			axis = c
		}
	}
	m := len(idx) / 2
	selectNth(idx, m, coord[axis])
	leaves = splitBatches(p, idx[:m], leaves)
	return splitBatches(p, idx[m:], leaves)
}

// parallel runs work(i) for i = 0…n−1 on up to threads goroutines. newWorker
// is called once per goroutine and returns a work function with its own
// scratch buffers.
func parallel(threads, n int, newWorker func() func(int)) {
	if threads > n {
		threads = n
	}
	if threads <= 1 {
		w := newWorker()
		for i := 0; i < n; i++ {
			w(i)
		}
		return
	}
	var wg sync.WaitGroup
	next := make(chan int)
	for t := 0; t < threads; t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := newWorker()
			for i := range next {
				w(i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		next <- i
	}
	close(next)
	wg.Wait()
}

// selectNth reorders idx so that idx[:m] holds the m points that come first
// in the order (x[i], i) and idx[m:] the rest (quickselect with a
// median-of-three pivot).
func selectNth(idx []int, m int, x []float64) {
	less := func(a, b int) bool { return x[a] < x[b] || (x[a] == x[b] && a < b) }
	lo, hi := 0, len(idx)-1
	for hi > lo {
		mid := lo + (hi-lo)/2
		// Median of three into idx[mid].
		if less(idx[mid], idx[lo]) {
			idx[mid], idx[lo] = idx[lo], idx[mid]
		}
		if less(idx[hi], idx[lo]) {
			idx[hi], idx[lo] = idx[lo], idx[hi]
		}
		if less(idx[hi], idx[mid]) {
			idx[hi], idx[mid] = idx[mid], idx[hi]
		}
		pivot := idx[mid]
		i, j := lo, hi
		for i <= j {
			for less(idx[i], pivot) {
				i++
			}
			for less(pivot, idx[j]) {
				j--
			}
			if i <= j {
				idx[i], idx[j] = idx[j], idx[i]
				i++
				j--
			}
		}
		// Now idx[lo..j] ≤ pivot ≤ idx[i..hi], with j < i.
		switch {
		case m <= j:
			hi = j
		case m >= i:
			lo = i
		default:
			return
		}
	}
}
