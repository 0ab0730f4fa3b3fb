#include "rt/two_stream.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>
#include <stdexcept>

#include "rt/fast_exp.hpp"

namespace solstrata::rt {
namespace {

using detail::exp_nonpositive;

/// Half-width, in k*mu0, of the band around the removable singularity k*mu0 = 1 inside which the
/// beam response is interpolated between the band edges (see beam_response_near_singularity).
/// Cancellation error at the edge ~ eps/kSingularBand = 2e-11; interpolation error inside
/// ~ (kSingularBand)^2 * |d2R/dmu0^2| ~ 1e-10.
constexpr double kSingularBand = 1e-5;
/// The same band for the float kernel: its cancellation error eps_float/band ~ 6e-5 at the edge,
/// the interpolation error ~ band^2 ~ 1e-6 inside.
constexpr float kSingularBandFloat = 1e-3f;

/// The band of the kernel's precision.
template <class T>
constexpr T singular_band() {
  if constexpr (sizeof(T) == sizeof(float)) return kSingularBandFloat;
  else return kSingularBand;
}

/// Marks, in the beam reflectance of the layer pass, a problem inside the singular band (a
/// reflectance is in [0, 1], so -2 is never a result).
template <class T>
constexpr T kNearMark = T(-2);

/// Below this k*tau, X = (1 - exp(-2 k tau)) / (2k) is taken from its Taylor series (truncation
/// < 4e-17 relative); above it the closed form loses < 1e-14 to cancellation.
constexpr double kThinSeries = 0.01;
/// For the float kernel: truncation of the series < 1e-9 and cancellation of the closed form
/// < 1e-6 relative at the switch.
constexpr float kThinSeriesFloat = 0.05f;
template <class T>
constexpr T thin_series() {
  if constexpr (sizeof(T) == sizeof(float)) return kThinSeriesFloat;
  else return kThinSeries;
}

/// Closure coefficients in the form the kernel uses: gamma1 - gamma2 and gamma1 + gamma2 as
/// linear forms in omega and omega*g, so that gamma1 - gamma2 is exactly 0 at omega = 1.
/// T is the kernel's arithmetic: double, or float for the fast variant.
template <class T = double>
struct KernelCoefficients {
  T g1[3], g2[3], dif[3], sum[3], g3[2];
  bool delta;
};

template <class T = double>
KernelCoefficients<T> kernel_coefficients(Closure closure) {
  const ClosureCoefficients c = coefficients(closure);
  KernelCoefficients<T> k{};
  for (int i = 0; i < 3; ++i) {
    k.g1[i] = static_cast<T>(c.g1[i]);
    k.g2[i] = static_cast<T>(c.g2[i]);
    k.dif[i] = static_cast<T>(c.g1[i] - c.g2[i]);
    k.sum[i] = static_cast<T>(c.g1[i] + c.g2[i]);
  }
  k.g3[0] = static_cast<T>(c.g3[0]);
  k.g3[1] = static_cast<T>(c.g3[1]);
  k.delta = c.delta_scaled;
  return k;
}

/// Layer quantities shared by the diffuse and the beam solution.
template <class T = double>
struct LayerCore {
  T tau, omega, g;  // after delta scaling
  T g1, g2, k;      // gamma1, gamma2, k = sqrt(gamma1^2 - gamma2^2)
  T r, t;           // diffuse-incidence reflectance and transmittance
  T inv_sing;       // 1/(1 - k^2 mu0^2), or 0 where near the removable singularity
  bool near;             // |1 - k mu0| < kSingularBand: the beam needs the interpolated form
};

/// Delta scaling (Joseph, Wiscombe & Weinman 1976, J. Atmos. Sci. 33, 2452) with f = g^2:
///   tau' = (1 - omega f) tau, omega' = (1 - f) omega / (1 - omega f), g' = (g - f)/(1 - f) = g/(1 + g).
/// It truncates a forward peak; for g <= 0 there is none and f = 0 (identity), which keeps the
/// scaled g' inside (-1, 1) (g/(1 + g) would leave it for g < -1/2).
/// Then the diffuse-incidence solution of Meador & Weaver (1980), eqs. for R and T with
/// D = (k + gamma1) + (k - gamma1) e^2, e = exp(-k tau), rewritten without cancellation:
///   X = (1 - e^2)/(2k)  (-> tau as k -> 0),  gamma1 - k = gamma2^2/(gamma1 + k),
///   R = gamma2 X / (1 + (gamma1 - k) X),  T = e / (1 + (gamma1 - k) X).
/// With X = nx/dx and s = gamma1 + k this needs one division:
///   q = 1/(s dx + gamma2^2 nx),  R = gamma2 s nx q,  T = e s dx q.
/// These are finite for omega = 1 (k = 0) and tau = 0 without special cases. The same division
/// also yields 1/(1 - k^2 mu0^2) for the beam solution (one reciprocal of the product).
template <bool kDelta, class T = double>
inline LayerCore<T> layer_core(const KernelCoefficients<T>& c, T tau, T omega, T g, T mu0) {
  LayerCore<T> L;
  constexpr T one = 1, zero = 0, two = 2;
  if constexpr (kDelta) {
    // One reciprocal serves omega' and g': inv = 1/((1 - omega f)(1 + g)). omega = 1 is mapped
    // to exactly 1 (a conservative layer must stay conservative to the last bit).
    const bool forward = g > zero;
    const T gp = forward ? g : zero;
    const T f = gp * gp;
    const T m = one - omega * f;
    const T inv = one / (m * (one + gp));
    L.tau = m * tau;
    L.omega = omega == one ? one : std::min(one, omega * ((one - f) * (one + gp)) * inv);
    L.g = forward ? g * m * inv : g;
  } else {
    L.tau = tau;
    L.omega = omega;
    L.g = g;
  }
  const T wg = L.omega * L.g;
  L.g1 = c.g1[0] + c.g1[1] * L.omega + c.g1[2] * wg;
  const T g2 = c.g2[0] + c.g2[1] * L.omega + c.g2[2] * wg;
  // gamma2 limited to >= 0 (rt::kernel_gammas): the Eddington forms turn negative for
  // omega < 1/(4 - 3g) and would give negative diffuse fluxes. Where the limit acts, gamma1 -
  // gamma2 = gamma1 + gamma2 = gamma1 and k = gamma1 (streams decoupled, pure attenuation).
  // Elsewhere, and always at omega = 1, nothing changes (dif stays exactly 0 there).
  const bool limited = g2 < zero;
  L.g2 = limited ? zero : g2;
  const T dif = limited ? L.g1 : c.dif[0] + c.dif[1] * L.omega + c.dif[2] * wg;
  const T sum = limited ? L.g1 : c.sum[0] + c.sum[1] * L.omega + c.sum[2] * wg;
  L.k = std::sqrt(std::max(zero, dif * sum));
  const T y = L.k * L.tau;
  const T e = exp_nonpositive(-y);
  // Thin-layer branch: (1 - e^{-2y})/(2y) = 1 - y + 2y^2/3 - y^3/3 + 2y^4/15 - 2y^5/45 + 4y^6/315.
  const T series =
      one + y * (-one + y * (T(2.0 / 3) + y * (T(-1.0 / 3) + y * (T(2.0 / 15) + y * (T(-2.0 / 45) + y * T(4.0 / 315))))));
  const bool thin = y < thin_series<T>();
  const T nx = thin ? L.tau * series : one - e * e;
  const T dx = thin ? one : two * L.k;
  const T s = L.g1 + L.k;
  const T km = L.k * mu0;
  L.near = std::abs(one - km) < singular_band<T>();
  const T d1 = L.near ? one : one - km * km;
  const T d2 = s * dx + L.g2 * L.g2 * nx;
  const T inv = one / (d1 * d2);
  const T q = d1 * inv;
  L.inv_sing = L.near ? zero : d2 * inv;
  const T sq = s * q;
  L.r = L.g2 * nx * sq;
  L.t = e * dx * sq;
  return L;
}

/// Beam (collimated) response of a layer, per unit direct flux on a horizontal surface at its top.
/// Particular solution of the two-stream equations for the source omega gamma3,4 exp(-tau/mu0)/mu0
/// (Meador & Weaver 1980), F_up = A exp(-tau/mu0), F_down = B exp(-tau/mu0) with
///   A = omega (gamma3 - alpha2 mu0) / (1 - k^2 mu0^2),  B = -omega (gamma4 + alpha1 mu0) / (1 - k^2 mu0^2),
///   alpha1 = gamma1 gamma4 + gamma2 gamma3, alpha2 = gamma1 gamma3 + gamma2 gamma4;
/// plus the layer's diffuse response to the boundary values that cancel it (no diffuse light
/// enters from above or below):
///   R_beam = A - R B - T A t0,   T_beam = B t0 - T B - R A t0,   t0 = exp(-tau/mu0).
/// `inv_sing` is 1/(1 - k^2 mu0^2), passed in so that the caller can keep it finite.
template <class T>
inline void beam_response(const KernelCoefficients<T>& c, const LayerCore<T>& L, T mu0, T t0, T inv_sing, T& r_beam,
                          T& t_beam) {
  constexpr T one = 1;
  // gamma3 limited to <= 1, i.e. gamma4 >= 0 (rt::kernel_gammas): the published forms exceed 1
  // for back-scattering layers at high sun (g mu0 < -2/3 for Eddington) and would transmit a
  // negative diffuse flux.
  const T g3 = std::min(one, c.g3[0] + c.g3[1] * L.g * mu0);
  const T g4 = one - g3;
  const T a1 = L.g1 * g4 + L.g2 * g3;
  const T a2 = L.g1 * g3 + L.g2 * g4;
  const T wi = L.omega * inv_sing;
  const T a = wi * (g3 - a2 * mu0);
  const T b = -wi * (g4 + a1 * mu0);
  r_beam = a * (one - L.t * t0) - L.r * b;
  t_beam = b * (t0 - L.t) - L.r * a * t0;
}

/// The beam response is analytic in mu0 across k mu0 = 1, where A and B have a removable pole.
/// Inside |1 - k mu0| < kSingularBand it is interpolated linearly between the band edges
/// mu0 = (1 -+ kSingularBand)/k, where the closed form is still accurate; the result is
/// continuous at the edges and within ~1e-10 of the true limit inside.
template <class T>
void beam_response_near_singularity(const KernelCoefficients<T>& c, const LayerCore<T>& L, T mu0, T& r_beam,
                                    T& t_beam) {
  constexpr T one = 1;
  const T mu_lo = (one - singular_band<T>()) / L.k;
  const T mu_hi = (one + singular_band<T>()) / L.k;
  T r_lo, t_lo, r_hi, t_hi;
  const auto at = [&](T mu, T& r, T& t) {
    const T km = L.k * mu;
    beam_response(c, L, mu, std::exp(-L.tau / mu), one / (one - km * km), r, t);
  };
  at(mu_lo, r_lo, t_lo);
  at(mu_hi, r_hi, t_hi);
  const T w = (mu0 - mu_lo) / (mu_hi - mu_lo);
  r_beam = r_lo + w * (r_hi - r_lo);
  t_beam = t_lo + w * (t_hi - t_lo);
}

/// Scratch arrays of one block of nb problems: per layer [l * nb + j], per level [lev * nb + j].
template <class T = double>
struct BlockArrays {
  T *r, *t, *rb, *tb;  // layer: diffuse R, T; beam R, T (per unit direct flux at its top)
  T *den;              // layer: 1/(1 - R alb_below)
  T *dir;              // level: delta-scaled direct beam, per unit at the top
  T *trans;            // problem: true (unscaled) beam transmission down to the current level
  T *alb, *src;        // level: diffuse albedo below, beam-generated upward source below
  T *dn;               // level: diffuse downward flux, per unit direct flux at the top
  T *inv_mu0;          // problem: 1/mu0
  T *mu_layer;         // problem: effective beam cosine 1/m of the current layer (beam_path)
  T *mu0;              // problem: mu0 in the kernel's precision
  T *m_row;            // problem: slant factors of the current layer in the kernel's precision
};

template <class T>
BlockArrays<T> carve(T* base, std::size_t nl, std::size_t nb) {
  BlockArrays<T> a{};
  T* p = base;
  const auto take = [&](std::size_t n) {
    T* q = p;
    p += n * nb;
    return q;
  };
  a.r = take(nl);
  a.t = take(nl);
  a.rb = take(nl);
  a.tb = take(nl);
  a.den = take(nl);
  a.dir = take(nl + 1);
  a.trans = take(1);
  a.alb = take(nl + 1);
  a.src = take(nl + 1);
  a.dn = take(nl + 1);
  a.inv_mu0 = take(1);
  a.mu_layer = take(1);
  a.mu0 = take(1);
  a.m_row = take(1);
  return a;
}

std::size_t workspace_size(std::size_t nl, std::size_t nb) { return (9 * nl + 9) * nb; }

/// One step of the upward adding sweep over the problems of a block: combines a layer
/// (r, t diffuse; rb, tb beam) with what lies below it (diffuse albedo alb_b, beam-generated
/// upward source src_b) into the same quantities at the layer's top. Multiple reflections
/// between the layer and the medium below sum to den = 1/(1 - r alb_b).
/// A separate function so that __restrict on its parameters lets the loop vectorise.
template <class T>
void adding_step_up(std::size_t nb, const T* __restrict r, const T* __restrict t, const T* __restrict rb,
                    const T* __restrict tb, const T* __restrict dir, const T* __restrict alb_b,
                    const T* __restrict src_b, T* __restrict alb, T* __restrict src, T* __restrict den) {
  constexpr T one = 1;
  for (std::size_t j = 0; j < nb; ++j) {
    const T d = one / (one - r[j] * alb_b[j]);
    den[j] = d;
    alb[j] = r[j] + t[j] * t[j] * alb_b[j] * d;
    src[j] = rb[j] * dir[j] + t[j] * (src_b[j] + alb_b[j] * tb[j] * dir[j]) * d;
  }
}

/// Solves one block of nb problems starting at problem p0 (see solve_columns). Every inner loop
/// runs over the problems of the block and vectorises; kDelta selects delta scaling at compile
/// time so that unscaled closures skip its division and the second beam exponential.
template <bool kDelta, class T>
void solve_block(const KernelCoefficients<T>& coef, const ColumnBatch& in, std::size_t p0, std::size_t nb,
                 const LevelFluxes& out, const BlockArrays<T> w) {
  constexpr T one = 1, zero = 0;
  const std::size_t np = in.n_problems;
  const std::size_t nl = in.n_layers;
  const KernelCoefficients<T> c = coef;  // a local copy: provably not aliased by the output stores
  // Per-problem inputs in the kernel's precision (for double a plain copy).
  T* __restrict mu0 = w.mu0;
  T* __restrict inv_mu0 = w.inv_mu0;
  {
    const double* __restrict m0 = in.mu0.data() + p0;
    for (std::size_t j = 0; j < nb; ++j) {
      mu0[j] = static_cast<T>(m0[j]);
      inv_mu0[j] = one / mu0[j];
    }
  }
  // Pseudo-spherical beam (ColumnBatch::beam_path): layer l sees slant factor m and effective
  // cosine 1/m. Plane-parallel (empty): m = 1/mu0 and the cosine is mu0 itself, bit for bit.
  const bool slant = !in.beam_path.empty();
  T* __restrict m_layer = w.m_row;
  const auto path_of = [&](std::size_t l) -> const T* {
    if (!slant) return inv_mu0;
    const double* __restrict bp = in.beam_path.data() + l * np + p0;
    for (std::size_t j = 0; j < nb; ++j) m_layer[j] = static_cast<T>(bp[j]);
    return m_layer;
  };

  // 1. Layer responses, and the direct beam (delta-scaled, and true) at each level per unit
  //    direct flux at the top.
  for (std::size_t j = 0; j < nb; ++j) {
    w.dir[j] = one;
  }
  for (std::size_t l = 0; l < nl; ++l) {
    const double* __restrict tau = in.tau.data() + l * np + p0;
    const double* __restrict om = in.omega.data() + l * np + p0;
    const double* __restrict gg = in.g.data() + l * np + p0;
    T* __restrict r = w.r + l * nb;
    T* __restrict t = w.t + l * nb;
    T* __restrict rb = w.rb + l * nb;
    T* __restrict tb = w.tb + l * nb;
    const T* __restrict d0 = w.dir + l * nb;
    T* __restrict d1 = w.dir + (l + 1) * nb;
    const T* __restrict m = path_of(l);
    if (slant) {
      for (std::size_t j = 0; j < nb; ++j) w.mu_layer[j] = one / m[j];
    }
    const T* __restrict mu = slant ? w.mu_layer : mu0;
    int n_near = 0;
#pragma GCC ivdep
    for (std::size_t j = 0; j < nb; ++j) {
      const LayerCore<T> L =
          layer_core<kDelta, T>(c, static_cast<T>(tau[j]), static_cast<T>(om[j]), static_cast<T>(gg[j]), mu[j]);
      const T t0 = exp_nonpositive(-L.tau * m[j]);
      n_near += L.near ? 1 : 0;
      T rbj, tbj;
      beam_response(c, L, mu[j], t0, L.inv_sing, rbj, tbj);
      r[j] = L.r;
      t[j] = L.t;
      rb[j] = L.near ? kNearMark<T> : rbj;  // marked for the fix-up below
      tb[j] = tbj;
      d1[j] = d0[j] * t0;
    }
    // Rare: a problem within the singular band of k mu0 = 1 gets the scalar interpolated form.
    // Only the marked problems are solved again (in float, whose band is wider, a block layer
    // holds one now and then; solving the whole layer again cost the float kernel 40 %).
    if (n_near > 0) {
      for (std::size_t j = 0; j < nb; ++j) {
        if (rb[j] != kNearMark<T>) continue;
        const LayerCore<T> L =
            layer_core<kDelta, T>(c, static_cast<T>(tau[j]), static_cast<T>(om[j]), static_cast<T>(gg[j]), mu[j]);
        beam_response_near_singularity(c, L, mu[j], rb[j], tb[j]);
      }
    }
  }

  // 2. Adding, surface upwards: alb[l] is the diffuse reflectance of everything below level l,
  //    src[l] the upward diffuse flux at level l that the beam generates below it (with no
  //    diffuse light coming down through level l).
  {
    const double* __restrict ad = in.albedo_direct.data() + p0;
    const double* __restrict af = in.albedo_diffuse.data() + p0;
    const T* __restrict dsfc = w.dir + nl * nb;
    T* __restrict alb = w.alb + nl * nb;
    T* __restrict src = w.src + nl * nb;
#pragma GCC ivdep
    for (std::size_t j = 0; j < nb; ++j) {
      alb[j] = static_cast<T>(af[j]);
      src[j] = static_cast<T>(ad[j]) * dsfc[j];
    }
  }
  for (std::size_t l = nl; l-- > 0;) {
    adding_step_up<T>(nb, w.r + l * nb, w.t + l * nb, w.rb + l * nb, w.tb + l * nb, w.dir + l * nb,
                      w.alb + (l + 1) * nb, w.src + (l + 1) * nb, w.alb + l * nb, w.src + l * nb, w.den + l * nb);
  }

  // 3. Downward sweep: diffuse down at level l+1 from the layer above, closed by the reflections
  //    below (D' = (T D + T_beam dir + R src_below) den); upward = alb D' + src. Scale to the
  //    incident flux mu0 * solar and split off the true beam. Fluxes are stored in double.
  const double* __restrict sol = in.solar.data() + p0;
  const double* __restrict mu0d = in.mu0.data() + p0;
  T* __restrict trans = w.trans;
  for (std::size_t lev = 0; lev <= nl; ++lev) {
    const T* __restrict dir = w.dir + lev * nb;
    const T* __restrict alb = w.alb + lev * nb;
    const T* __restrict src = w.src + lev * nb;
    T* __restrict dn = w.dn + lev * nb;
    double* __restrict fd = out.direct_down.data() + lev * np + p0;
    double* __restrict fdd = out.diffuse_down.data() + lev * np + p0;
    double* __restrict fu = out.diffuse_up.data() + lev * np + p0;
    if (lev == 0) {
#pragma GCC ivdep
      for (std::size_t j = 0; j < nb; ++j) {
        const double s = mu0d[j] * sol[j];
        dn[j] = zero;
        trans[j] = one;
        fd[j] = s;
        fdd[j] = 0.0;
        fu[j] = s * static_cast<double>(src[j]);
      }
      continue;
    }
    const std::size_t l = lev - 1;
    const T* __restrict r = w.r + l * nb;
    const T* __restrict t = w.t + l * nb;
    const T* __restrict tb = w.tb + l * nb;
    const T* __restrict den = w.den + l * nb;
    const T* __restrict dabove = w.dn + l * nb;
    const T* __restrict dir_above = w.dir + l * nb;
    const double* __restrict tau = in.tau.data() + l * np + p0;
    const T* __restrict m = kDelta ? path_of(l) : inv_mu0;
#pragma GCC ivdep
    for (std::size_t j = 0; j < nb; ++j) {
      const T d = (t[j] * dabove[j] + tb[j] * dir_above[j] + r[j] * src[j]) * den[j];
      const double s = mu0d[j] * sol[j];
      // The true beam sees the unscaled tau. Without delta scaling it is the scaled beam itself;
      // with it, where scaling leaves tau unchanged (omega = 0 or g <= 0) the factors are equal bit
      // for bit, so a non-scattering column has exactly no diffuse light.
      T beam = dir[j];
      if constexpr (kDelta) {
        trans[j] *= exp_nonpositive(-static_cast<T>(tau[j]) * m[j]);
        beam = trans[j];
      }
      dn[j] = d;
      fd[j] = s * static_cast<double>(beam);
      fdd[j] = s * static_cast<double>((dir[j] + d) - beam);
      fu[j] = s * static_cast<double>(alb[j] * d + src[j]);
    }
  }
}

std::string describe(const char* name, std::size_t index, double value, const char* rule) {
  std::ostringstream os;
  os.precision(17);
  os << name << "[" << index << "] = " << value << " violates " << rule;
  return os.str();
}

/// Whether lo <= x[i] (lo < x[i] when kLoOpen) and x[i] <= hi (< hi when kHiOpen) for all i:
/// NaN fails every comparison. Counting the failures keeps the loop branch-free so it vectorises.
template <bool kLoOpen, bool kHiOpen>
bool within(std::span<const double> v, double lo, double hi) {
  const double* __restrict x = v.data();
  const std::size_t n = v.size();
  std::size_t bad = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const bool above = kLoOpen ? x[i] > lo : x[i] >= lo;
    const bool below = kHiOpen ? x[i] < hi : x[i] <= hi;
    bad += (above && below) ? 0 : 1;
  }
  return bad == 0;
}

/// Whether every input of a correctly sized batch is in range (the rules of validate()).
bool all_in_range(const ColumnBatch& in) {
  constexpr double kInf = std::numeric_limits<double>::infinity();
  return within<false, true>(in.tau, 0.0, kInf) && within<false, false>(in.omega, 0.0, 1.0) &&
         within<true, true>(in.g, -1.0, 1.0) && within<true, false>(in.mu0, 0.0, 1.0) &&
         within<false, true>(in.solar, 0.0, kInf) && within<false, false>(in.albedo_direct, 0.0, 1.0) &&
         within<false, false>(in.albedo_diffuse, 0.0, 1.0) && within<false, true>(in.beam_path, 1.0, kInf) &&
         within<false, false>(in.rayleigh_fraction, 0.0, 1.0);
}

}  // namespace

