//go:build libint2

// C shim over libint2's C++ API for poise's reference tests and benchmarks.
// Every entry point catches C++ exceptions and reports them as error codes.

#include "shim.h"

#include <libint2.hpp>

#include <array>
#include <cstring>
#include <exception>
#include <mutex>
#include <string>
#include <utility>
#include <vector>

namespace {

std::once_flag init_flag;

void ensure_initialized() {
  std::call_once(init_flag, [] { libint2::initialize(); });
}

void set_err(char *err, int errlen, const std::string &msg) {
  if (err == nullptr || errlen <= 0) return;
  std::strncpy(err, msg.c_str(), errlen - 1);
  err[errlen - 1] = 0;
}

double double_factorial(int n) {
  double r = 1;
  for (int k = n; k > 1; k -= 2) r *= k;
  return r;
}

// Build libint2 shells from the flat arrays. libint2::Shell takes the
// published coefficients of normalized primitives and rescales the
// contraction so that the axial Cartesian component x^l has unit norm
// (for pure shells this makes the solid harmonics unit-normalized).
std::vector<libint2::Shell> make_shells(int nshell, const int *ls,
                                        const int *pures, const int *nprims,
                                        const double *centers,
                                        const double *exps,
                                        const double *coefs) {
  std::vector<libint2::Shell> out;
  out.reserve(nshell);
  size_t off = 0;
  for (int i = 0; i < nshell; ++i) {
    std::vector<double> e(exps + off, exps + off + nprims[i]);
    std::vector<double> c(coefs + off, coefs + off + nprims[i]);
    off += nprims[i];
    libint2::svector<double> es(e.begin(), e.end());
    libint2::svector<double> cs(c.begin(), c.end());
    out.emplace_back(libint2::Shell{
        es,
        {{ls[i], pures[i] != 0, cs}},
        {{centers[3 * i], centers[3 * i + 1], centers[3 * i + 2]}}});
  }
  return out;
}

// Cartesian scale factors converting libint2's standard Cartesian
// normalization (every component carries the normalization of x^l) to
// poise's (every component unit-normalized): the factor of component
// x^lx y^ly z^lz is √((2l−1)!!/((2lx−1)!!(2ly−1)!!(2lz−1)!!)). Components
// are in libint2's standard order (lx from l down, then ly from l−lx down),
// which is poise's. Pure shells need no factor: libint2's solid harmonics
// (standard ordering m = −l … l) are already unit-normalized.
std::vector<double> shell_scale(const libint2::Shell &s) {
  const int l = s.contr[0].l;
  std::vector<double> f;
  if (s.contr[0].pure) {
    f.assign(2 * l + 1, 1.0);
    return f;
  }
  for (int lx = l; lx >= 0; --lx)
    for (int ly = l - lx; ly >= 0; --ly) {
      const int lz = l - lx - ly;
      f.push_back(std::sqrt(double_factorial(2 * l - 1) /
                            (double_factorial(2 * lx - 1) *
                             double_factorial(2 * ly - 1) *
                             double_factorial(2 * lz - 1))));
    }
  return f;
}

// Copy one result set (row-major over the shells' functions) to out,
// multiplying by the product of the per-function scale factors. A null
// set (libint2 screened the whole set out) is written as zeros.
void convert_set(const std::vector<const libint2::Shell *> &sh,
                 const double *src, double *out) {
  std::vector<std::vector<double>> scale;
  size_t n = 1;
  for (auto s : sh) {
    scale.push_back(shell_scale(*s));
    n *= scale.back().size();
  }
  if (src == nullptr) {
    std::fill(out, out + n, 0.0);
    return;
  }
  const size_t ns = sh.size();
  std::vector<size_t> dims(ns);
  for (size_t k = 0; k < ns; ++k) dims[k] = scale[k].size();
  for (size_t idx = 0; idx < n; ++idx) {
    size_t r = idx;
    double f = 1;
    for (size_t k = ns; k-- > 0;) {
      f *= scale[k][r % dims[k]];
      r /= dims[k];
    }
    out[idx] = src[idx] * f;
  }
}

libint2::Operator to_operator(int op) {
  switch (op) {
    case LR_OVERLAP:
      return libint2::Operator::overlap;
    case LR_KINETIC:
      return libint2::Operator::kinetic;
    case LR_NUCLEAR:
      return libint2::Operator::nuclear;
    case LR_EMULTIPOLE1:
      return libint2::Operator::emultipole1;
    case LR_COULOMB:
      return libint2::Operator::coulomb;
  }
  throw std::invalid_argument("unknown operator code " + std::to_string(op));
}

}  // namespace

