// Command gen writes energy/integral/eri_gen.go: straight-line
// Head-Gordon–Pople code (M. Head-Gordon and J. A. Pople, J. Chem. Phys. 89,
// 5777 (1988)) for electron-repulsion integral classes with angular momentum
// up to genMaxL on every centre. For each canonical class (la ≥ lb,
// lc ≥ ld, bra pair "larger" than the ket pair, see eriPair.key) it emits
// one function that loops over primitive quartets, evaluates the Boys
// function from the tabulated Taylor expansion of eri_boys.go, runs the
// Obara–Saika vertical recursion (S. Obara and A. Saika, J. Chem. Phys. 84,
// 3963 (1986)) on only the intermediates the class needs, accumulates the
// contracted [e0|f0] and finally applies the horizontal recursion on bra
// and ket.
//
// Run it with go generate in energy/integral (see eri.go) or from the
// module root:
//
//	go run ./energy/integral/internal/gen -o energy/integral/eri_gen.go
//
// With -deriv it writes energy/integral/deriv_gen.go instead, the
// first-derivative classes (see deriv.go) and the three-centre ones (see
// deriv3.go):
//
//	go run ./energy/integral/internal/gen -deriv energy/integral/deriv_gen.go
package main

import (
	"bytes"
	"flag"
	"fmt"
	"go/format"
	"os"
	"sort"
	"strings"
)

// genMaxL is the highest angular momentum per centre with generated code.
const genMaxL = 2

// boysDirectMax: classes with L = la+lb+lc+ld up to this value evaluate
// every Boys order by its own Taylor series; higher ones evaluate the top
// order and recur downwards with one exponential. 3 was the fastest of
// 1, 3, 5 and 8 for benzene/6-31G*.
const boysDirectMax = 3

// estrin selects Estrin's scheme rather than Horner's rule for the Taylor
// polynomials of the Boys function (shorter dependency chains; about 5%
// faster for benzene/6-31G*).
const estrin = true

type vec [3]int

func (v vec) level() int { return v[0] + v[1] + v[2] }

func (v vec) add(i, d int) vec { v[i] += d; return v }

// comps lists the components of level l in the order of basis.Shell.
func comps(l int) []vec {
	var out []vec
	for lx := l; lx >= 0; lx-- {
		for ly := l - lx; ly >= 0; ly-- {
			out = append(out, vec{lx, ly, l - lx - ly})
		}
	}
	return out
}

func ncart(l int) int { return (l + 1) * (l + 2) / 2 }
func cum(l int) int   { return l * (l + 1) * (l + 2) / 6 }

// cumIndex is the cumulative index of component v (all lower levels first).
func cumIndex(v vec) int {
	l := v.level()
	return cum(l) + (l-v[0])*(l-v[0]+1)/2 + (l - v[0] - v[1])
}

// rule chooses the axis along which a component is reduced.
type rule struct {
	prio [3]int // axes in order of preference
	min  bool   // prefer the axis with the smallest positive exponent
}

func (r rule) dir(v vec) int {
	best := -1
	for _, i := range r.prio {
		if v[i] == 0 {
			continue
		}
		if best < 0 || (r.min && v[i] < v[best]) {
			best = i
		}
	}
	return best
}

func allRules() []rule {
	perms := [][3]int{{0, 1, 2}, {0, 2, 1}, {1, 0, 2}, {1, 2, 0}, {2, 0, 1}, {2, 1, 0}}
	var rs []rule
	for _, p := range perms {
		rs = append(rs, rule{p, false}, rule{p, true})
	}
	return rs
}

// ---------------------------------------------------------------------------
// Vertical recursion plan.

type item struct {
	e, f vec
	m    int
}

type vrrPlan struct {
	order []item       // dependencies first
	dir   map[item]int // reduction axis (ket if f ≠ 0, else bra)
	flops int
	// unitKet: the ket pair is an auxiliary shell with the unit shell at
	// its centre, so Q = C and the QC terms of the ket step vanish.
	unitKet bool
	// ketFirst: [0|f] is built first and transferred to the bra
	// (Obara–Saika on the bra with the coupling term f_i/(2(ζ+η))),
	// rather than [e|0] first and transferred to the ket.
	ketFirst bool
}

