package main

// Straight-line code for the first-derivative electron-repulsion classes
// (energy/integral/deriv_gen.go). For each canonical class (ab|cd) with
// l ≤ genMaxL on every centre it emits one function that loops over the
// primitive quartets, evaluates the Boys function to order L+1, runs the
// Obara–Saika vertical recursion (S. Obara and A. Saika, J. Chem. Phys.
// 84, 3963 (1986)) on only the [e0|f0] the six derivative classes need,
// and contracts them with the weights of the derivative relation
//
//	∂/∂A_i (ab|cd) = 2α·(a+1ᵢ b|cd) − aᵢ·(a−1ᵢ b|cd)
//
// (and likewise for B and C): unweighted for the lowered classes (a−1 b|cd),
// (a b−1|cd), (ab|c−1 d), weighted with 2α, 2β, 2γ for the raised classes
// (a+1 b|cd), (a b+1|cd), (ab|c+1 d). The bra weights are constant in the
// inner (ket) primitive loop, so the inner loop sums unweighted and the
// weights are applied once per bra primitive pair. The horizontal
// recursion of M. Head-Gordon and J. A. Pople (J. Chem. Phys. 89, 5777
// (1988)) then yields the six Cartesian classes, written to the derivWork
// buffers up[0..2] and down[0..2] of energy/integral/deriv_eri.go.

import (
	"bytes"
	"fmt"
	"go/format"
	"os"
	"sort"
	"strings"
)

// region is a block of contracted [e0|f0] values: |e| ∈ [e0, e1],
// |f| ∈ [f0, f1], laid out [e][f] over the cumulative component indices
// ([f][e] if fOuter).
type region struct {
	e0, e1, f0, f1 int
	prefix         string // scalar names prefix%d, or array prefix[%d]
	fOuter         bool   // layout [f][e], always an array
}

func (r region) ne() int   { return cum(r.e1+1) - cum(r.e0) }
func (r region) nf() int   { return cum(r.f1+1) - cum(r.f0) }
func (r region) size() int { return r.ne() * r.nf() }
func (r region) empty() bool {
	return r.e1 < r.e0 || r.f1 < r.f0
}
func (r region) has(e, f vec) bool {
	return !r.empty() && e.level() >= r.e0 && e.level() <= r.e1 && f.level() >= r.f0 && f.level() <= r.f1
}
func (r region) array() bool { return r.fOuter || r.size() > derivAccScalarMax }

func (r region) name(e, f vec) string {
	i := (cumIndex(e)-cum(r.e0))*r.nf() + cumIndex(f) - cum(r.f0)
	if r.fOuter {
		i = (cumIndex(f)-cum(r.f0))*r.ne() + cumIndex(e) - cum(r.e0)
	}
	if r.array() {
		return fmt.Sprintf("%s[%d]", r.prefix, i)
	}
	return fmt.Sprintf("%s%d", r.prefix, i)
}

// each calls fn for every (e, f) of the region in layout order.
func (r region) each(fn func(e, f vec)) {
	if r.empty() {
		return
	}
	for le := r.e0; le <= r.e1; le++ {
		for _, e := range comps(le) {
			for lf := r.f0; lf <= r.f1; lf++ {
				for _, f := range comps(lf) {
					fn(e, f)
				}
			}
		}
	}
}

func (r region) declare(w *bytes.Buffer) {
	if r.empty() {
		return
	}
	if r.array() {
		fmt.Fprintf(w, "var %s [%d]float64\n", r.prefix, r.size())
		return
	}
	names := make([]string, r.size())
	for i := range names {
		names[i] = fmt.Sprintf("%s%d", r.prefix, i)
	}
	fmt.Fprintf(w, "var %s float64\n", strings.Join(names, ", "))
}

// derivAccScalarMax: accumulator blocks with at most this many values are
// scalar variables, larger ones arrays.
const derivAccScalarMax = 32

func derivFuncName(la, lb, lc, ld int) string {
	return fmt.Sprintf("derivGen%d%d%d%d", la, lb, lc, ld)
}