std::string SolverOptions::validate() const {
  if (block_size == 0) return "SolverOptions::block_size = 0 must be at least 1";
  if (block_size > 65536) return "SolverOptions::block_size must be at most 65536";
  return {};
}

void Workspace::reserve(std::size_t n_layers, std::size_t block_size) {
  const std::size_t n = workspace_size(n_layers, block_size);
  if (buf_.size() < n) buf_.resize(n);
}

void Workspace::reserve_float(std::size_t n_layers, std::size_t block_size) {
  const std::size_t n = workspace_size(n_layers, block_size);
  if (buf_f_.size() < n) buf_f_.resize(n);
}

LayerResponse solve_layer(double tau, double omega, double g, double mu0, Closure closure) {
  if (!(tau >= 0.0) || !std::isfinite(tau)) throw std::invalid_argument(describe("tau", 0, tau, "0 <= tau < inf"));
  if (!(omega >= 0.0 && omega <= 1.0)) throw std::invalid_argument(describe("omega", 0, omega, "0 <= omega <= 1"));
  if (!(g > -1.0 && g < 1.0)) throw std::invalid_argument(describe("g", 0, g, "-1 < g < 1"));
  if (!(mu0 > 0.0 && mu0 <= 1.0)) throw std::invalid_argument(describe("mu0", 0, mu0, "0 < mu0 <= 1"));
  const KernelCoefficients<double> c = kernel_coefficients<double>(closure);
  const LayerCore<double> L = c.delta ? layer_core<true, double>(c, tau, omega, g, mu0)
                                      : layer_core<false, double>(c, tau, omega, g, mu0);
  LayerResponse out{};
  out.r_diffuse = L.r;
  out.t_diffuse = L.t;
  out.t_direct = exp_nonpositive(-L.tau / mu0);
  if (L.near) {
    beam_response_near_singularity(c, L, mu0, out.r_beam, out.t_beam);
  } else {
    beam_response(c, L, mu0, out.t_direct, L.inv_sing, out.r_beam, out.t_beam);
  }
  return out;
}