extern "C" int lr_compute(int op, int deriv, int nshell, const int *ls,
                          const int *pures, const int *nprims,
                          const double *centers, const double *exps,
                          const double *coefs, int nparams,
                          const double *params, double *out, int outlen,
                          char *err, int errlen) {
  try {
    ensure_initialized();
    auto shells =
        make_shells(nshell, ls, pures, nprims, centers, exps, coefs);
    const int want = (op == LR_COULOMB) ? 4 : 2;
    if (nshell != want)
      throw std::invalid_argument("wrong number of shells");
    // libint2 aborts (assert) rather than throwing when asked for
    // derivatives it was not built for, so refuse them here.
    if (deriv < 0 || deriv > 1)
      throw std::invalid_argument("derivative order must be 0 or 1");
#if !defined(INCLUDE_ONEBODY) || INCLUDE_ONEBODY < 1
    if (deriv > 0 && op != LR_COULOMB)
      throw std::invalid_argument(
          "this libint2 build has no one-electron derivative integrals "
          "(INCLUDE_ONEBODY < 1)");
#endif
#if !defined(INCLUDE_ERI) || INCLUDE_ERI < 1
    if (deriv > 0 && op == LR_COULOMB)
      throw std::invalid_argument(
          "this libint2 build has no ERI derivative integrals");
#endif
    size_t maxnprim = 0;
    int maxl = 0;
    for (auto &s : shells) {
      maxnprim = std::max(maxnprim, s.nprim());
      maxl = std::max(maxl, s.contr[0].l);
    }
    libint2::Engine engine(to_operator(op), maxnprim, maxl, deriv);
    engine.set_precision(0.0);  // reference values: no primitive screening
    if (op == LR_NUCLEAR) {
      std::vector<std::pair<double, std::array<double, 3>>> q;
      for (int i = 0; i + 3 < nparams; i += 4)
        q.push_back({params[i], {{params[i + 1], params[i + 2], params[i + 3]}}});
      engine.set_params(q);
    } else if (op == LR_EMULTIPOLE1) {
      if (nparams != 3) throw std::invalid_argument("origin needs 3 values");
      engine.set_params(std::array<double, 3>{{params[0], params[1], params[2]}});
    }
    std::vector<const libint2::Shell *> sh;
    for (auto &s : shells) sh.push_back(&s);
    if (want == 2)
      engine.compute(shells[0], shells[1]);
    else
      engine.compute(shells[0], shells[1], shells[2], shells[3]);
    const auto &res = engine.results();
    size_t n = 1;
    for (auto &s : shells) n *= s.size();
    if (static_cast<size_t>(outlen) != res.size() * n)
      throw std::invalid_argument(
          "output buffer holds " + std::to_string(outlen) + " values, need " +
          std::to_string(res.size() * n));
    for (size_t k = 0; k < res.size(); ++k)
      convert_set(sh, res[k], out + k * n);
    return 0;
  } catch (const std::exception &e) {
    set_err(err, errlen, e.what());
    return 1;
  } catch (...) {
    set_err(err, errlen, "unknown C++ exception");
    return 2;
  }
}