func genDerivClass(w *bytes.Buffer, la, lb, lc, ld int) {
	lab, lcd := la+lb, lc+ld
	L := lab + lcd + 1
	e0 := la
	if la > 0 {
		e0 = la - 1
	}
	// Inner (per bra primitive) unweighted sums: every class built from
	// f ∈ [lc, lcd] except (ab|c+1 d).
	sR := region{e0, lab + 1, lc, lcd, "u", false}
	// Flushed per bra primitive: unweighted (lowered classes), 2α, 2β.
	zR := region{e0, lab, lc, lcd, "z", false}
	if la == 0 && lb == 0 && lc == 0 {
		zR = region{0, -1, 0, -1, "z", false}
	}
	aR := region{la + 1, lab + 1, lc, lcd, "xa", false}
	bR := region{la, lab + 1, lc, lcd, "xb", false}
	// Summed in the inner loop: 2γ-weighted for (ab|c+1 d) and the
	// unweighted level |f| = lc−1 of (ab|c−1 d).
	cR := region{la, lab, lc + 1, lcd + 1, "xc", false}
	dR := region{0, -1, 0, -1, "xd", false}
	if lc > 0 {
		dR = region{la, lab, lc - 1, lc - 1, "xd", false}
	}

	var targets []item
	seen := map[item]bool{}
	add := func(e, f vec) {
		it := item{e, f, 0}
		if !seen[it] {
			seen[it] = true
			targets = append(targets, it)
		}
	}
	sR.each(add)
	cR.each(add)
	dR.each(add)
	var plan *vrrPlan
	for _, br := range allRules() {
		for _, kr := range allRules() {
			p := planVRR(targets, br, kr)
			if plan == nil || p.flops < plan.flops {
				plan = p
			}
		}
	}

	body, name := emitDerivVRR(plan)
	// Inner-loop accumulation.
	sR.each(func(e, f vec) { body.p("%s += %s", sR.name(e, f), name[item{e, f, 0}]) })
	cR.each(func(e, f vec) { body.p("%s += tc*%s", cR.name(e, f), name[item{e, f, 0}]) })
	dR.each(func(e, f vec) { body.p("%s += %s", dR.name(e, f), name[item{e, f, 0}]) })

	fmt.Fprintf(w, "\n// %s computes the raised and lowered Cartesian classes of (%s%s|%s%s)\n",
		derivFuncName(la, lb, lc, ld), letters[la], letters[lb], letters[lc], letters[ld])
	fmt.Fprintf(w, "// into dw.up and dw.down and returns their contraction with the Cartesian\n// two-particle density g: the derivatives with respect to A, B, C.\n")
	fmt.Fprintf(w, "// Primitive quartets with bnd_p·bnd_q < thr are skipped.\n")
	fmt.Fprintf(w, "func %s(dw *derivWork, bra, ket *derivPair, g []float64, thr float64) [9]float64 {\n", derivFuncName(la, lb, lc, ld))
	for _, r := range []region{sR, zR, aR, bR, cR, dR} {
		r.declare(w)
	}
	fmt.Fprintf(w, "if len(ket.prims) > 0 {\nkb0 := ket.prims[0].bnd\n")
	fmt.Fprintf(w, "for pi := range bra.prims {\np := &bra.prims[pi]\n")
	fmt.Fprintf(w, "if p.bnd*kb0 < thr {\nbreak\n}\n")
	u := body.used
	for i := 0; i < 3; i++ {
		if u["pa"+axis[i]] {
			fmt.Fprintf(w, "pa%s := p.pa[%d]\n", axis[i], i)
		}
	}
	fmt.Fprintf(w, "for qi := range ket.prims {\nq := &ket.prims[qi]\n")
	fmt.Fprintf(w, "if p.bnd*q.bnd < thr {\nbreak\n}\n")
	emitPrimQuantities(w, u, L)
	fmt.Fprintf(w, "tc := q.ta\n")
	w.Write(body.buf.Bytes())
	fmt.Fprintf(w, "}\n") // ket loop
	// Flush the inner sums with the bra weights.
	fmt.Fprintf(w, "ta, tb := p.ta, p.tb\n")
	sR.each(func(e, f vec) {
		s := sR.name(e, f)
		if zR.has(e, f) {
			fmt.Fprintf(w, "%s += %s\n", zR.name(e, f), s)
		}
		if aR.has(e, f) {
			fmt.Fprintf(w, "%s += ta*%s\n", aR.name(e, f), s)
		}
		if bR.has(e, f) {
			fmt.Fprintf(w, "%s += tb*%s\n", bR.name(e, f), s)
		}
	})
	if sR.array() {
		fmt.Fprintf(w, "%s = [%d]float64{}\n", sR.prefix, sR.size())
	} else {
		sR.each(func(e, f vec) { fmt.Fprintf(w, "%s = 0\n", sR.name(e, f)) })
	}
	fmt.Fprintf(w, "}\n}\n") // bra loop, if

	// Horizontal recursion for the six classes.
	var hrr bytes.Buffer
	cnt := 0
	fromZ := func(e, f vec) string { return zR.name(e, f) }
	ls := [4]int{la, lb, lc, ld}
	genDerivHRR(&hrr, la+1, lb, lc, ld, func(e, f vec) string { return aR.name(e, f) }, "dw.up[0]", &cnt, contraction{0, true, ls})
	genDerivHRR(&hrr, la, lb+1, lc, ld, func(e, f vec) string { return bR.name(e, f) }, "dw.up[1]", &cnt, contraction{1, true, ls})
	genDerivHRR(&hrr, la, lb, lc+1, ld, func(e, f vec) string { return cR.name(e, f) }, "dw.up[2]", &cnt, contraction{2, true, ls})
	if la > 0 {
		genDerivHRR(&hrr, la-1, lb, lc, ld, fromZ, "dw.down[0]", &cnt, contraction{0, false, ls})
	}
	if lb > 0 {
		genDerivHRR(&hrr, la, lb-1, lc, ld, fromZ, "dw.down[1]", &cnt, contraction{1, false, ls})
	}
	if lc > 0 {
		genDerivHRR(&hrr, la, lb, lc-1, ld, func(e, f vec) string {
			if f.level() == lc-1 {
				return dR.name(e, f)
			}
			return zR.name(e, f)
		}, "dw.down[2]", &cnt, contraction{2, false, ls})
	}
	s := hrr.String()
	for i, ax := range axis {
		if strings.Contains(s, "ab"+ax+"*") {
			fmt.Fprintf(w, "ab%s := bra.ab[%d]\n", ax, i)
		}
		if strings.Contains(s, "cd"+ax+"*") {
			fmt.Fprintf(w, "cd%s := ket.ab[%d]\n", ax, i)
		}
	}
	fmt.Fprintf(w, "gam := (*[%d]float64)(g)\n", ncart(la)*ncart(lb)*ncart(lc)*ncart(ld))
	fmt.Fprintf(w, "var ga0, ga1, ga2, gb0, gb1, gb2, gc0, gc1, gc2 float64\n")
	w.WriteString(s)
	fmt.Fprintf(w, "return [9]float64{ga0, ga1, ga2, gb0, gb1, gb2, gc0, gc1, gc2}\n}\n")
}

