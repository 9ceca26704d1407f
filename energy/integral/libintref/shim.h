// Plain C interface of the libint2 reference shim (shim.cpp). Test and
// benchmark support only; see doc.go.
#ifndef POISE_LIBINTREF_SHIM_H
#define POISE_LIBINTREF_SHIM_H

#ifdef __cplusplus
extern "C" {
#endif

// Operators understood by lr_compute.
enum {
	LR_OVERLAP = 0,
	LR_KINETIC = 1,
	LR_NUCLEAR = 2,     // params: n × (charge, x, y, z)
	LR_EMULTIPOLE1 = 3, // params: origin (x, y, z)
	LR_COULOMB = 4      // four shells
};

// Shells are passed as flat arrays (no nested pointers): shell i has
// angular momentum ls[i], pure flag pures[i], nprims[i] primitives whose
// exponents and published coefficients follow those of shell i−1 in exps
// and coefs, and its centre at centers[3i..3i+2] (bohr).
//
// lr_compute evaluates the integrals of operator op over the given shells
// (2 or 4) with geometric derivative order deriv and writes every result
// set of libint2, one after the other, converted to poise's conventions, to
// out (nsets × Π nfunc doubles). It returns 0 on success, otherwise a
// non-zero code with a message in err.
int lr_compute(int op, int deriv, int nshell, const int *ls, const int *pures,
               const int *nprims, const double *centers, const double *exps,
               const double *coefs, int nparams, const double *params,
               double *out, int outlen, char *err, int errlen);

// lr_eri_all_unique computes every unique shell quartet (ij|kl), i ≥ j,
// k ≥ l, ij ≥ kl, of the given shells with one engine, without screening of
// shell quartets, and returns the number of integrals computed in *count
// and their sum (poise conventions) in *checksum.
int lr_eri_all_unique(int nshell, const int *ls, const int *pures,
                      const int *nprims, const double *centers,
                      const double *exps, const double *coefs,
                      long long *count, double *checksum, char *err,
                      int errlen);

// lr_coulomb_unit evaluates Coulomb integrals with libint2's unit shell
// (libint2::Shell::unit(), the constant function 1): for nshell = 3 the
// three-centre (s0 s1|s2) = (s0 s1|s2 1), for nshell = 2 the two-centre
// (s0|s1) = (s0 1|s1 1), with geometric derivative order deriv (0 or 1).
// It writes every result set of the four-centre engine (for deriv = 1 the
// 12 sets ∂/∂R of the four centres, unit shells included) in poise's
// conventions to out; return values as lr_compute.
int lr_coulomb_unit(int deriv, int nshell, const int *ls, const int *pures,
                    const int *nprims, const double *centers,
                    const double *exps, const double *coefs, double *out,
                    int outlen, char *err, int errlen);

// lr_boys fills out[0..mmax] with libint2's Chebyshev-interpolated Boys
// function F_m(t).
int lr_boys(int mmax, double t, double *out, char *err, int errlen);

#ifdef __cplusplus
}
#endif

#endif
