// Discrete-ordinate reference solver (m = 0 component). Eigen is used only inside this file.
//
// Notation (Stamnes, Tsay, Wiscombe & Jayaweera 1988, Appl. Opt. 27, 2502; Chandrasekhar 1960,
// "Radiative Transfer", ch. III): optical depth t grows downward; N directions per hemisphere at
// the half-range Gauss-Legendre nodes mu_i with weights w_i (sum w_i = 1, "double Gauss",
// Sykes 1951). Intensities are carried as u = 2 pi I (azimuthal mean), so that a hemispheric flux
// is sum_i w_i mu_i u_i. u+ is the upward vector, u- the downward one. For F0 = 1 (irradiance
// normal to the beam) the equations of transfer are
//   M du+/dt =  (1 - a) u+ - b u- - Q+ exp(-t/mu0)
//  -M du-/dt =  (1 - a) u- - b u+ - Q- exp(-t/mu0)
// with M = diag(mu_i), a = (omega/2) P(+) W, b = (omega/2) P(-) W, W = diag(w_i),
// P(+)_ij = p(mu_i, mu_j), P(-)_ij = p(mu_i, -mu_j), p(x, y) = sum_l (2l + 1) chi_l P_l(x) P_l(y),
// Q+-_i = (omega/2) p(+-mu_i, -mu0).
#include "rt/discrete_ordinates.hpp"

// GCC 12 reports false "(may be) used uninitialized" warnings inside its own AVX-512 intrinsic
// headers when Eigen's vectorised kernels are inlined with -march=native. The headers are first
// included here, so the suppression covers exactly their lines and nothing of ours.
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wuninitialized"
#pragma GCC diagnostic ignored "-Wmaybe-uninitialized"
#endif
#include <Eigen/Dense>
#include <Eigen/Sparse>
#include <Eigen/SparseLU>
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC diagnostic pop
#endif
#include <algorithm>
#include <cmath>
#include <numbers>
#include <sstream>
#include <vector>