func planVRR(targets []item, br, kr rule) *vrrPlan {
	return planVRRKet(targets, br, kr, false, false)
}

// planVRRKet is planVRR, for a unit-shell ket pair if unitKet, building
// the ket side first if ketFirst.
func planVRRKet(targets []item, br, kr rule, unitKet, ketFirst bool) *vrrPlan {
	p := &vrrPlan{dir: map[item]int{}, unitKet: unitKet, ketFirst: ketFirst}
	seen := map[item]bool{}
	var visit func(it item)
	visit = func(it item) {
		if seen[it] {
			return
		}
		seen[it] = true
		for _, d := range vrrDeps(it, br, kr, p) {
			visit(d)
		}
		p.order = append(p.order, it)
	}
	for _, t := range targets {
		visit(t)
	}
	return p
}

// vrrDeps returns the sources of it and records its axis and cost.
func vrrDeps(it item, br, kr rule, p *vrrPlan) []item {
	var deps []item
	switch {
	case p.ketFirst && it.e.level() > 0:
		i := br.dir(it.e)
		p.dir[it] = i
		e1 := it.e.add(i, -1)
		deps = append(deps, item{e1, it.f, it.m}, item{e1, it.f, it.m + 1})
		p.flops += 3
		if e1[i] > 0 {
			e2 := e1.add(i, -1)
			deps = append(deps, item{e2, it.f, it.m}, item{e2, it.f, it.m + 1})
			p.flops += 5
		}
		if it.f[i] > 0 {
			deps = append(deps, item{e1, it.f.add(i, -1), it.m + 1})
			p.flops += 3
		}
	case it.f.level() > 0:
		i := kr.dir(it.f)
		p.dir[it] = i
		f1 := it.f.add(i, -1)
		if p.unitKet {
			deps = append(deps, item{it.e, f1, it.m + 1})
			p.flops++
		} else {
			deps = append(deps, item{it.e, f1, it.m}, item{it.e, f1, it.m + 1})
			p.flops += 3
		}
		if f1[i] > 0 {
			f2 := f1.add(i, -1)
			deps = append(deps, item{it.e, f2, it.m}, item{it.e, f2, it.m + 1})
			p.flops += 5
		}
		if it.e[i] > 0 {
			deps = append(deps, item{it.e.add(i, -1), f1, it.m + 1})
			p.flops += 3
		}
	case it.e.level() > 0:
		i := br.dir(it.e)
		p.dir[it] = i
		e1 := it.e.add(i, -1)
		deps = append(deps, item{e1, it.f, it.m}, item{e1, it.f, it.m + 1})
		p.flops += 3
		if e1[i] > 0 {
			e2 := e1.add(i, -1)
			deps = append(deps, item{e2, it.f, it.m}, item{e2, it.f, it.m + 1})
			p.flops += 5
		}
	}
	return deps
}

// ---------------------------------------------------------------------------
// Horizontal recursion plan: (a,b) from (a+1ᵢ,b−1ᵢ) and (a,b−1ᵢ).

type pairItem struct{ a, b vec }

type hrrPlan struct {
	order []pairItem
	dir   map[pairItem]int
	ops   int
}

func planHRR(la, lb int, r rule) *hrrPlan {
	p := &hrrPlan{dir: map[pairItem]int{}}
	seen := map[pairItem]bool{}
	var visit func(it pairItem)
	visit = func(it pairItem) {
		if seen[it] {
			return
		}
		seen[it] = true
		if it.b.level() > 0 {
			i := r.dir(it.b)
			p.dir[it] = i
			b1 := it.b.add(i, -1)
			visit(pairItem{it.a.add(i, 1), b1})
			visit(pairItem{it.a, b1})
			p.ops++
		}
		p.order = append(p.order, it)
	}
	for _, a := range comps(la) {
		for _, b := range comps(lb) {
			visit(pairItem{a, b})
		}
	}
	return p
}