Status validate(const ColumnBatch& in, const LevelFluxes& out) {
  const std::size_t np = in.n_problems, nl = in.n_layers;
  const auto size_is = [&](std::span<const double> s, std::size_t n, const char* name) -> std::string {
    if (s.size() == n) return {};
    std::ostringstream os;
    os << name << " has " << s.size() << " values; expected " << n;
    return os.str();
  };
  struct Sized {
    std::span<const double> s;
    std::size_t n;
    const char* name;
  };
  const Sized sized[] = {{in.tau, nl * np, "tau"},
                         {in.omega, nl * np, "omega"},
                         {in.g, nl * np, "g"},
                         {in.mu0, np, "mu0"},
                         {in.solar, np, "solar"},
                         {in.albedo_direct, np, "albedo_direct"},
                         {in.albedo_diffuse, np, "albedo_diffuse"},
                         {out.direct_down, (nl + 1) * np, "direct_down"},
                         {out.diffuse_down, (nl + 1) * np, "diffuse_down"},
                         {out.diffuse_up, (nl + 1) * np, "diffuse_up"}};
  for (const Sized& z : sized) {
    if (auto m = size_is(z.s, z.n, z.name); !m.empty()) return {false, m};
  }
  // The optional per-layer arrays: empty, or one value per layer and problem.
  if (!in.beam_path.empty()) {
    if (auto m = size_is(in.beam_path, nl * np, "beam_path"); !m.empty()) return {false, m};
  }
  if (!in.rayleigh_fraction.empty()) {
    if (auto m = size_is(in.rayleigh_fraction, nl * np, "rayleigh_fraction"); !m.empty()) return {false, m};
  }
  // Fast pass: one vectorisable sweep that only says whether everything is in range (no early
  // exit, no message); only when it fails do the loops below look for the first offender.
  if (all_in_range(in)) return {};
  for (std::size_t i = 0; i < in.beam_path.size(); ++i) {
    if (!(in.beam_path[i] >= 1.0 && std::isfinite(in.beam_path[i]))) return {false, describe("beam_path", i, in.beam_path[i], "1 <= beam_path < inf")};
  }
  for (std::size_t i = 0; i < in.rayleigh_fraction.size(); ++i) {
    const double f = in.rayleigh_fraction[i];
    if (!(f >= 0.0 && f <= 1.0)) return {false, describe("rayleigh_fraction", i, f, "0 <= rayleigh_fraction <= 1")};
  }
  for (std::size_t i = 0; i < nl * np; ++i) {
    if (!(in.tau[i] >= 0.0 && std::isfinite(in.tau[i]))) return {false, describe("tau", i, in.tau[i], "0 <= tau < inf")};
    if (!(in.omega[i] >= 0.0 && in.omega[i] <= 1.0)) return {false, describe("omega", i, in.omega[i], "0 <= omega <= 1")};
    if (!(in.g[i] > -1.0 && in.g[i] < 1.0)) return {false, describe("g", i, in.g[i], "-1 < g < 1")};
  }
  for (std::size_t p = 0; p < np; ++p) {
    if (!(in.mu0[p] > 0.0 && in.mu0[p] <= 1.0)) return {false, describe("mu0", p, in.mu0[p], "0 < mu0 <= 1")};
    if (!(in.solar[p] >= 0.0 && std::isfinite(in.solar[p]))) return {false, describe("solar", p, in.solar[p], "0 <= solar < inf")};
    if (!(in.albedo_direct[p] >= 0.0 && in.albedo_direct[p] <= 1.0)) return {false, describe("albedo_direct", p, in.albedo_direct[p], "0 <= albedo <= 1")};
    if (!(in.albedo_diffuse[p] >= 0.0 && in.albedo_diffuse[p] <= 1.0)) return {false, describe("albedo_diffuse", p, in.albedo_diffuse[p], "0 <= albedo <= 1")};
  }
  return {};
}