namespace solstrata::rt {
namespace {

using Mat = Eigen::MatrixXd;
using Vec = Eigen::VectorXd;

/// Below this k * (layer optical depth), the pair of modes exp(-k x), exp(+k x) is replaced by the
/// equivalent pair cosh(kx), sinh(kx)/k, which stays independent as k -> 0 (conservative layers,
/// where it becomes the constant and the linear-in-t solution). Above it the modes are scaled
/// exponentials (Stamnes & Conklin 1984), which never overflow. cosh(1) < 1.6 keeps both bounded.
constexpr double kModeSwitch = 1.0;

/// Half-width, in |1 - k mu0|, of the band around the removable singularity of the beam's
/// particular solution (k = 1/mu0). Inside the band the diffuse field is taken as the mean of the
/// solutions at mu0 (1 -+ 2 kSingularGap), which are at least kSingularGap away from the pole:
/// the mean of f(mu0 - h) and f(mu0 + h) differs from f(mu0) by h^2 f''/2 ~ 1e-9 mu0^2 f''.
/// Outside it the particular solution loses at most ~ eps / kSingularGap ~ 2e-11 to cancellation.
constexpr double kSingularGap = 1e-5;

/// Half-range Gauss-Legendre quadrature on (0, 1) with Legendre polynomials at its nodes.
struct Streams {
  int n = 0;  ///< directions per hemisphere (dimensionless)
  Vec mu;     ///< direction cosines mu_i in (0, 1), increasing
  Vec w;      ///< weights, sum 1 (dimensionless)
  Mat leg;    ///< leg(l, i) = P_l(mu_i), l = 0 .. 2n - 1
};

/// Gauss-Legendre nodes on [-1, 1] by Newton's method on P_n (initial guess of Tricomi's
/// asymptotic form), mapped to (0, 1): mu = (x + 1)/2, w = w_x/2 (Abramowitz & Stegun 25.4.29).
Streams make_streams(int n) {
  Streams s;
  s.n = n;
  s.mu.resize(n);
  s.w.resize(n);
  // P_n(x) and its derivative, by the three-term recurrence (Bonnet).
  const auto legendre_n = [n](double x, double& dp) {
    double p0 = 1.0, p1 = x;
    for (int l = 2; l <= n; ++l) {
      const double p2 = ((2.0 * l - 1.0) * x * p1 - (l - 1.0) * p0) / l;
      p0 = p1;
      p1 = p2;
    }
    dp = n * (x * p1 - p0) / (x * x - 1.0);
    return p1;
  };
  for (int i = 0; i < n; ++i) {
    double x = std::cos(std::numbers::pi * (i + 0.75) / (n + 0.5));
    double dp = 1.0;
    for (int it = 0; it < 100; ++it) {
      const double dx = legendre_n(x, dp) / dp;
      x -= dx;
      if (std::abs(dx) < 1e-16) break;
    }
    (void)legendre_n(x, dp);  // the derivative at the converged node, for the weight
    const int k = n - 1 - i;  // nodes come out decreasing in x; store increasing mu
    s.mu[k] = 0.5 * (x + 1.0);
    s.w[k] = 0.5 * 2.0 / ((1.0 - x * x) * dp * dp);
  }
  s.leg.resize(2 * n, n);
  for (int i = 0; i < n; ++i) {
    const double x = s.mu[i];
    s.leg(0, i) = 1.0;
    if (2 * n > 1) s.leg(1, i) = x;
    for (int l = 2; l < 2 * n; ++l) {
      s.leg(l, i) = ((2.0 * l - 1.0) * x * s.leg(l - 1, i) - (l - 1.0) * s.leg(l - 2, i)) / l;
    }
  }
  return s;
}

/// Legendre polynomials P_0..P_{count-1} at x (Bonnet's recurrence).
Vec legendre(double x, int count) {
  Vec p(count);
  p[0] = 1.0;
  if (count > 1) p[1] = x;
  for (int l = 2; l < count; ++l)
    p[l] = ((2.0 * l - 1.0) * x * p[l - 1] - (l - 1.0) * p[l - 2]) / l;
  return p;
}

/// One layer after delta-M scaling, with its homogeneous solution (independent of mu0).
struct LayerModes {
  double tau = 0.0;    ///< scaled optical depth (dimensionless)
  double omega = 0.0;  ///< scaled single-scattering albedo
  Vec chi;             ///< scaled phase-function Legendre moments, l = 0 .. 2N - 1
  Mat a, b;            ///< (omega/2) P(+) W and (omega/2) P(-) W
  Vec k;               ///< eigenvalues k_j >= 0 (per unit optical depth)
  Mat s, e;            ///< eigenvectors: S_j = u+ + u-, E_j = X^-1 M S_j (columns)
};

/// Delta-M scaling (Wiscombe 1977, J. Atmos. Sci. 34, 1408) of a Henyey-Greenstein layer
/// (moments chi_l = g^l, Henyey & Greenstein 1941): f = chi_2N = g^2N,
///   chi'_l = (chi_l - f)/(1 - f),  tau' = (1 - omega f) tau,  omega' = (1 - f) omega/(1 - omega
///   f).
/// Without delta-M, f = 0: the series is simply truncated after l = 2N - 1.
/// omega = 1 is kept exactly 1 (the quotient could round below it and lose conservation).
///
/// With a Rayleigh share f_R > 0 (see solve_columns_reference) the moments are the mixture
/// chi_l = f_R chi_l^R + (1 - f_R) g_a^l; f = chi_2N of the mixture, (1 - f_R) g_a^2N, since the
/// Rayleigh moments vanish beyond l = 2 < 2N. f_R = 0 takes the Henyey-Greenstein lines unchanged.
void scale_layer(double tau, double omega, double g, double f_r, double rho, int n, bool delta_m,
                 LayerModes& L) {
  const int nm = 2 * n;
  L.chi.resize(nm);
  double f = 0.0;
  if (f_r == 0.0) {
    f = delta_m ? std::pow(g, nm) : 0.0;
    double gl = 1.0;
    for (int l = 0; l < nm; ++l) {
      L.chi[l] = (gl - f) / (1.0 - f);
      gl *= g;
    }
  } else {
    constexpr double kMaxG = 1.0 - 1e-9;
    const double rest = 1.0 - f_r;
    const double ga = rest > 0.0 ? std::clamp(g / rest, -kMaxG, kMaxG) : 0.0;
    f = delta_m ? rest * std::pow(ga, nm) : 0.0;
    double gl = 1.0;
    for (int l = 0; l < nm; ++l) {
      const double rayleigh = l == 0 ? 1.0 : l == 2 ? rayleigh_moment2(rho) : 0.0;
      L.chi[l] = (f_r * rayleigh + rest * gl - f) / (1.0 - f);
      gl *= ga;
    }
  }
  L.chi[0] = 1.0;
  L.tau = (1.0 - omega * f) * tau;
  L.omega = omega == 1.0 ? 1.0 : std::min(1.0, (1.0 - f) * omega / (1.0 - omega * f));
}

/// Homogeneous solution of one layer (Stamnes & Swanson 1981, J. Atmos. Sci. 38, 387; Stamnes et
/// al. 1988): modes u+- = G+- exp(-k t). With S = G+ + G-, D = G+ - G-, X = 1 - a + b, Y = 1 - a -
/// b:
///   -k D = M^-1 Y S,   -k S = M^-1 X D   =>   (M^-1 X M^-1 Y) S = k^2 S,   D = -k X^-1 M S.
/// The N x N problem is symmetrised with T = W^(1/2) (T a T^-1 is symmetric): with
/// K = M^-1 (T X T^-1) M^-1 = L L^T (Cholesky) the matrix L^T (T Y T^-1) L is symmetric, its
/// eigenvectors z give S = T^-1 L z and real eigenvalues k^2 >= 0. Should K not be positive
/// definite (possible only without delta-M for g -> 1), the general eigensolver is used instead.
/// Conservative layer (omega = 1): Y has the exact null vector (1, ..., 1) (the phase function
/// integrates to 2 under the double-Gauss rule, exact for the degree 2N - 1 series); that mode is
/// set to k = 0, S = 1 exactly, so no round-off can leak energy.
void solve_modes(const Streams& st, LayerModes& L) {
  const int n = st.n;
  Mat pp = Mat::Zero(n, n), pm = Mat::Zero(n, n);
  for (int l = 0; l < 2 * n; ++l) {
    const double c = (2.0 * l + 1.0) * L.chi[l];
    const double sign = (l % 2 == 0) ? 1.0 : -1.0;  // P_l(-x) = (-1)^l P_l(x)
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        const double v = c * st.leg(l, i) * st.leg(l, j);
        pp(i, j) += v;
        pm(i, j) += sign * v;
      }
    }
  }
  const double h = 0.5 * L.omega;
  L.a = h * pp * st.w.asDiagonal();
  L.b = h * pm * st.w.asDiagonal();
  const Mat id = Mat::Identity(n, n);
  const Mat x = id - L.a + L.b;
  const Mat y = id - L.a - L.b;