func bestHRR(la, lb int) *hrrPlan {
	var best *hrrPlan
	for _, r := range allRules() {
		p := planHRR(la, lb, r)
		if best == nil || p.ops < best.ops {
			best = p
		}
	}
	return best
}

// ---------------------------------------------------------------------------
// Emission.

type emitter struct {
	buf  bytes.Buffer
	used map[string]bool
}

func (g *emitter) p(format string, args ...any) {
	fmt.Fprintf(&g.buf, format, args...)
	g.buf.WriteByte('\n')
}

// term returns "c*x" with c a small integer factor folded in.
func mulInt(k int, x string) string {
	if k == 1 {
		return x
	}
	return fmt.Sprintf("%d*%s", k, x)
}

var axis = [3]string{"x", "y", "z"}

func funcName(la, lb, lc, ld int) string {
	return fmt.Sprintf("eriGen%d%d%d%d", la, lb, lc, ld)
}

func genClass(w *bytes.Buffer, la, lb, lc, ld int) {
	lab, lcd := la+lb, lc+ld
	L := lab + lcd
	ne := cum(lab+1) - cum(la)
	nf := cum(lcd+1) - cum(lc)

	var targets []item
	for le := la; le <= lab; le++ {
		for _, e := range comps(le) {
			for lf := lc; lf <= lcd; lf++ {
				for _, f := range comps(lf) {
					targets = append(targets, item{e, f, 0})
				}
			}
		}
	}
	var plan *vrrPlan
	for _, br := range allRules() {
		for _, kr := range allRules() {
			p := planVRR(targets, br, kr)
			if plan == nil || p.flops < plan.flops {
				plan = p
			}
		}
	}

	// Body of the inner primitive loop.
	var body emitter
	body.used = map[string]bool{}
	use := func(s string) string { body.used[s] = true; return s }
	name := map[item]string{}
	for n, it := range plan.order {
		v := fmt.Sprintf("v%d", n)
		name[it] = v
		switch {
		case it.f.level() > 0:
			i := plan.dir[it]
			f1 := it.f.add(i, -1)
			expr := fmt.Sprintf("%s*%s + %s*%s", use("qc"+axis[i]), name[item{it.e, f1, it.m}], use("wq"+axis[i]), name[item{it.e, f1, it.m + 1}])
			if f1[i] > 0 {
				f2 := f1.add(i, -1)
				expr += " + " + mulInt(f1[i], fmt.Sprintf("(%s*%s - %s*%s)", use("oo2e"), name[item{it.e, f2, it.m}], use("roe"), name[item{it.e, f2, it.m + 1}]))
			}
			if it.e[i] > 0 {
				expr += " + " + mulInt(it.e[i], fmt.Sprintf("%s*%s", use("oo2zn"), name[item{it.e.add(i, -1), f1, it.m + 1}]))
			}
			body.p("%s := %s", v, expr)
		case it.e.level() > 0:
			i := plan.dir[it]
			e1 := it.e.add(i, -1)
			expr := fmt.Sprintf("%s*%s + %s*%s", use("pa"+axis[i]), name[item{e1, it.f, it.m}], use("wp"+axis[i]), name[item{e1, it.f, it.m + 1}])
			if e1[i] > 0 {
				e2 := e1.add(i, -1)
				expr += " + " + mulInt(e1[i], fmt.Sprintf("(%s*%s - %s*%s)", use("oo2z"), name[item{e2, it.f, it.m}], use("roz"), name[item{e2, it.f, it.m + 1}]))
			}
			body.p("%s := %s", v, expr)
		default:
			name[it] = fmt.Sprintf("f%d", it.m)
		}
	}
	// Accumulate targets.
	accIdx := func(e, f vec) int { return (cumIndex(e)-cum(la))*nf + cumIndex(f) - cum(lc) }
	for _, t := range targets {
		body.p("%s += %s", accName(accIdx(t.e, t.f), ne*nf), name[t])
	}

	fmt.Fprintf(w, "\n// %s computes Cartesian (%s%s|%s%s) integrals.\n", funcName(la, lb, lc, ld),
		letters[la], letters[lb], letters[lc], letters[ld])
	fmt.Fprintf(w, "func %s(w *ERIWorkspace, bra, ket *eriPair) []float64 {\n", funcName(la, lb, lc, ld))
	if ne*nf > accScalarMax {
		fmt.Fprintf(w, "var acc [%d]float64\n", ne*nf)
	} else {
		names := make([]string, ne*nf)
		for i := range names {
			names[i] = accName(i, ne*nf)
		}
		fmt.Fprintf(w, "var %s float64\n", strings.Join(names, ", "))
	}
	fmt.Fprintf(w, "for pi := range bra.prims {\np := &bra.prims[pi]\n")
	fmt.Fprintf(w, "if p.bnd*ket.maxBnd < eriQuartetThreshold {\nbreak\n}\n")
	u := body.used
	// Primitive-pair quantities of the bra.
	for i := 0; i < 3; i++ {
		if u["pa"+axis[i]] {
			fmt.Fprintf(w, "pa%s := p.pa[%d]\n", axis[i], i)
		}
	}
	fmt.Fprintf(w, "for qi := range ket.prims {\nq := &ket.prims[qi]\n")
	fmt.Fprintf(w, "if p.bnd*q.bnd < eriQuartetThreshold {\nbreak\n}\n")
	emitPrimQuantities(w, u, L)
	w.Write(body.buf.Bytes())
	fmt.Fprintf(w, "}\n}\n")

	genHRR(w, la, lb, lc, ld, nf)
	fmt.Fprintf(w, "}\n")
}

