// The "vectorised limit" of the library's two-stream kernel: the same algorithm (delta-Eddington
// scaling with f = g^2, Joseph, Wiscombe & Weinman 1976; the Eddington coefficients of Meador &
// Weaver 1980 with gamma2 >= 0 and gamma3 <= 1; the layer solution with one division; adding
// from the surface up and a downward sweep), written as plainly as the compiler vectorises best:
// plane-parallel only, no singular-band fix-up, no input checks, no options. It exists only so
// that bench/two_stream_bench can time the library's kernel against it side by side; its
// fluxes are compared with the library's to show that it solves the same problems.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <vector>

#include "rt/fast_exp.hpp"

namespace solstrata::bench {

/// Layer arrays of one block of nb problems, [layer * nb + j].
template <class T>
struct LimitWork {
  std::vector<T> r, t, rb, tb, dir, alb, src, den;
  void reserve(std::size_t nl, std::size_t nb) {
    const std::size_t n = (nl + 1) * nb;
    for (std::vector<T>* v : {&r, &t, &rb, &tb, &dir, &alb, &src, &den}) v->resize(n);
  }
};

namespace limit_detail {

/// Layer pass of one layer: responses and the delta-scaled beam below it.
template <class T>
void layer_pass(std::size_t nb, const double* __restrict tau_in, const double* __restrict om_in,
                const double* __restrict g_in, const T* __restrict mu0, const T* __restrict inv_mu0,
                const T* __restrict d0, T* __restrict d1, T* __restrict r, T* __restrict t, T* __restrict rb,
                T* __restrict tb) {
  using solstrata::rt::detail::exp_nonpositive;
  constexpr T one = 1, zero = 0;
  for (std::size_t j = 0; j < nb; ++j) {
    const T g0 = static_cast<T>(g_in[j]), w0 = static_cast<T>(om_in[j]);
    const T gp = g0 > zero ? g0 : zero;
    const T f = gp * gp;
    const T m = one - w0 * f;
    const T inv = one / (m * (one + gp));
    const T tau = m * static_cast<T>(tau_in[j]);
    const T om = w0 == one ? one : std::min(one, w0 * ((one - f) * (one + gp)) * inv);
    const T g = g0 > zero ? g0 * m * inv : g0;
    const T wg = om * g;
    const T g1 = T(1.75) - om - T(0.75) * wg;
    const T g2r = -T(0.25) + om - T(0.75) * wg;
    const bool lim = g2r < zero;
    const T g2 = lim ? zero : g2r;
    const T dif = lim ? g1 : T(2) * (one - om);
    const T sum = lim ? g1 : T(1.5) - T(1.5) * wg;
    const T k = std::sqrt(dif * sum);
    const T y = k * tau;
    const T e = exp_nonpositive(-y);
    const T series = one + y * (-one + y * (T(2.0 / 3) + y * (T(-1.0 / 3) + y * (T(2.0 / 15) + y * (T(-2.0 / 45) + y * T(4.0 / 315))))));
    const bool thin = y < T(0.01);
    const T nx = thin ? tau * series : one - e * e;
    const T dx = thin ? one : T(2) * k;
    const T s = g1 + k;
    const T km = k * mu0[j];
    const T d1s = one - km * km;
    const T d1f = std::abs(d1s) < T(1e-5) ? T(1e-5) : d1s;  // no fix-up: a safe denominator
    const T d2 = s * dx + g2 * g2 * nx;
    const T iv = one / (d1f * d2);
    const T q = d1f * iv;
    const T inv_sing = d2 * iv;
    const T rr = g2 * nx * s * q;
    const T tt = e * dx * s * q;
    const T t0 = exp_nonpositive(-tau * inv_mu0[j]);
    const T g3 = std::min(one, T(0.5) - T(0.75) * g * mu0[j]);
    const T g4 = one - g3;
    const T a1 = g1 * g4 + g2 * g3;
    const T a2 = g1 * g3 + g2 * g4;
    const T wi = om * inv_sing;
    const T a = wi * (g3 - a2 * mu0[j]);
    const T b = -wi * (g4 + a1 * mu0[j]);
    r[j] = rr;
    t[j] = tt;
    rb[j] = a * (one - tt * t0) - rr * b;
    tb[j] = b * (t0 - tt) - rr * a * t0;
    d1[j] = d0[j] * t0;
  }
}

template <class T>
void adding_up(std::size_t nb, const T* __restrict r, const T* __restrict t, const T* __restrict rb,
               const T* __restrict tb, const T* __restrict dir, const T* __restrict alb_b, const T* __restrict src_b,
               T* __restrict alb, T* __restrict src, T* __restrict den) {
  constexpr T one = 1;
  for (std::size_t j = 0; j < nb; ++j) {
    const T d = one / (one - r[j] * alb_b[j]);
    den[j] = d;
    alb[j] = r[j] + t[j] * t[j] * alb_b[j] * d;
    src[j] = rb[j] * dir[j] + t[j] * (src_b[j] + alb_b[j] * tb[j] * dir[j]) * d;
  }
}

template <class T>
void sweep_down(std::size_t nb, const T* __restrict r, const T* __restrict t, const T* __restrict tb,
                const T* __restrict den, const T* __restrict dir_above, const T* __restrict dir,
                const T* __restrict alb, const T* __restrict src, const double* __restrict tau_in,
                const T* __restrict inv_mu0, const double* __restrict s_in, T* __restrict dn, T* __restrict trans,
                double* __restrict fd, double* __restrict fdd, double* __restrict fu) {
  using solstrata::rt::detail::exp_nonpositive;
  for (std::size_t j = 0; j < nb; ++j) {
    const T d = (t[j] * dn[j] + tb[j] * dir_above[j] + r[j] * src[j]) * den[j];
    trans[j] *= exp_nonpositive(-static_cast<T>(tau_in[j]) * inv_mu0[j]);
    const double s = s_in[j];
    dn[j] = d;
    fd[j] = s * static_cast<double>(trans[j]);
    fdd[j] = s * static_cast<double>((dir[j] + d) - trans[j]);
    fu[j] = s * static_cast<double>(alb[j] * d + src[j]);
  }
}

}  // namespace limit_detail

/// Solves np problems of nl layers (the library's ColumnBatch layout), blocks of nb.
template <class T>
void limit_solve(std::size_t np, std::size_t nl, const double* tau, const double* omega, const double* g,
                 const double* mu0d, const double* sol, const double* ad, const double* af, double* fd, double* fdd,
                 double* fu, std::size_t nb_max, LimitWork<T>& w) {
  w.reserve(nl, nb_max);
  std::vector<T> mu0(nb_max), inv_mu0(nb_max), dn(nb_max), trans(nb_max);
  std::vector<double> s(nb_max);
  for (std::size_t p0 = 0; p0 < np; p0 += nb_max) {
    const std::size_t nb = std::min(nb_max, np - p0);
    for (std::size_t j = 0; j < nb; ++j) {
      mu0[j] = static_cast<T>(mu0d[p0 + j]);
      inv_mu0[j] = T(1) / mu0[j];
      w.dir[j] = 1;
      s[j] = mu0d[p0 + j] * sol[p0 + j];
    }
    for (std::size_t l = 0; l < nl; ++l) {
      const std::size_t o = l * np + p0;
      limit_detail::layer_pass<T>(nb, tau + o, omega + o, g + o, mu0.data(), inv_mu0.data(), w.dir.data() + l * nb,
                                  w.dir.data() + (l + 1) * nb, w.r.data() + l * nb, w.t.data() + l * nb,
                                  w.rb.data() + l * nb, w.tb.data() + l * nb);
    }
    for (std::size_t j = 0; j < nb; ++j) {
      w.alb[nl * nb + j] = static_cast<T>(af[p0 + j]);
      w.src[nl * nb + j] = static_cast<T>(ad[p0 + j]) * w.dir[nl * nb + j];
    }
    for (std::size_t l = nl; l-- > 0;)
      limit_detail::adding_up<T>(nb, w.r.data() + l * nb, w.t.data() + l * nb, w.rb.data() + l * nb,
                                 w.tb.data() + l * nb, w.dir.data() + l * nb, w.alb.data() + (l + 1) * nb,
                                 w.src.data() + (l + 1) * nb, w.alb.data() + l * nb, w.src.data() + l * nb,
                                 w.den.data() + l * nb);
    for (std::size_t j = 0; j < nb; ++j) {
      dn[j] = 0;
      trans[j] = 1;
      fd[p0 + j] = s[j];
      fdd[p0 + j] = 0.0;
      fu[p0 + j] = s[j] * static_cast<double>(w.src[j]);
    }
    for (std::size_t lev = 1; lev <= nl; ++lev) {
      const std::size_t l = lev - 1;
      limit_detail::sweep_down<T>(nb, w.r.data() + l * nb, w.t.data() + l * nb, w.tb.data() + l * nb,
                                  w.den.data() + l * nb, w.dir.data() + l * nb, w.dir.data() + lev * nb,
                                  w.alb.data() + lev * nb, w.src.data() + lev * nb, tau + l * np + p0, inv_mu0.data(),
                                  s.data(), dn.data(), trans.data(), fd + lev * np + p0, fdd + lev * np + p0,
                                  fu + lev * np + p0);
    }
  }
}

}  // namespace solstrata::bench