  const Vec sq = st.w.cwiseSqrt();
  const Vec isq = sq.cwiseInverse();
  const Vec imu = st.mu.cwiseInverse();
  // Symmetric forms: T X T^-1 and T Y T^-1 (symmetrise away round-off).
  Mat xs = sq.asDiagonal() * x * isq.asDiagonal();
  Mat ys = sq.asDiagonal() * y * isq.asDiagonal();
  xs = 0.5 * (xs + xs.transpose()).eval();
  ys = 0.5 * (ys + ys.transpose()).eval();
  const Mat kmat = imu.asDiagonal() * xs * imu.asDiagonal();
  Eigen::LLT<Mat> llt(kmat);
  Vec lambda(n);
  if (llt.info() == Eigen::Success) {
    const Mat lower = llt.matrixL();
    Mat hmat = lower.transpose() * ys * lower;
    hmat = 0.5 * (hmat + hmat.transpose()).eval();
    Eigen::SelfAdjointEigenSolver<Mat> es(hmat);
    lambda = es.eigenvalues();
    L.s = isq.asDiagonal() * (lower * es.eigenvectors());
  } else {
    const Mat c = imu.asDiagonal() * x * imu.asDiagonal() * y;
    Eigen::EigenSolver<Mat> es(c);
    lambda = es.eigenvalues().real();
    L.s = es.eigenvectors().real();
  }
  if (L.omega == 1.0) {
    Eigen::Index jmin = 0;
    lambda.cwiseAbs().minCoeff(&jmin);
    lambda[jmin] = 0.0;
    L.s.col(jmin).setOnes();
  }
  L.k = lambda.cwiseMax(0.0).cwiseSqrt();
  for (int j = 0; j < n; ++j) L.s.col(j) /= L.s.col(j).cwiseAbs().maxCoeff();
  L.e = x.partialPivLu().solve(st.mu.asDiagonal() * L.s);
}

