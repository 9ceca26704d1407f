//go:build libxc

package libxcref

/*
#cgo LDFLAGS: -lxc -lm
#include <stdlib.h>
#include <xc.h>

static int family_of(xc_func_type *p) { return p->info->family; }
static double dens_thr(xc_func_type *p) { return p->dens_threshold; }
static double zeta_thr(xc_func_type *p) { return p->zeta_threshold; }
static double sigma_thr(xc_func_type *p) { return p->sigma_threshold; }
static int n_aux(xc_func_type *p) { return p->n_func_aux; }
static xc_func_type *aux(xc_func_type *p, int i) { return p->func_aux[i]; }
static double mix_coef(xc_func_type *p, int i) { return p->mix_coef[i]; }
static int number_of(xc_func_type *p) { return p->info->number; }
*/
import "C"

import (
	"fmt"
	"unsafe"
)

// Thresholds are the screening parameters of an initialized libxc functional.
type Thresholds struct {
	Dens, Zeta, Sigma float64
}

// Func is an initialized libxc functional.
type Func struct {
	p         *C.xc_func_type
	polarized bool
	gga       bool
}

// New initializes the libxc functional id, spin-polarized or not.
func New(id int, polarized bool) (*Func, error) {
	p := C.xc_func_alloc()
	nspin := C.int(C.XC_UNPOLARIZED)
	if polarized {
		nspin = C.XC_POLARIZED
	}
	if C.xc_func_init(p, C.int(id), nspin) != 0 {
		C.xc_func_free(p)
		return nil, fmt.Errorf("libxcref: libxc cannot initialize functional %d", id)
	}
	f := &Func{p: p, polarized: polarized}
	switch fam := C.family_of(p); fam {
	case C.XC_FAMILY_LDA, C.XC_FAMILY_HYB_LDA:
	case C.XC_FAMILY_GGA, C.XC_FAMILY_HYB_GGA:
		f.gga = true
	default:
		f.Close()
		return nil, fmt.Errorf("libxcref: functional %d has unsupported family %d", id, int(fam))
	}
	return f, nil
}

// Close frees the functional.
func (f *Func) Close() {
	if f.p != nil {
		C.xc_func_end(f.p)
		C.xc_func_free(f.p)
		f.p = nil
	}
}

// IsGGA reports whether the functional depends on the density gradient.
func (f *Func) IsGGA() bool { return f.gga }

// Thresholds returns the functional's default screening thresholds.
func (f *Func) Thresholds() Thresholds {
	return Thresholds{Dens: float64(C.dens_thr(f.p)), Zeta: float64(C.zeta_thr(f.p)), Sigma: float64(C.sigma_thr(f.p))}
}

// Component is one term of a libxc mixture: its ID, weight and thresholds.
type Component struct {
	ID         int
	Coef       float64
	Thresholds Thresholds
}

// Components lists the terms of a mixed functional (empty for a single one).
func (f *Func) Components() []Component {
	var out []Component
	for i := 0; i < int(C.n_aux(f.p)); i++ {
		a := C.aux(f.p, C.int(i))
		out = append(out, Component{
			ID:   int(C.number_of(a)),
			Coef: float64(C.mix_coef(f.p, C.int(i))),
			Thresholds: Thresholds{Dens: float64(C.dens_thr(a)), Zeta: float64(C.zeta_thr(a)),
				Sigma: float64(C.sigma_thr(a))},
		})
	}
	return out
}

// ExactExchange returns libxc's fraction of exact exchange.
func (f *Func) ExactExchange() float64 { return float64(C.xc_hyb_exx_coef(f.p)) }

func ptr(s []float64) *C.double {
	if len(s) == 0 {
		return nil
	}
	return (*C.double)(unsafe.Pointer(&s[0]))
}

// Eval evaluates the functional at n points. In the unpolarized case rho
// and sigma hold one value per point; in the polarized case rho holds
// (ρα, ρβ) pairs and sigma (σαα, σαβ, σββ) triples, as libxc lays them out.
// It returns libxc's zk (energy per particle), vrho and vsigma (nil for
// LDA) laid out the same way.
func (f *Func) Eval(n int, rho, sigma []float64) (zk, vrho, vsigma []float64) {
	nr, ns := 1, 1
	if f.polarized {
		nr, ns = 2, 3
	}
	if len(rho) < nr*n || (f.gga && len(sigma) < ns*n) {
		panic("libxcref: input arrays too short")
	}
	// libxc keeps its own pointers only during the call; Go memory is fine.
	zk = make([]float64, n)
	vrho = make([]float64, nr*n)
	if n == 0 {
		return zk, vrho, nil
	}
	if f.gga {
		vsigma = make([]float64, ns*n)
		C.xc_gga_exc_vxc(f.p, C.size_t(n), ptr(rho), ptr(sigma), ptr(zk), ptr(vrho), ptr(vsigma))
	} else {
		C.xc_lda_exc_vxc(f.p, C.size_t(n), ptr(rho), ptr(zk), ptr(vrho))
	}
	return zk, vrho, vsigma
}