extern "C" int lr_eri_all_unique(int nshell, const int *ls, const int *pures,
                                 const int *nprims, const double *centers,
                                 const double *exps, const double *coefs,
                                 long long *count, double *checksum,
                                 char *err, int errlen) {
  try {
    ensure_initialized();
    auto shells =
        make_shells(nshell, ls, pures, nprims, centers, exps, coefs);
    size_t maxnprim = 0;
    int maxl = 0;
    for (auto &s : shells) {
      maxnprim = std::max(maxnprim, s.nprim());
      maxl = std::max(maxl, s.contr[0].l);
    }
    // Default engine precision (machine epsilon for primitive screening),
    // as a production code would run it; no screening of shell quartets.
    libint2::Engine engine(libint2::Operator::coulomb, maxnprim, maxl, 0);
    std::vector<std::vector<double>> scale;
    for (auto &s : shells) scale.push_back(shell_scale(s));
    long long cnt = 0;
    double sum = 0;
    const auto &res = engine.results();
    for (int i = 0; i < nshell; ++i)
      for (int j = 0; j <= i; ++j)
        for (int k = 0; k <= i; ++k)
          for (int l = 0; l <= (k == i ? j : k); ++l) {
            engine.compute(shells[i], shells[j], shells[k], shells[l]);
            const auto &si = scale[i], &sj = scale[j], &sk = scale[k],
                       &sl = scale[l];
            const size_t n = si.size() * sj.size() * sk.size() * sl.size();
            cnt += n;
            const double *v = res[0];
            if (v == nullptr) continue;
            size_t idx = 0;
            for (double fi : si)
              for (double fj : sj)
                for (double fk : sk) {
                  const double f = fi * fj * fk;
                  for (double fl : sl) sum += v[idx++] * f * fl;
                }
          }
    *count = cnt;
    *checksum = sum;
    return 0;
  } catch (const std::exception &e) {
    set_err(err, errlen, e.what());
    return 1;
  } catch (...) {
    set_err(err, errlen, "unknown C++ exception");
    return 2;
  }
}

extern "C" int lr_coulomb_unit(int deriv, int nshell, const int *ls,
                               const int *pures, const int *nprims,
                               const double *centers, const double *exps,
                               const double *coefs, double *out, int outlen,
                               char *err, int errlen) {
  try {
    ensure_initialized();
    if (nshell != 2 && nshell != 3)
      throw std::invalid_argument("need 2 or 3 shells");
    if (deriv < 0 || deriv > 1)
      throw std::invalid_argument("derivative order must be 0 or 1");
    auto given =
        make_shells(nshell, ls, pures, nprims, centers, exps, coefs);
    const libint2::Shell unit = libint2::Shell::unit();
    std::vector<libint2::Shell> shells;
    if (nshell == 3)
      shells = {given[0], given[1], given[2], unit};
    else
      shells = {given[0], unit, given[1], unit};
    size_t maxnprim = 0;
    int maxl = 0;
    for (auto &s : shells) {
      maxnprim = std::max(maxnprim, s.nprim());
      maxl = std::max(maxl, s.contr[0].l);
    }
    libint2::Engine engine(libint2::Operator::coulomb, maxnprim, maxl, deriv);
    engine.set_precision(0.0);  // reference values: no primitive screening
    engine.compute(shells[0], shells[1], shells[2], shells[3]);
    std::vector<const libint2::Shell *> sh;
    for (auto &s : shells) sh.push_back(&s);
    const auto &res = engine.results();
    size_t n = 1;
    for (auto &s : shells) n *= s.size();
    if (static_cast<size_t>(outlen) != res.size() * n)
      throw std::invalid_argument(
          "output buffer holds " + std::to_string(outlen) + " values, need " +
          std::to_string(res.size() * n));
    for (size_t k = 0; k < res.size(); ++k)
      convert_set(sh, res[k], out + k * n);
    return 0;
  } catch (const std::exception &e) {
    set_err(err, errlen, e.what());
    return 1;
  } catch (...) {
    set_err(err, errlen, "unknown C++ exception");
    return 2;
  }
}

extern "C" int lr_boys(int mmax, double t, double *out, char *err,
                       int errlen) {
  try {
    auto f = libint2::FmEval_Chebyshev7<double>::instance(mmax);
    f->eval(out, t, mmax);
    return 0;
  } catch (const std::exception &e) {
    set_err(err, errlen, e.what());
    return 1;
  }
}