/// Particular solution for the beam, u+- = Z+- exp(-t/mu0) per unit F0 (Stamnes et al. 1988,
/// the m = 0 case), from substituting it into the equations of transfer:
///   [(1 - a) + M/mu0] Z+ - b Z- = Q+,   -b Z+ + [(1 - a) - M/mu0] Z- = Q-.
/// Singular where 1/mu0 is an eigenvalue k_j; the caller keeps mu0 away from that (kSingularGap).
Vec particular(const Streams& st, const LayerModes& L, double mu0) {
  const int n = st.n;
  Vec z = Vec::Zero(2 * n);
  if (L.omega == 0.0) return z;
  const Vec p0 = legendre(mu0, 2 * n);
  Vec q(2 * n);
  for (int i = 0; i < n; ++i) {
    double up = 0.0, down = 0.0;  // p(mu_i, -mu0) and p(-mu_i, -mu0)
    for (int l = 0; l < 2 * n; ++l) {
      const double v = (2.0 * l + 1.0) * L.chi[l] * st.leg(l, i) * p0[l];
      up += (l % 2 == 0) ? v : -v;
      down += v;
    }
    q[i] = 0.5 * L.omega * up;
    q[n + i] = 0.5 * L.omega * down;
  }
  Mat m(2 * n, 2 * n);
  const Mat id = Mat::Identity(n, n);
  const Vec dm = st.mu / mu0;
  m.topLeftCorner(n, n) = id - L.a;
  m.topLeftCorner(n, n).diagonal() += dm;
  m.topRightCorner(n, n) = -L.b;
  m.bottomLeftCorner(n, n) = -L.b;
  m.bottomRightCorner(n, n) = id - L.a;
  m.bottomRightCorner(n, n).diagonal() -= dm;
  return m.partialPivLu().solve(q);
}