// accScalarMax: classes with at most this many contracted [e0|f0] values
// accumulate them in scalar variables (kept in registers where possible)
// rather than an array.
const accScalarMax = 64

// accName names contracted value i of n.
func accName(i, n int) string {
	if n > accScalarMax {
		return fmt.Sprintf("acc[%d]", i)
	}
	return fmt.Sprintf("a%d", i)
}

var letters = []string{"s", "p", "d", "f", "g", "h"}

// genBoys emits f0 … fL = p.k·q.k·√ozn·F_m(t) (ozn = 1/(ζ+η), t and
// r2 = |PQ|² defined before). The prefactor is formed on the Taylor
// branch only: on the asymptotic branch (t ≥ eriBoysTMax, the charge
// distributions far apart) p.k·q.k·√ozn·F_0 = ½√π p.k q.k/(√(ζη)·|PQ|) =
// p.kf·q.kf/|PQ| and 1/(2t) = (1/(2ζ) + 1/(2η))/|PQ|², which saves a
// square root and two divisions on every far primitive quartet.
func genBoys(w *bytes.Buffer, L int) {
	fs := make([]string, L+1)
	for m := range fs {
		fs[m] = fmt.Sprintf("f%d", m)
	}
	fmt.Fprintf(w, "var %s float64\n", strings.Join(fs, ", "))
	fmt.Fprintf(w, "if t < eriBoysTMax {\n")
	fmt.Fprintf(w, "pref := p.k * q.k * math.Sqrt(ozn)\n")
	fmt.Fprintf(w, "k := int(t*eriBoysInvStep + 0.5)\n")
	fmt.Fprintf(w, "d := t - float64(k)*eriBoysStep\n")
	// Estrin's scheme: shorter dependency chains than Horner's rule.
	horner := func(m int) string {
		c := func(k int) string { return fmt.Sprintf("c[%d]", m*8+k) }
		if !estrin {
			s := c(7)
			for k := 6; k >= 0; k-- {
				s = fmt.Sprintf("%s + d*(%s)", c(k), s)
			}
			return s
		}
		return fmt.Sprintf("(%s + d*%s) + d2*(%s + d*%s) + d4*((%s + d*%s) + d2*(%s + d*%s))",
			c(0), c(1), c(2), c(3), c(4), c(5), c(6), c(7))
	}
	if estrin {
		fmt.Fprintf(w, "d2 := d * d\nd4 := d2 * d2\n")
	}
	if L <= boysDirectMax {
		fmt.Fprintf(w, "c := &eriBoysTab[k]\n")
		for m := 0; m <= L; m++ {
			fmt.Fprintf(w, "f%d = pref * (%s)\n", m, horner(m))
		}
	} else {
		fmt.Fprintf(w, "c := &eriBoysTab[k]\n")
		fmt.Fprintf(w, "f%d = %s\n", L, horner(L))
		fmt.Fprintf(w, "ex := math.Exp(-t)\n")
		fmt.Fprintf(w, "t2 := 2 * t\n")
		for m := L - 1; m >= 0; m-- {
			fmt.Fprintf(w, "f%d = (t2*f%d + ex) * %v\n", m, m+1, fmtFloat(1/float64(2*m+1)))
		}
		for m := 0; m <= L; m++ {
			fmt.Fprintf(w, "f%d *= pref\n", m)
		}
	}
	fmt.Fprintf(w, "} else {\n")
	fmt.Fprintf(w, "ir := 1 / math.Sqrt(r2)\n")
	fmt.Fprintf(w, "f0 = p.kf * q.kf * ir\n")
	if L > 0 {
		fmt.Fprintf(w, "h := (p.oo2z + q.oo2z) * (ir * ir)\n")
		for m := 0; m < L; m++ {
			fmt.Fprintf(w, "f%d = %s\n", m+1, mulInt(2*m+1, fmt.Sprintf("h*f%d", m)))
		}
	}
	fmt.Fprintf(w, "}\n")
}