namespace {

template <class T>
void solve_all_blocks(const ColumnBatch& in, const SolverOptions& options, const LevelFluxes& out, T* work) {
  const KernelCoefficients<T> c = kernel_coefficients<T>(options.closure);
  const std::size_t bs = std::max<std::size_t>(1, options.block_size);
  for (std::size_t p0 = 0; p0 < in.n_problems; p0 += bs) {
    const std::size_t nb = std::min(bs, in.n_problems - p0);
    const BlockArrays<T> arrays = carve(work, in.n_layers, nb);
    if (c.delta) {
      solve_block<true, T>(c, in, p0, nb, out, arrays);
    } else {
      solve_block<false, T>(c, in, p0, nb, out, arrays);
    }
  }
}

}  // namespace

void solve_columns_unchecked(const ColumnBatch& in, const SolverOptions& options, LevelFluxes out,
                             Workspace& work) {
  const std::size_t bs = std::max<std::size_t>(1, options.block_size);
  const std::size_t nb = std::min(bs, std::max<std::size_t>(1, in.n_problems));
  if (options.single_precision) {
    work.reserve_float(in.n_layers, nb);
    solve_all_blocks<float>(in, options, out, work.data_float());
  } else {
    work.reserve(in.n_layers, nb);
    solve_all_blocks<double>(in, options, out, work.data());
  }
}

Status solve_columns(const ColumnBatch& in, const SolverOptions& options, LevelFluxes out,
                     Workspace& work) {
  if (auto m = options.validate(); !m.empty()) return {false, m};
  if (Status s = validate(in, out); !s.ok) return s;
  solve_columns_unchecked(in, options, out, work);
  return {};
}

}  // namespace solstrata::rt