/// Values of a layer's 2N homogeneous basis functions at its top and bottom (rows: u+ then u-).
/// For each k_j two functions (columns 2j, 2j + 1):
///  k tau > kModeSwitch: G(k) exp(-k x) and G(-k) exp(-k (tau - x)), x = t - t_top, with
///    G(+-k) = ((S -+ k E)/2, (S +- k E)/2)  (swapping u+ and u- turns k into -k);
///  otherwise their combinations (G(k) e^{-kx} + G(-k) e^{kx})/2 and (G(-k) e^{kx} - G(k)
///  e^{-kx})/(2k):
///    u+- = S cosh(kx)/2 +- k E sinh(kx)/2   and   u+- = S sinh(kx)/(2k) +- E cosh(kx)/2,
///  which at k = 0 are the constant (isotropic) and the linear-in-t solutions of a conservative
///  layer.
void mode_values(const LayerModes& L, Mat& top, Mat& bot) {
  const Eigen::Index n = L.k.size();
  top.resize(2 * n, 2 * n);
  bot.resize(2 * n, 2 * n);
  for (Eigen::Index j = 0; j < n; ++j) {
    const double k = L.k[j];
    const double y = k * L.tau;
    const auto s = L.s.col(j);
    const auto e = L.e.col(j);
    if (y > kModeSwitch) {
      const double ex = std::exp(-y);
      const Vec gp_up = 0.5 * (s - k * e), gp_dn = 0.5 * (s + k * e);
      top.block(0, 2 * j, n, 1) = gp_up;
      top.block(n, 2 * j, n, 1) = gp_dn;
      bot.block(0, 2 * j, n, 1) = ex * gp_up;
      bot.block(n, 2 * j, n, 1) = ex * gp_dn;
      top.block(0, 2 * j + 1, n, 1) = ex * gp_dn;
      top.block(n, 2 * j + 1, n, 1) = ex * gp_up;
      bot.block(0, 2 * j + 1, n, 1) = gp_dn;
      bot.block(n, 2 * j + 1, n, 1) = gp_up;
    } else {
      const double ch = std::cosh(y);
      const double sh = std::sinh(y);
      // sinh(y)/k = tau sinh(y)/y, -> tau as y -> 0 (series below 1e-4: error < 1e-17 relative)
      const double shk = y < 1e-4 ? L.tau * (1.0 + y * y / 6.0) : sh / k;
      top.block(0, 2 * j, n, 1) = 0.5 * s;
      top.block(n, 2 * j, n, 1) = 0.5 * s;
      bot.block(0, 2 * j, n, 1) = 0.5 * ch * s + 0.5 * k * sh * e;
      bot.block(n, 2 * j, n, 1) = 0.5 * ch * s - 0.5 * k * sh * e;
      top.block(0, 2 * j + 1, n, 1) = 0.5 * e;
      top.block(n, 2 * j + 1, n, 1) = -0.5 * e;
      bot.block(0, 2 * j + 1, n, 1) = 0.5 * shk * s + 0.5 * ch * e;
      bot.block(n, 2 * j + 1, n, 1) = 0.5 * shk * s - 0.5 * ch * e;
    }
  }
}

/// Diffuse fluxes at every level for one column, per unit F0, for a given mu0:
/// up[l] and down_scaled[l] (downward diffuse flux of the delta-M-scaled problem, i.e. without the
/// scaled beam). Returns false if the boundary-value solve fails.
///
/// Boundary-value problem (Stamnes et al. 1988), unknowns = 2N coefficients per layer:
///   top of atmosphere: u-(0) = 0 (no diffuse light enters);
///   each interface: u+- continuous;
///   surface (Lambertian, albedo A_dif for diffuse and A_dir for the beam, both isotropic):
///   u+_i = 2 A_dif sum_j w_j mu_j u-_j + 2 A_dir mu0 exp(-t_B/mu0)   (u = 2 pi I = 2 * flux).
/// The scaled beam at the surface meets the direct albedo, as in the two-stream kernel.
/// Sparse LU of the boundary-value system. Every column of a batch has the same layer count and
/// stream number, and every structural entry is stored (zeros included), so the fill-reducing
/// column ordering (analyzePattern) is computed once per call and reused.
struct SparseSolver {
  using Lu = Eigen::SparseLU<Eigen::SparseMatrix<double>>;
  Lu lu;
  bool analysed = false;
};