func fmtFloat(x float64) string { return fmt.Sprintf("%.17g", x) }

// genHRR emits the horizontal recursion from acc to out, bra first.
func genHRR(w *bytes.Buffer, la, lb, lc, ld, nf int) {
	na, nb, nc, nd := ncart(la), ncart(lb), ncart(lc), ncart(ld)
	ne := cum(la+lb+1) - cum(la)
	fmt.Fprintf(w, "out := (*[%d]float64)(w.out)\n", na*nb*nc*nd)
	if lb == 0 && ld == 0 {
		if ne*nf > accScalarMax {
			fmt.Fprintf(w, "*out = acc\nreturn out[:]\n")
			return
		}
		for i := 0; i < na*nc; i++ {
			fmt.Fprintf(w, "out[%d] = %s\n", i, accName(i, ne*nf))
		}
		fmt.Fprintf(w, "return out[:]\n")
		return
	}
	bp := bestHRR(la, lb)
	kp := bestHRR(lc, ld)
	// Bra: G[ab][f] expressions.
	n := 0
	gname := make([][]string, na*nb) // [ab][f]
	for i := range gname {
		gname[i] = make([]string, nf)
	}
	if lb == 0 {
		for a := 0; a < na; a++ {
			for f := 0; f < nf; f++ {
				gname[a][f] = accName(a*nf+f, ne*nf)
			}
		}
	} else {
		for f := 0; f < nf; f++ {
			nm := map[pairItem]string{}
			for _, it := range bp.order {
				if it.b.level() == 0 {
					nm[it] = accName((cumIndex(it.a)-cum(la))*nf+f, ne*nf)
					continue
				}
				i := bp.dir[it]
				b1 := it.b.add(i, -1)
				v := fmt.Sprintf("h%d", n)
				n++
				fmt.Fprintf(w, "%s := %s + ab%s*%s\n", v, nm[pairItem{it.a.add(i, 1), b1}], axis[i], nm[pairItem{it.a, b1}])
				nm[it] = v
			}
			for ia, a := range comps(la) {
				for ib, b := range comps(lb) {
					gname[ia*nb+ib][f] = nm[pairItem{a, b}]
				}
			}
		}
	}
	// Ket.
	for ab := 0; ab < na*nb; ab++ {
		if ld == 0 {
			for c := 0; c < nc; c++ {
				fmt.Fprintf(w, "out[%d] = %s\n", ab*nc+c, gname[ab][c])
			}
			continue
		}
		nm := map[pairItem]string{}
		for _, it := range kp.order {
			if it.b.level() == 0 {
				nm[it] = gname[ab][cumIndex(it.a)-cum(lc)]
				continue
			}
			i := kp.dir[it]
			b1 := it.b.add(i, -1)
			expr := fmt.Sprintf("%s + cd%s*%s", nm[pairItem{it.a.add(i, 1), b1}], axis[i], nm[pairItem{it.a, b1}])
			if it.a.level() == lc && it.b.level() == ld {
				ic := cumIndex(it.a) - cum(lc)
				id := cumIndex(it.b) - cum(ld)
				fmt.Fprintf(w, "out[%d] = %s\n", (ab*nc+ic)*nd+id, expr)
				nm[it] = fmt.Sprintf("out[%d]", (ab*nc+ic)*nd+id)
				continue
			}
			v := fmt.Sprintf("h%d", n)
			n++
			fmt.Fprintf(w, "%s := %s\n", v, expr)
			nm[it] = v
		}
	}
	fmt.Fprintf(w, "return out[:]\n")
}

