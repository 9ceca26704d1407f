package integral

// Index tables for the electron-repulsion recursions. They are built once,
// when the package is initialized, and never written afterwards.
//
// Cartesian components of all angular momenta 0 … eriMaxTab are numbered
// consecutively ("cumulative index"): level l starts at eriCum(l) =
// l(l+1)(l+2)/6 and inside a level the order is that of basis.Shell
// (lx from l down, then ly from l−lx down).

const (
	// eriMaxL is the highest angular momentum of one shell.
	eriMaxL = 5
	// eriMaxTab is the highest level in the index tables: two shells of
	// eriMaxL on one side, plus room for two derivative orders.
	eriMaxTab = 2*eriMaxL + 2
	// eriMaxM is the highest Boys order the recursions may ask for
	// (four shells of eriMaxL plus two derivative orders).
	eriMaxM = 4*eriMaxL + 2
)

// eriCum returns the number of Cartesian components of all levels below l.
func eriCum(l int) int { return l * (l + 1) * (l + 2) / 6 }

// eriCartIndex returns the position of x^lx y^ly z^lz inside its level
// (l = lx+ly+lz) in the order of basis.Shell.
func eriCartIndex(lx, ly, lz int) int {
	l := lx + ly + lz
	return (l-lx)*(l-lx+1)/2 + (l - lx - ly)
}

// eriCart describes one Cartesian component in the cumulative numbering.
type eriCart struct {
	n     [3]int8  // exponents lx, ly, lz
	level int8     // lx+ly+lz
	dir   int8     // build direction: the axis i with the smallest positive n[i]
	minus [3]int32 // cumulative index of the component with n[i]−1, −1 if n[i] = 0
	plus  [3]int32 // cumulative index of the component with n[i]+1, −1 beyond eriMaxTab
}

// eriCartTab lists every Cartesian component of levels 0 … eriMaxTab.
var eriCartTab = buildERICartTab()

func buildERICartTab() []eriCart {
	tab := make([]eriCart, eriCum(eriMaxTab+1))
	for l := 0; l <= eriMaxTab; l++ {
		for _, c := range cartesianExponents(l) {
			n := eriCum(l) + eriCartIndex(c[0], c[1], c[2])
			e := eriCart{level: int8(l), dir: -1}
			for i := 0; i < 3; i++ {
				e.n[i] = int8(c[i])
				e.minus[i], e.plus[i] = -1, -1
				if c[i] > 0 {
					d := c
					d[i]--
					e.minus[i] = int32(eriCum(l-1) + eriCartIndex(d[0], d[1], d[2]))
					if e.dir < 0 || c[i] < int(e.n[e.dir]) {
						e.dir = int8(i)
					}
				}
				if l < eriMaxTab {
					d := c
					d[i]++
					e.plus[i] = int32(eriCum(l+1) + eriCartIndex(d[0], d[1], d[2]))
				}
			}
			tab[n] = e
		}
	}
	return tab
}

// eriNumClass is the number of entries of a table indexed by eriClass.
const eriNumClass = (eriMaxL + 1) * (eriMaxL + 1) * (eriMaxL + 1) * (eriMaxL + 1)