///
/// Pseudo-spherical beam: `mu_layer` (empty = plane-parallel) holds each layer's effective beam
/// cosine 1/m_l, already scaled like mu0 when the caller shifts mu0 off a singularity. Layer l is
/// then a plane-parallel layer lit at cosine mu_l by the direct flux at its top, mu0 F0
/// exp(-sum tau' m) on a horizontal surface, i.e. by the normal irradiance (mu0/mu_l) F0
/// exp(-sum tau' m); the scaled beam is tracked as that horizontal flux per unit mu0 F0.
bool diffuse_column(SparseSolver& sparse, const Streams& st, const std::vector<LayerModes>& layers,
                    const std::vector<Mat>& tops, const std::vector<Mat>& bots, double mu0,
                    const std::vector<double>& mu_layer, double alb_dir, double alb_dif,
                    std::vector<double>& up, std::vector<double>& down) {
  const int n = st.n;
  const int nn = 2 * n;
  const std::size_t nl = layers.size();
  const Eigen::Index size = static_cast<Eigen::Index>(nl) * nn;
  std::vector<Vec> zt(nl), zb(nl);
  std::vector<double> beam(nl + 1);  // scaled beam transmission exp(-t'/mu0) at each level
  beam[0] = 1.0;
  const bool slant = !mu_layer.empty();
  for (std::size_t l = 0; l < nl; ++l) {
    const double mu = slant ? mu_layer[l] : mu0;
    const double tl = std::exp(-layers[l].tau / mu);
    beam[l + 1] = beam[l] * tl;
    Vec z = particular(st, layers[l], mu);
    if (slant) z *= mu0 / mu;  // normal irradiance in the layer's frame, per unit F0
    zt[l] = beam[l] * z;
    zb[l] = beam[l + 1] * z;
  }
  std::vector<Eigen::Triplet<double>> trip;
  trip.reserve(static_cast<std::size_t>(size) * 2 * nn);
  Vec rhs = Vec::Zero(size);
  const auto add_row = [&](Eigen::Index row, const Mat& m, Eigen::Index mrow, Eigen::Index col0,
                           double factor) {
    for (int c = 0; c < nn; ++c) {
      const double v = factor * m(mrow, c);
      trip.emplace_back(row, col0 + c, v);  // zeros too: one sparsity pattern for all columns
    }
  };
  // top of atmosphere: downward components of layer 0 vanish
  for (int i = 0; i < n; ++i) {
    add_row(i, tops[0], n + i, 0, 1.0);
    rhs[i] = -zt[0][n + i];
  }
  // interfaces
  for (std::size_t l = 0; l + 1 < nl; ++l) {
    const Eigen::Index row0 = n + static_cast<Eigen::Index>(l) * nn;
    const Eigen::Index c0 = static_cast<Eigen::Index>(l) * nn;
    for (int r = 0; r < nn; ++r) {
      add_row(row0 + r, bots[l], r, c0, 1.0);
      add_row(row0 + r, tops[l + 1], r, c0 + nn, -1.0);
      rhs[row0 + r] = zt[l + 1][r] - zb[l][r];
    }
  }
  // surface
  {
    const Mat& bb = bots[nl - 1];
    const Vec& z = zb[nl - 1];
    const Eigen::Index row0 = size - n;
    const Eigen::Index c0 = size - nn;
    Eigen::RowVectorXd refl = Eigen::RowVectorXd::Zero(nn);  // 2 A_dif sum_j w_j mu_j u-_j
    double zrefl = 0.0;
    for (int j = 0; j < n; ++j) {
      refl += 2.0 * alb_dif * st.w[j] * st.mu[j] * bb.row(n + j);
      zrefl += 2.0 * alb_dif * st.w[j] * st.mu[j] * z[n + j];
    }
    for (int i = 0; i < n; ++i) {
      for (int c = 0; c < nn; ++c) {
        const double v = bb(i, c) - refl[c];
        trip.emplace_back(row0 + i, c0 + c, v);
      }
      rhs[row0 + i] = 2.0 * alb_dir * mu0 * beam[nl] - (z[i] - zrefl);
    }
  }
  Eigen::SparseMatrix<double> a(size, size);
  a.setFromTriplets(trip.begin(), trip.end());
  a.makeCompressed();
  if (!sparse.analysed) {
    sparse.lu.analyzePattern(a);
    sparse.analysed = true;
  }
  SparseSolver::Lu& lu = sparse.lu;
  lu.factorize(a);
  if (lu.info() != Eigen::Success) return false;
  const Vec coef = lu.solve(rhs);
  if (lu.info() != Eigen::Success) return false;

  const auto fluxes = [&](const Mat& m, const Vec& z, Eigen::Index c0, double& fu, double& fd) {
    const Vec u = m * coef.segment(c0, nn) + z;
    fu = 0.0;
    fd = 0.0;
    for (int i = 0; i < n; ++i) {
      fu += st.w[i] * st.mu[i] * u[i];
      fd += st.w[i] * st.mu[i] * u[n + i];
    }
  };
  up.assign(nl + 1, 0.0);
  down.assign(nl + 1, 0.0);
  for (std::size_t l = 0; l < nl; ++l) {
    fluxes(tops[l], zt[l], static_cast<Eigen::Index>(l) * nn, up[l], down[l]);
  }
  fluxes(bots[nl - 1], zb[nl - 1], size - nn, up[nl], down[nl]);
  return true;
}