// ---------------------------------------------------------------------------

func main() {
	outPath := flag.String("o", "", "output file (default standard output)")
	derivPath := flag.String("deriv", "", "write the derivative classes (deriv_gen.go) to this file instead")
	flag.Parse()
	if *derivPath != "" {
		if err := writeDeriv(*derivPath); err != nil {
			fmt.Fprintln(os.Stderr, "gen:", err)
			os.Exit(1)
		}
		return
	}
	var classes [][4]int
	key := func(la, lb int) int { return (la+lb)*16 + la }
	for la := 0; la <= genMaxL; la++ {
		for lb := 0; lb <= la; lb++ {
			for lc := 0; lc <= genMaxL; lc++ {
				for ld := 0; ld <= lc; ld++ {
					if key(lc, ld) > key(la, lb) {
						continue
					}
					classes = append(classes, [4]int{la, lb, lc, ld})
				}
			}
		}
	}
	sort.Slice(classes, func(i, j int) bool {
		a, b := classes[i], classes[j]
		for x := 0; x < 4; x++ {
			if a[x] != b[x] {
				return a[x] < b[x]
			}
		}
		return false
	})
	var w bytes.Buffer
	w.WriteString("// Code generated by energy/integral/internal/gen; DO NOT EDIT.\n\n")
	w.WriteString("package integral\n\nimport \"math\"\n\n")
	w.WriteString("// eriGenTable holds the straight-line code per canonical class\n// (index eriClass(la, lb, lc, ld)); nil entries use the generic code.\n")
	w.WriteString("var eriGenTable = [eriNumClass]eriGenFunc{\n")
	for _, c := range classes {
		// eriClass with eriMaxL = 5 (TestERIGeneratedMatchesGeneric
		// checks that every entry decodes to its canonical class).
		idx := ((c[0]*6+c[1])*6+c[2])*6 + c[3]
		fmt.Fprintf(&w, "%d: %s, // eriClass(%d, %d, %d, %d)\n", idx, funcName(c[0], c[1], c[2], c[3]), c[0], c[1], c[2], c[3])
	}
	w.WriteString("}\n")
	for _, c := range classes {
		genClassWithAB(&w, c)
	}
	src, err := format.Source(w.Bytes())
	if err != nil {
		os.Stdout.Write(w.Bytes())
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
	if *outPath == "" {
		os.Stdout.Write(src)
		return
	}
	if err := os.WriteFile(*outPath, src, 0o644); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

// genClassWithAB emits a class, declaring the centre differences the
// horizontal recursion uses.
func genClassWithAB(w *bytes.Buffer, c [4]int) {
	var b bytes.Buffer
	genClass(&b, c[0], c[1], c[2], c[3])
	s := b.String()
	// Declare ab/cd components after the opening brace if used.
	var decl strings.Builder
	for i, ax := range axis {
		if strings.Contains(s, "ab"+ax+"*") {
			fmt.Fprintf(&decl, "ab%s := bra.ab[%d]\n", ax, i)
		}
		if strings.Contains(s, "cd"+ax+"*") {
			fmt.Fprintf(&decl, "cd%s := ket.ab[%d]\n", ax, i)
		}
	}
	if decl.Len() > 0 {
		// Insert before "out := ".
		s = strings.Replace(s, "out := ", decl.String()+"out := ", 1)
	}
	w.WriteString(s)
}