// emitDerivVRR emits the vertical recursion of plan, one variable per
// item (f0 … fL for the Boys values), and returns the code and the names.
// For a unit-shell ket (plan.unitKet) the QC terms are left out.
func emitDerivVRR(plan *vrrPlan) (*emitter, map[item]string) {
	body := &emitter{}
	body.used = map[string]bool{}
	use := func(s string) string { body.used[s] = true; return s }
	name := map[item]string{}
	for n, it := range plan.order {
		v := fmt.Sprintf("v%d", n)
		name[it] = v
		switch {
		case plan.ketFirst && it.e.level() > 0:
			i := plan.dir[it]
			e1 := it.e.add(i, -1)
			expr := fmt.Sprintf("%s*%s + %s*%s", use("pa"+axis[i]), name[item{e1, it.f, it.m}], use("wp"+axis[i]), name[item{e1, it.f, it.m + 1}])
			if e1[i] > 0 {
				e2 := e1.add(i, -1)
				expr += " + " + mulInt(e1[i], fmt.Sprintf("(%s*%s - %s*%s)", use("oo2z"), name[item{e2, it.f, it.m}], use("roz"), name[item{e2, it.f, it.m + 1}]))
			}
			if it.f[i] > 0 {
				expr += " + " + mulInt(it.f[i], fmt.Sprintf("%s*%s", use("oo2zn"), name[item{e1, it.f.add(i, -1), it.m + 1}]))
			}
			body.p("%s := %s", v, expr)
		case it.f.level() > 0:
			i := plan.dir[it]
			f1 := it.f.add(i, -1)
			var expr string
			if plan.unitKet {
				expr = fmt.Sprintf("%s*%s", use("wq"+axis[i]), name[item{it.e, f1, it.m + 1}])
			} else {
				expr = fmt.Sprintf("%s*%s + %s*%s", use("qc"+axis[i]), name[item{it.e, f1, it.m}], use("wq"+axis[i]), name[item{it.e, f1, it.m + 1}])
			}
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
	return body, name
}

// emitPrimQuantities emits, inside the loop over primitive quartets p, q,
// the Boys values f0 … fL and the recursion coefficients the body uses.
func emitPrimQuantities(w *bytes.Buffer, u map[string]bool, L int) {
	needRz := u["wpx"] || u["wpy"] || u["wpz"] || u["roz"]
	needRe := u["wqx"] || u["wqy"] || u["wqz"] || u["roe"]
	fmt.Fprintf(w, "ozn := 1 / (p.zeta + q.zeta)\n")
	fmt.Fprintf(w, "pqx, pqy, pqz := p.p[0]-q.p[0], p.p[1]-q.p[1], p.p[2]-q.p[2]\n")
	fmt.Fprintf(w, "r2 := pqx*pqx + pqy*pqy + pqz*pqz\n")
	fmt.Fprintf(w, "t := p.zeta * q.zeta * ozn * r2\n")
	genBoys(w, L)
	if needRz {
		fmt.Fprintf(w, "rz := q.zeta * ozn\n")
	}
	if needRe {
		fmt.Fprintf(w, "re := p.zeta * ozn\n")
	}
	for i := 0; i < 3; i++ {
		pq := "pq" + axis[i]
		if u["wp"+axis[i]] {
			fmt.Fprintf(w, "wp%s := -rz * %s\n", axis[i], pq)
		}
		if u["wq"+axis[i]] {
			fmt.Fprintf(w, "wq%s := re * %s\n", axis[i], pq)
		}
		if u["qc"+axis[i]] {
			fmt.Fprintf(w, "qc%s := q.pa[%d]\n", axis[i], i)
		}
	}
	if u["oo2z"] {
		fmt.Fprintf(w, "oo2z := p.oo2z\n")
	}
	if u["roz"] {
		fmt.Fprintf(w, "roz := rz * p.oo2z\n")
	}
	if u["oo2e"] {
		fmt.Fprintf(w, "oo2e := q.oo2z\n")
	}
	if u["roe"] {
		fmt.Fprintf(w, "roe := re * q.oo2z\n")
	}
	if u["oo2zn"] {
		fmt.Fprintf(w, "oo2zn := 0.5 * ozn\n")
	}
}

// contraction describes how genDerivHRR folds a derivative class into the
// gradient: the class has momentum one above (up) or below the original
// class (ls) on centre x; each element adds to the accumulators
// g<x>0 … g<x>2 its product with the matching element of gam, the
// Cartesian two-particle density of the original class, as in
// ∂/∂X_k = Σ Γ_r·((r+1_k) − r_k·(r−1_k)).
type contraction struct {
	x  int
	up bool
	ls [4]int
}

var centreName = [3]string{"ga", "gb", "gc"}

// emit writes the contributions of the element with components v (A, B,
// C, D) and value val.
func (c contraction) emit(w *bytes.Buffer, v [4]vec, val string) {
	idx := func(r vec) int {
		u := v
		u[c.x] = r
		i := 0
		for y := 0; y < 4; y++ {
			i = i*ncart(c.ls[y]) + cumIndex(u[y]) - cum(c.ls[y])
		}
		return i
	}
	for k := 0; k < 3; k++ {
		acc := fmt.Sprintf("%s%d", centreName[c.x], k)
		if c.up {
			if v[c.x][k] > 0 {
				fmt.Fprintf(w, "%s += gam[%d] * %s\n", acc, idx(v[c.x].add(k, -1)), val)
			}
			continue
		}
		r := v[c.x].add(k, 1)
		fmt.Fprintf(w, "%s -= %s * %s\n", acc, mulInt(r[k], fmt.Sprintf("gam[%d]", idx(r))), val)
	}
}

// genDerivHRR emits the horizontal recursion of class (la lb|lc ld) from
// the contracted [e0|f0] named by src into the slice dst, laid out
// [a][b][c][d] (not stored if dst is empty), and its contraction with the
// two-particle density; cnt numbers the temporaries.
func genDerivHRR(w *bytes.Buffer, la, lb, lc, ld int, src func(e, f vec) string, dst string, cnt *int, con contraction) {
	na, nb, nc, nd := ncart(la), ncart(lb), ncart(lc), ncart(ld)
	nf := cum(lc+ld+1) - cum(lc)
	var fs []vec
	for lf := lc; lf <= lc+ld; lf++ {
		fs = append(fs, comps(lf)...)
	}
	if dst == "" {
		fmt.Fprintf(w, "{\n")
	} else {
		fmt.Fprintf(w, "{\nout := (*[%d]float64)(%s)\n", na*nb*nc*nd, dst)
	}
	gname := make([][]string, na*nb)
	for i := range gname {
		gname[i] = make([]string, nf)
	}
	if lb == 0 {
		for ia, a := range comps(la) {
			for fi, f := range fs {
				gname[ia][fi] = src(a, f)
			}
		}
	} else {
		bp := bestHRR(la, lb)
		for fi, f := range fs {
			nm := map[pairItem]string{}
			for _, it := range bp.order {
				if it.b.level() == 0 {
					nm[it] = src(it.a, f)
					continue
				}
				i := bp.dir[it]
				b1 := it.b.add(i, -1)
				v := fmt.Sprintf("h%d", *cnt)
				*cnt++
				fmt.Fprintf(w, "%s := %s + ab%s*%s\n", v, nm[pairItem{it.a.add(i, 1), b1}], axis[i], nm[pairItem{it.a, b1}])
				nm[it] = v
			}
			for ia, a := range comps(la) {
				for ib, b := range comps(lb) {
					gname[ia*nb+ib][fi] = nm[pairItem{a, b}]
				}
			}
		}
	}
	var kp *hrrPlan
	if ld > 0 {
		kp = bestHRR(lc, ld)
	}
	ca, cb, cc := comps(la), comps(lb), comps(lc)
	for ab := 0; ab < na*nb; ab++ {
		va, vb := ca[ab/nb], cb[ab%nb]
		if ld == 0 {
			for c := 0; c < nc; c++ {
				if dst != "" {
					fmt.Fprintf(w, "out[%d] = %s\n", ab*nc+c, gname[ab][c])
				}
				con.emit(w, [4]vec{va, vb, cc[c], {}}, gname[ab][c])
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
			v := fmt.Sprintf("h%d", *cnt)
			*cnt++
			fmt.Fprintf(w, "%s := %s\n", v, expr)
			nm[it] = v
			if it.a.level() == lc && it.b.level() == ld {
				ic := cumIndex(it.a) - cum(lc)
				id := cumIndex(it.b) - cum(ld)
				if dst != "" {
					fmt.Fprintf(w, "out[%d] = %s\n", (ab*nc+ic)*nd+id, v)
				}
				con.emit(w, [4]vec{va, vb, it.a, it.b}, v)
			}
		}
	}
	fmt.Fprintf(w, "}\n")
}

// writeDeriv writes the derivative classes to path.
func writeDeriv(path string) error {
	var classes [][4]int
	key := func(la, lb int) int { return (la+lb)*16 + la }
	for la := 0; la <= genMaxL; la++ {
		for lb := 0; lb <= la; lb++ {
			for lc := 0; lc <= genMaxL; lc++ {
				for ld := 0; ld <= lc; ld++ {
					if key(lc, ld) > key(la, lb) {
						continue
					}
					// (dd|dp) and (dd|dd) would take three quarters of the
					// package's compile time for 2–3 % of a gradient's
					// speed: they stay with the generic code.
					if la+lb+lc+ld >= 7 {
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
	w.WriteString("// Code generated by energy/integral/internal/gen; DO NOT EDIT.\n")
	w.WriteString("// Regenerate with: go generate ./energy/integral\n")
	w.WriteString("// (or from the module root: go run ./energy/integral/internal/gen -deriv energy/integral/deriv_gen.go)\n\n")
	w.WriteString("package integral\n\nimport \"math\"\n\n")
	fmt.Fprintf(&w, "// derivGenMaxL is the highest angular momentum per centre with generated\n// derivative code.\nconst derivGenMaxL = %d\n\n", genMaxL)
	w.WriteString("// derivGenTable holds the straight-line derivative code per canonical\n// class (index ((la·3+lb)·3+lc)·3+ld); nil entries use the generic code.\n")
	n := genMaxL + 1
	fmt.Fprintf(&w, "var derivGenTable = [%d]func(dw *derivWork, bra, ket *derivPair, g []float64, thr float64) [9]float64{\n", n*n*n*n)
	for _, c := range classes {
		idx := ((c[0]*n+c[1])*n+c[2])*n + c[3]
		fmt.Fprintf(&w, "%d: %s,\n", idx, derivFuncName(c[0], c[1], c[2], c[3]))
	}
	w.WriteString("}\n")
	for _, c := range classes {
		genDerivClass(&w, c[0], c[1], c[2], c[3])
	}
	writeDeriv3(&w)
	src, err := format.Source(w.Bytes())
	if err != nil {
		os.Stdout.Write(w.Bytes())
		return err
	}
	return os.WriteFile(path, src, 0o644)
}