std::string describe_failure(std::size_t problem, const char* what) {
  std::ostringstream os;
  os << "reference solver: problem " << problem << ": " << what;
  return os.str();
}

}  // namespace

double rayleigh_moment2(double depolarization) {
  // chi_2 = beta_2 / (2 l + 1) with beta_2 = (1 - rho_n)/(2 + rho_n) (see the declaration).
  return (1.0 - depolarization) / (5.0 * (2.0 + depolarization));
}

std::string ReferenceOptions::validate() const {
  if (streams < 4 || streams > 64 || streams % 2 != 0) {
    std::ostringstream os;
    os << "ReferenceOptions::streams = " << streams << " must be an even number from 4 to 64";
    return os.str();
  }
  if (!(depolarization >= 0.0 && depolarization <= 0.5)) {
    std::ostringstream os;
    os << "ReferenceOptions::depolarization = " << depolarization << " must be in [0, 0.5]";
    return os.str();
  }
  return {};
}

Status solve_columns_reference(const ColumnBatch& in, const ReferenceOptions& options,
                               LevelFluxes out) {
  if (auto m = options.validate(); !m.empty()) return {false, m};
  if (Status s = validate(in, out); !s.ok) return s;
  const std::size_t np = in.n_problems, nl = in.n_layers;
  if (np == 0) return {};
  const int n = options.streams / 2;
  const Streams st = make_streams(n);

  std::vector<LayerModes> layers(nl);
  SparseSolver sparse;
  std::vector<Mat> tops(nl), bots(nl);
  std::vector<double> up, down, up2, down2;
  std::vector<double> mu_layer, mu_a, mu_b;  // effective beam cosines 1/m (empty: plane-parallel)
  const bool slant = !in.beam_path.empty();
  std::vector<double> res_dir((nl + 1) * np), res_dif((nl + 1) * np), res_up((nl + 1) * np);

  for (std::size_t p = 0; p < np; ++p) {
    const double mu0 = in.mu0[p];
    const double f0 = in.solar[p];
    double gap = 1.0;  // min |1 - k mu| over all modes of the column
    if (slant) {
      mu_layer.resize(nl);
      for (std::size_t l = 0; l < nl; ++l) mu_layer[l] = 1.0 / in.beam_path[l * np + p];
    }
    for (std::size_t l = 0; l < nl; ++l) {
      const std::size_t i = l * np + p;
      const double mu = slant ? mu_layer[l] : mu0;
      const double f_r = in.rayleigh_fraction.empty() ? 0.0 : in.rayleigh_fraction[i];
      scale_layer(in.tau[i], in.omega[i], in.g[i], f_r, options.depolarization, n, options.delta_m,
                  layers[l]);
      solve_modes(st, layers[l]);
      mode_values(layers[l], tops[l], bots[l]);
      if (layers[l].omega > 0.0) {
        gap = std::min(gap, (1.0 - layers[l].k.array() * mu).abs().minCoeff());
      }
    }
    if (nl == 0) {
      res_dir[p] = mu0 * f0;  // no atmosphere: the surface reflects the beam
      res_up[p] = in.albedo_direct[p] * mu0 * f0;
      continue;
    }
    const double ad = in.albedo_direct[p], af = in.albedo_diffuse[p];
    bool ok;
    if (gap >= kSingularGap) {
      ok = diffuse_column(sparse, st, layers, tops, bots, mu0, mu_layer, ad, af, up, down);
    } else {
      // Removable singularity k_j = 1/mu0: interpolate linearly between two neighbours at least
      // kSingularGap from the pole, mu0 -+ h (or extrapolate from mu0 - 2h, mu0 - h when mu0 + h
      // would pass 1), h = 2 kSingularGap mu0. Error ~ h^2 f''/2 (see kSingularGap).
      const double h = 2.0 * kSingularGap * mu0;
      const double ma = mu0 + h <= 1.0 ? mu0 - h : mu0 - 2.0 * h;
      const double mb = ma + (mu0 + h <= 1.0 ? 2.0 * h : h);
      // With a slant path every layer's cosine moves by the same factor as mu0.
      mu_a = mu_layer;
      mu_b = mu_layer;
      for (double& m : mu_a) m *= ma / mu0;
      for (double& m : mu_b) m *= mb / mu0;
      ok = diffuse_column(sparse, st, layers, tops, bots, ma, mu_a, ad, af, up, down) &&
           diffuse_column(sparse, st, layers, tops, bots, mb, mu_b, ad, af, up2, down2);
      const double wb = (mu0 - ma) / (mb - ma);
      for (std::size_t l = 0; ok && l <= nl; ++l) {
        up[l] += wb * (up2[l] - up[l]);
        down[l] += wb * (down2[l] - down[l]);
      }
    }
    if (!ok) return {false, describe_failure(p, "the boundary-value system is singular")};

    const double s = mu0 * f0;
    // Unscaled and scaled optical depth above the level; along the slant path (sum tau m) when
    // beam_path is given (m = slant factor), vertical then divided by mu0 otherwise.
    double t_true = 0.0, t_scaled = 0.0;
    const double div = slant ? 1.0 : mu0;
    for (std::size_t l = 0; l <= nl; ++l) {
      if (l > 0) {
        const double m = slant ? in.beam_path[(l - 1) * np + p] : 1.0;
        t_true += in.tau[(l - 1) * np + p] * m;
        t_scaled += layers[l - 1].tau * m;
      }
      const double direct = s * std::exp(-t_true / div);
      const double scaled_beam = s * std::exp(-t_scaled / div);
      const std::size_t o = l * np + p;
      res_dir[o] = direct;
      // Up and scaled-diffuse down are fluxes per unit F0 on a horizontal surface.
      res_up[o] = f0 * up[l];
      res_dif[o] = (scaled_beam + f0 * down[l]) - direct;
      if (!std::isfinite(res_up[o]) || !std::isfinite(res_dif[o])) {
        return {false, describe_failure(p, "non-finite flux (please report this input)")};
      }
    }
  }
  std::copy(res_dir.begin(), res_dir.end(), out.direct_down.begin());
  std::copy(res_dif.begin(), res_dif.end(), out.diffuse_down.begin());
  std::copy(res_up.begin(), res_up.end(), out.diffuse_up.begin());
  return {};
}

}  // namespace solstrata::rt
