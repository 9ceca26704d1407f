package main

// Straight-line code for the nuclear derivatives of three-centre
// electron-repulsion integrals (ab|P) = (ab|P·1) (energy/integral/
// threecentre.go): the ket pair is an auxiliary shell P with the unit s
// shell (exponent 0) at its centre, so the ket product centre is P's own
// centre (Q = C, no QC terms in the vertical recursion), the ket needs no
// horizontal recursion, and the derivative with respect to the unit
// shell's centre vanishes. Translational invariance then gives
//
//	∂/∂C = −(∂/∂A + ∂/∂B),
//
// so only the orbital centres A and B are differentiated explicitly: the
// classes (a±1 b|P) and (a b±1|P), from [e0|f0] with |f| = l_P alone. The
// raised classes carry the weights 2α, 2β of the orbital pair, which are
// constant over the inner loop (the auxiliary primitives, usually one), so
// the inner loop accumulates the weighted sums directly. The horizontal
// recursion acts on the bra alone, the same for every auxiliary component:
// it is emitted once per component for small auxiliary shells and, from
// l_P = gen3LoopMinAuxL on, once inside a loop over the components (with
// the contracted values and the density laid out component-major), which
// keeps the code of the large classes small. The density g is laid out
// [P][a][b].

import (
	"bytes"
	"fmt"
	"strings"
)

// gen3MaxAuxL is the highest auxiliary angular momentum with generated
// three-centre derivative code (orbital shells up to genMaxL).
const gen3MaxAuxL = 4

// gen3LoopMinAuxL is the lowest auxiliary angular momentum whose
// horizontal recursion runs in a loop over the auxiliary components.
const gen3LoopMinAuxL = 2

func deriv3FuncName(la, lb, lp int) string {
	return fmt.Sprintf("deriv3Gen%d%d%d", la, lb, lp)
}

// genDeriv3Class emits the derivative code of the three-centre class
// (la lb|lp) with la ≥ lb.
func genDeriv3Class(w *bytes.Buffer, la, lb, lp int) {
	lab := la + lb
	L := lab + lp + 1
	e0 := max(la-1, 0)
	// Unweighted (lowered classes), 2α- and 2β-weighted (raised classes).
	loop := lp >= gen3LoopMinAuxL
	zR := region{e0, lab - 1, lp, lp, "z", loop}
	aR := region{la + 1, lab + 1, lp, lp, "xa", loop}
	bR := region{la, lab + 1, lp, lp, "xb", loop}

	var targets []item
	seen := map[item]bool{}
	add := func(e, f vec) {
		it := item{e, f, 0}
		if !seen[it] {
			seen[it] = true
			targets = append(targets, it)
		}
	}
	zR.each(add)
	aR.each(add)
	bR.each(add)
	var plan *vrrPlan
	for _, ketFirst := range []bool{false, true} {
		for _, br := range allRules() {
			for _, kr := range allRules() {
				p := planVRRKet(targets, br, kr, true, ketFirst)
				if plan == nil || p.flops < plan.flops {
					plan = p
				}
			}
		}
	}
	body, name := emitDerivVRR(plan)
	// Each value is accumulated right after the line that computes it,
	// which keeps few values live (and the compile time of the large
	// classes down).
	accs := map[string][]string{}
	zR.each(func(e, f vec) {
		v := name[item{e, f, 0}]
		accs[v] = append(accs[v], fmt.Sprintf("%s += %s", zR.name(e, f), v))
	})
	aR.each(func(e, f vec) {
		v := name[item{e, f, 0}]
		accs[v] = append(accs[v], fmt.Sprintf("%s += ta*%s", aR.name(e, f), v))
	})
	bR.each(func(e, f vec) {
		v := name[item{e, f, 0}]
		accs[v] = append(accs[v], fmt.Sprintf("%s += tb*%s", bR.name(e, f), v))
	})
	var vrr bytes.Buffer
	for _, a := range accs["f0"] { // the Boys value itself: (ss|s)
		fmt.Fprintf(&vrr, "%s\n", a)
	}
	for _, line := range strings.SplitAfter(body.buf.String(), "\n") {
		vrr.WriteString(line)
		if v, _, ok := strings.Cut(line, " := "); ok {
			for _, a := range accs[v] {
				fmt.Fprintf(&vrr, "%s\n", a)
			}
		}
	}

	fn := deriv3FuncName(la, lb, lp)
	fmt.Fprintf(w, "\n// %s returns the derivatives of the three-centre class (%s%s|%s) with\n",
		fn, letters[la], letters[lb], letters[lp])
	fmt.Fprintf(w, "// respect to A, B and C (the auxiliary centre, −(∂A + ∂B)) contracted with\n")
	fmt.Fprintf(w, "// the Cartesian density g, laid out [P][a][b]; ket is the auxiliary shell\n")
	fmt.Fprintf(w, "// with its unit shell. Primitive quartets with bnd_p·bnd_q < thr are skipped.\n")
	fmt.Fprintf(w, "func %s(bra, ket *derivPair, g []float64, thr float64) [9]float64 {\n", fn)
	for _, r := range []region{zR, aR, bR} {
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
	fmt.Fprintf(w, "ta, tb := p.ta, p.tb\n")
	fmt.Fprintf(w, "for qi := range ket.prims {\nq := &ket.prims[qi]\n")
	fmt.Fprintf(w, "if p.bnd*q.bnd < thr {\nbreak\n}\n")
	emitPrimQuantities(w, u, L)
	w.Write(vrr.Bytes())
	fmt.Fprintf(w, "}\n}\n}\n") // ket loop, bra loop, if

	var hrr bytes.Buffer
	cnt := 0
	nab, nP := ncart(la)*ncart(lb), ncart(lp)
	// One auxiliary component: names of the contracted values of e and of
	// the density elements.
	component := func(src func(r region, e vec) string, gp func(i int) string) {
		zs := func(e vec) string { return src(zR, e) }
		genDeriv3HRR(&hrr, la+1, lb, func(e vec) string { return src(aR, e) }, gp, &cnt, 0, true, la, lb)
		genDeriv3HRR(&hrr, la, lb+1, func(e vec) string { return src(bR, e) }, gp, &cnt, 1, true, la, lb)
		if la > 0 {
			genDeriv3HRR(&hrr, la-1, lb, zs, gp, &cnt, 0, false, la, lb)
		}
		if lb > 0 {
			genDeriv3HRR(&hrr, la, lb-1, zs, gp, &cnt, 1, false, la, lb)
		}
	}
	if loop {
		fmt.Fprintf(&hrr, "for f := 0; f < %d; f++ {\n", nP)
		fmt.Fprintf(&hrr, "gp := (*[%d]float64)(g[f*%d:])\n", nab, nab)
		for _, r := range []region{zR, aR, bR} {
			if !r.empty() {
				fmt.Fprintf(&hrr, "%sf := (*[%d]float64)(%s[f*%d:])\n", r.prefix, r.ne(), r.prefix, r.ne())
			}
		}
		component(func(r region, e vec) string {
			// The index within the component's block.
			return fmt.Sprintf("%sf[%d]", r.prefix, cumIndex(e)-cum(r.e0))
		}, func(i int) string { return fmt.Sprintf("gp[%d]", i) })
		fmt.Fprintf(&hrr, "}\n")
	} else {
		for fi, f := range comps(lp) {
			component(func(r region, e vec) string { return r.name(e, f) },
				func(i int) string { return fmt.Sprintf("gam[%d]", fi*nab+i) })
		}
	}
	s := hrr.String()
	for i, ax := range axis {
		if bytes.Contains(hrr.Bytes(), []byte("ab"+ax+"*")) {
			fmt.Fprintf(w, "ab%s := bra.ab[%d]\n", ax, i)
		}
	}
	if !loop {
		fmt.Fprintf(w, "gam := (*[%d]float64)(g)\n", nP*nab)
	}
	fmt.Fprintf(w, "var ga0, ga1, ga2, gb0, gb1, gb2 float64\n")
	w.WriteString(s)
	fmt.Fprintf(w, "return [9]float64{ga0, ga1, ga2, gb0, gb1, gb2, -(ga0 + gb0), -(ga1 + gb1), -(ga2 + gb2)}\n}\n")
}

// genDeriv3HRR emits the bra horizontal recursion of the class (la lb|
// for one auxiliary component, from the contracted [e|  named by src, and
// the contraction of the result with the density block of the original
// class (la0 lb0| (element i named gp(i), layout [a][b]) into the
// accumulators of centre x (0: A, 1: B): the class is raised (up) or
// lowered by one on that centre, ∂/∂X_k = Σ Γ_r·((r+1_k) − r_k·(r−1_k)).
func genDeriv3HRR(w *bytes.Buffer, la, lb int, src func(e vec) string, gp func(i int) string, cnt *int, x int, up bool, la0, lb0 int) {
	idx := func(a, b vec) int {
		return (cumIndex(a)-cum(la0))*ncart(lb0) + cumIndex(b) - cum(lb0)
	}
	emit := func(a, b vec, val string) {
		for k := 0; k < 3; k++ {
			acc := fmt.Sprintf("%s%d", centreName[x], k)
			v := [2]vec{a, b}
			if up {
				if v[x][k] > 0 {
					v[x] = v[x].add(k, -1)
					fmt.Fprintf(w, "%s += %s * %s\n", acc, gp(idx(v[0], v[1])), val)
				}
				continue
			}
			v[x] = v[x].add(k, 1)
			fmt.Fprintf(w, "%s -= %s * %s\n", acc, mulInt(v[x][k], gp(idx(v[0], v[1]))), val)
		}
	}
	if lb == 0 {
		for _, a := range comps(la) {
			emit(a, vec{}, src(a))
		}
		return
	}
	bp := bestHRR(la, lb)
	nm := map[pairItem]string{}
	for _, it := range bp.order {
		if it.b.level() == 0 {
			nm[it] = src(it.a)
			continue
		}
		i := bp.dir[it]
		b1 := it.b.add(i, -1)
		v := fmt.Sprintf("h%d", *cnt)
		*cnt++
		fmt.Fprintf(w, "%s := %s + ab%s*%s\n", v, nm[pairItem{it.a.add(i, 1), b1}], axis[i], nm[pairItem{it.a, b1}])
		nm[it] = v
		if it.a.level() == la && it.b.level() == lb {
			emit(it.a, it.b, v)
		}
	}
}

// writeDeriv3 appends the table and the functions of the three-centre
// classes to w.
func writeDeriv3(w *bytes.Buffer) {
	n, np := genMaxL+1, gen3MaxAuxL+1
	fmt.Fprintf(w, "\n// deriv3GenMaxAuxL is the highest auxiliary angular momentum with\n// generated three-centre derivative code (orbital shells up to derivGenMaxL).\nconst deriv3GenMaxAuxL = %d\n\n", gen3MaxAuxL)
	fmt.Fprintf(w, "// deriv3GenTable holds the three-centre derivative code per class (ab|P)\n// with la ≥ lb (index (la·%d+lb)·%d+lP).\n", n, np)
	fmt.Fprintf(w, "var deriv3GenTable = [%d]func(bra, ket *derivPair, g []float64, thr float64) [9]float64{\n", n*n*np)
	for la := 0; la <= genMaxL; la++ {
		for lb := 0; lb <= la; lb++ {
			for lp := 0; lp <= gen3MaxAuxL; lp++ {
				fmt.Fprintf(w, "%d: %s,\n", (la*n+lb)*np+lp, deriv3FuncName(la, lb, lp))
			}
		}
	}
	w.WriteString("}\n")
	for la := 0; la <= genMaxL; la++ {
		for lb := 0; lb <= la; lb++ {
			for lp := 0; lp <= gen3MaxAuxL; lp++ {
				genDeriv3Class(w, la, lb, lp)
			}
		}
	}
}
