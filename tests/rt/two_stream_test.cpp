#include "rt/two_stream.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

using namespace solstrata::rt;

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();

struct Layer {
  double tau, omega, g;
};

struct Column {
  std::vector<double> dir, dif, up;  // [level]
  double incident;                   // mu0 * solar
  double top_up() const { return up.front(); }
  double bottom_down() const { return dir.back() + dif.back(); }
};

Column solve(const std::vector<Layer>& layers, double mu0, double albedo_dir, double albedo_dif,
             Closure closure, double solar = 1.0) {
  const std::size_t nl = layers.size();
  std::vector<double> tau, omega, g;
  for (const Layer& l : layers) {
    tau.push_back(l.tau);
    omega.push_back(l.omega);
    g.push_back(l.g);
  }
  std::vector<double> m{mu0}, s{solar}, ad{albedo_dir}, af{albedo_dif};
  Column c{std::vector<double>(nl + 1), std::vector<double>(nl + 1), std::vector<double>(nl + 1),
           mu0 * solar};
  SolverOptions opt;
  opt.closure = closure;
  Workspace w;
  const Status st = solve_columns({1, nl, tau, omega, g, m, s, ad, af}, opt, {c.dir, c.dif, c.up}, w);
  REQUIRE(st.ok);
  return c;
}

// Single-layer closed forms of Meador & Weaver (1980) as transcribed in shared/checkvalues.md
// section 2 ("[memory, numerically checked]"): an implementation independent of the kernel's
// cancellation-free rewriting, valid away from k mu0 = 1.
struct ClosedForm {
  double r, t_diff, r_dif, t_dif;
};
ClosedForm meador_weaver(Closure c, double tau, double w, double g, double mu0) {
  const Gammas G = kernel_gammas(c, w, g, mu0);  // the gammas the kernel uses (gamma2 >= 0)
  const double k = std::sqrt(G.g1 * G.g1 - G.g2 * G.g2);
  const double a1 = G.g1 * G.g4 + G.g2 * G.g3, a2 = G.g1 * G.g3 + G.g2 * G.g4;
  const double e = std::exp(-k * tau), t0 = std::exp(-tau / mu0);
  const double D = (k + G.g1) + (k - G.g1) * e * e;
  const double q = (1 - k * k * mu0 * mu0) * D;
  ClosedForm f{};
  f.r = w * ((1 - k * mu0) * (a2 + k * G.g3) - (1 + k * mu0) * (a2 - k * G.g3) * e * e -
             2 * (k * G.g3 - a2 * k * mu0) * e * t0) / q;
  f.t_diff = -w * ((1 + k * mu0) * (a1 + k * G.g4) * t0 - (1 - k * mu0) * (a1 - k * G.g4) * e * e * t0 -
                   2 * (k * G.g4 + a1 * k * mu0) * e) / q;
  f.r_dif = G.g2 * (1 - e * e) / D;
  f.t_dif = 2 * k * e / D;
  return f;
}

const std::vector<double> kTaus{0.0, 1e-8, 1e-4, 0.01, 0.3, 1.0, 5.0, 32.0, 1e3, 1e4};
const std::vector<double> kGs{-0.9, -0.3, 0.0, 0.5, 0.85, 0.999};
const std::vector<double> kMus{0.01, 0.1, 0.37, 0.5, 0.8, 1.0};

}  // namespace

TEST_CASE("single layer matches the regression values computed from the Meador-Weaver closed forms", "[rt]") {
  // shared/checkvalues.md section 2, "Regression values [computed from the forms above]":
  // one layer, g = 0, black surface, tau = 1, mu0 = 0.5; columns R, T_diff, T_dir, R_dif, T_dif.
  struct Case {
    Closure c;
    double w, r, t_diff, t_dir, r_dif, t_dif;
  };
  const Case cases[] = {
      {Closure::eddington, 0.9, 0.397648, 0.295206, 0.135335, 0.333666, 0.488537},
      {Closure::eddington, 0.5, 0.160727, 0.107778, 0.135335, 0.092380, 0.291091},
      {Closure::quadrature, 0.9, 0.406118, 0.295087, 0.135335, 0.380080, 0.464087},
      {Closure::pifm, 0.9, 0.398351, 0.294030, 0.135335, 0.341554, 0.480778},
      {Closure::eddington, 1.0, 0.490333, 0.374332, 0.135335, 3.0 / 7, 4.0 / 7},
      {Closure::pifm, 1.0, 0.490333, 0.374332, 0.135335, 3.0 / 7, 4.0 / 7},
      {Closure::quadrature, 1.0, 0.495142, 0.369523, 0.135335, 0.464102, 0.535898},
      // delta-Eddington is Eddington at g = 0 (delta scaling is the identity there).
      {Closure::delta_eddington, 0.9, 0.397648, 0.295206, 0.135335, 0.333666, 0.488537},
  };
  for (const Case& k : cases) {
    const LayerResponse r = solve_layer(1.0, k.w, 0.0, 0.5, k.c);
    INFO(to_string(k.c) << " omega " << k.w);
    CHECK(r.r_beam == Approx(k.r).margin(1e-6));
    CHECK(r.t_beam == Approx(k.t_diff).margin(1e-6));
    CHECK(r.t_direct == Approx(k.t_dir).margin(1e-6));
    CHECK(r.r_diffuse == Approx(k.r_dif).margin(1e-6));
    CHECK(r.t_diffuse == Approx(k.t_dif).margin(1e-6));
  }
}

TEST_CASE("single layer agrees with the Meador-Weaver closed forms over a grid", "[rt]") {
  for (Closure c : {Closure::eddington, Closure::quadrature, Closure::hemispheric_mean, Closure::pifm}) {
    for (double tau : {0.05, 0.5, 2.0, 10.0}) {
      for (double w : {0.0, 0.2, 0.75, 0.99}) {
        for (double g : {-0.5, 0.0, 0.6, 0.9}) {
          for (double mu0 : {0.05, 0.3, 0.7, 1.0}) {
            const Gammas G = kernel_gammas(c, w, g, mu0);
            const double k = std::sqrt(G.g1 * G.g1 - G.g2 * G.g2);
            if (std::abs(1 - k * mu0) < 1e-3) continue;  // closed form cancels badly there
            const ClosedForm f = meador_weaver(c, tau, w, g, mu0);
            const LayerResponse r = solve_layer(tau, w, g, mu0, c);
            INFO(to_string(c) << " tau " << tau << " omega " << w << " g " << g << " mu0 " << mu0);
            CHECK(r.r_beam == Approx(f.r).margin(1e-10));
            CHECK(r.t_beam == Approx(f.t_diff).margin(1e-10));
            CHECK(r.r_diffuse == Approx(f.r_dif).margin(1e-12));
            CHECK(r.t_diffuse == Approx(f.t_dif).margin(1e-12));
          }
        }
      }
    }
  }
}

TEST_CASE("conservative layer matches the omega = 1 closed forms", "[rt]") {
  // shared/checkvalues.md section 2: R(mu0) = [g1 tau + (g3 - g1 mu0)(1 - t0)]/(1 + g1 tau),
  // R_dif = g1 tau/(1 + g1 tau) (Meador & Weaver 1980, conservative limit).
  for (Closure c : {Closure::eddington, Closure::quadrature, Closure::hemispheric_mean, Closure::pifm}) {
    for (double tau : {1e-6, 0.1, 1.0, 30.0, 1e4}) {
      for (double g : {0.0, 0.4, 0.8}) {
        for (double mu0 : {0.05, 0.5, 1.0}) {
          const Gammas G = gammas(c, 1.0, g, mu0);
          const double t0 = std::exp(-tau / mu0);
          const LayerResponse r = solve_layer(tau, 1.0, g, mu0, c);
          CHECK(r.r_beam == Approx((G.g1 * tau + (G.g3 - G.g1 * mu0) * (1 - t0)) / (1 + G.g1 * tau)).margin(1e-13));
          CHECK(r.r_diffuse == Approx(G.g1 * tau / (1 + G.g1 * tau)).margin(1e-13));
          CHECK(r.r_diffuse + r.t_diffuse == Approx(1.0).margin(4 * kEps));
        }
      }
    }
  }
}

TEST_CASE("semi-infinite layer approaches the closed-form semi-infinite reflectance", "[rt]") {
  // shared/checkvalues.md section 2: R_inf(mu0) = omega (alpha2 + k g3)/[(1 + k mu0)(k + g1)],
  // R_dif,inf = g2/(g1 + k).
  for (Closure c : kAllClosures) {
    if (c == Closure::delta_eddington) continue;  // same formula after scaling; covered by eddington
    for (double w : {0.3, 0.9, 0.999}) {
      for (double mu0 : {0.2, 0.6, 1.0}) {
        const double g = 0.5;
        const Gammas G = kernel_gammas(c, w, g, mu0);
        const double k = std::sqrt(G.g1 * G.g1 - G.g2 * G.g2);
        const double a2 = G.g1 * G.g3 + G.g2 * G.g4;
        const LayerResponse r = solve_layer(1e4, w, g, mu0, c);
        CHECK(r.r_beam == Approx(w * (a2 + k * G.g3) / ((1 + k * mu0) * (k + G.g1))).margin(1e-12));
        CHECK(r.r_diffuse == Approx(G.g2 / (G.g1 + k)).margin(1e-12));
      }
    }
  }
}

TEST_CASE("two-stream semi-infinite albedo is close to Chandrasekhar's exact isotropic result", "[rt]") {
  // Exact plane albedo A(mu0) = 1 - H(mu0) sqrt(1 - omega) for a semi-infinite isotropic medium
  // (Chandrasekhar 1960, Radiative Transfer); values computed from the H-function in
  // shared/checkvalues.md section 3. Two-stream methods are accurate to a few per cent in
  // albedo for isotropic scattering (King & Harshvardhan 1986, J. Atmos. Sci. 43, 784, from
  // memory); we require 0.03 absolute and measure it here.
  struct Case {
    double w, mu0, exact;
  };
  const Case cases[] = {{0.9, 1.0, 0.4149475}, {0.9, 0.5, 0.5079389}, {0.5, 1.0, 0.1152259},
                        {0.5, 0.5, 0.1601444}};
  for (Closure c : kAllClosures) {
    for (const Case& k : cases) {
      const LayerResponse r = solve_layer(1e4, k.w, 0.0, k.mu0, c);
      INFO(to_string(c) << " omega " << k.w << " mu0 " << k.mu0 << " two-stream " << r.r_beam);
      CHECK(std::abs(r.r_beam - k.exact) < 0.03);
    }
  }
  // Conservative semi-infinite medium reflects everything (exact).
  for (Closure c : kAllClosures) CHECK(solve_layer(1e4, 1.0, 0.0, 0.5, c).r_beam > 1 - 2e-4);
}

TEST_CASE("conservation: omega = 1 over a black surface returns all incident light", "[rt]") {
  // Exact limit (shared/checkvalues.md section 4): R + T = 1 to round-off.
  for (Closure c : kAllClosures) {
    double worst = 0.0;
    for (double tau : kTaus) {
      for (double g : kGs) {
        for (double mu0 : kMus) {
          const Column one = solve({{tau, 1.0, g}}, mu0, 0.0, 0.0, c, 1361.0);
          worst = std::max(worst, std::abs(one.top_up() + one.bottom_down() - one.incident) / one.incident);
          const Column many = solve({{tau, 1.0, g}, {0.0, 1.0, 0.0}, {tau * 0.1, 1.0, -g},
                                     {0.3, 1.0, 0.85}, {tau * 2, 1.0, g}},
                                    mu0, 0.0, 0.0, c, 1361.0);
          worst = std::max(worst, std::abs(many.top_up() + many.bottom_down() - many.incident) / many.incident);
        }
      }
    }
    INFO(to_string(c) << " worst relative imbalance " << worst);
    CHECK(worst <= 1e-12);
  }
}

TEST_CASE("white surface under a conservative column sends everything back to space", "[rt]") {
  for (Closure c : kAllClosures) {
    for (double tau : {0.0, 0.2, 3.0, 100.0}) {
      for (double mu0 : {0.05, 0.5, 1.0}) {
        const Column col = solve({{tau, 1.0, 0.7}, {tau / 3, 1.0, 0.0}}, mu0, 1.0, 1.0, c);
        INFO(to_string(c) << " tau " << tau << " mu0 " << mu0);
        CHECK(col.top_up() == Approx(col.incident).epsilon(1e-12));
        // Net flux vanishes at every level.
        for (std::size_t i = 0; i < col.up.size(); ++i)
          CHECK(col.dir[i] + col.dif[i] - col.up[i] == Approx(0.0).margin(1e-11));
      }
    }
  }
}

TEST_CASE("pure absorption follows Beer-Lambert with no diffuse light", "[rt]") {
  for (Closure c : kAllClosures) {
    for (double mu0 : kMus) {
      const Column col = solve({{0.3, 0.0, 0.5}, {1.2, 0.0, 0.0}, {0.05, 0.0, -0.4}}, mu0, 0.0, 0.0, c, 1000.0);
      const double cum[] = {0.0, 0.3, 1.5, 1.55};
      for (std::size_t i = 0; i < 4; ++i) {
        CHECK(col.dir[i] == Approx(1000.0 * mu0 * std::exp(-cum[i] / mu0)).epsilon(1e-14).margin(1e-300));
        CHECK(col.dif[i] == 0.0);
        CHECK(col.up[i] == 0.0);
      }
    }
  }
}

TEST_CASE("layer splitting: N identical sublayers equal one layer", "[rt]") {
  // Exact invariance of the plane-parallel problem (shared/checkvalues.md section 4).
  for (Closure c : kAllClosures) {
    for (double tau : {0.02, 0.7, 6.0}) {
      for (double w : {0.5, 0.95, 1.0}) {
        for (double g : {0.0, 0.75}) {
          for (double mu0 : {0.1, 0.6}) {
            const Column one = solve({{tau, w, g}}, mu0, 0.3, 0.2, c);
            for (int n : {2, 7, 40}) {
              const Column cut = solve(std::vector<Layer>(n, {tau / n, w, g}), mu0, 0.3, 0.2, c);
              INFO(to_string(c) << " tau " << tau << " omega " << w << " g " << g << " mu0 " << mu0 << " n " << n);
              CHECK(cut.top_up() == Approx(one.top_up()).margin(1e-10));
              CHECK(cut.dir.back() == Approx(one.dir.back()).margin(1e-10));
              CHECK(cut.dif.back() == Approx(one.dif.back()).margin(1e-10));
              CHECK(cut.up.back() == Approx(one.up.back()).margin(1e-10));
            }
          }
        }
      }
    }
  }
}

TEST_CASE("thin layer reflects and transmits like single scattering", "[rt]") {
  // Exact single scattering (shared/checkvalues.md section 4): R -> omega tau gamma3 / mu0, which
  // for g = 0 is the exact isotropic single-scattering result omega tau / (2 mu0); likewise
  // T_diff -> omega tau gamma4 / mu0. Relative error O(tau / mu0).
  for (Closure c : kAllClosures) {
    for (double w : {0.2, 1.0}) {
      for (double g : {0.0, 0.6}) {
        for (double mu0 : {0.2, 1.0}) {
          const double tau = 1e-7;
          const LayerResponse r = solve_layer(tau, w, g, mu0, c);
          // The closure sees the delta-scaled omega', g', tau' (identity for g = 0).
          const double f = (c == Closure::delta_eddington) ? g * g : 0.0;
          const double ws = (1 - f) * w / (1 - w * f), ts = (1 - w * f) * tau;
          const double gs = (c == Closure::delta_eddington) ? g / (1 + g) : g;
          const Gammas G = kernel_gammas(c, ws, gs, mu0);
          CHECK(r.r_beam == Approx(ws * ts * G.g3 / mu0).epsilon(1e-5));
          CHECK(r.t_beam == Approx(ws * ts * G.g4 / mu0).epsilon(1e-5));
          if (g == 0.0) CHECK(r.r_beam == Approx(w * tau / (2 * mu0)).epsilon(1e-5));
        }
      }
    }
  }
}

TEST_CASE("the beam response is continuous across the removable singularity k mu0 = 1", "[rt]") {
  // Eddington, omega = 0.5, g = 0, tau = 1: gamma1 = 5/4, gamma2 = 1/4 (Meador & Weaver 1980
  // Table 1), k = sqrt(3/2) = 1.224745, singular at mu0* = 1/k = 0.8164966. The limit
  // R = 0.122913, T = 0.095408 is computed from the Meador-Weaver closed forms in 50-digit
  // arithmetic (mpmath), as the mean of mu0* -+ 1e-20. (omega = 0.1 would be a strongly
  // absorbing layer, where gamma2 is limited to 0 and the pole cancels.)
  const Gammas G = kernel_gammas(Closure::eddington, 0.5, 0.0, 0.6);
  const double k = std::sqrt(G.g1 * G.g1 - G.g2 * G.g2);
  CHECK(k == Approx(1.2247449).margin(1e-7));
  const double mu_star = 1.0 / k;
  CHECK(mu_star == Approx(0.8164966).margin(1e-7));
  const LayerResponse at = solve_layer(1.0, 0.5, 0.0, mu_star, Closure::eddington);
  CHECK(at.r_beam == Approx(0.1229131).margin(1e-7));
  CHECK(at.t_beam == Approx(0.0954076).margin(1e-7));
  // Lipschitz continuity through the band: |f(mu*+h) - f(mu*)| <= C |h| with C = 1 well
  // above the slope (|dR/dmu0| ~ 0.1 here) but far below a jump.
  for (double h : {1e-9, 1e-7, 3e-6, 6e-6, 1e-5, 1e-4, 1e-3}) {
    for (double s : {-1.0, 1.0}) {
      const LayerResponse r = solve_layer(1.0, 0.5, 0.0, mu_star + s * h, Closure::eddington);
      INFO("h " << s * h);
      CHECK(std::abs(r.r_beam - at.r_beam) <= 1.0 * h + 1e-10);
      CHECK(std::abs(r.t_beam - at.t_beam) <= 1.0 * h + 1e-10);
    }
  }
  // The same through the batch kernel, at a problem sitting exactly on the singularity.
  const Column col = solve({{1.0, 0.5, 0.0}}, mu_star, 0.0, 0.0, Closure::eddington);
  CHECK(col.top_up() / col.incident == Approx(0.1229131).margin(1e-7));
  CHECK(col.dif.back() / col.incident == Approx(0.0954076).margin(1e-7));
}

TEST_CASE("surface coupling matches the adding formula for one layer", "[rt]") {
  // Exact surface adding (shared/checkvalues.md section 4), with separate direct and diffuse
  // albedos: R_tot = R + (T_dir A_dir + T_diff A_dif) T_dif / (1 - A_dif R_dif).
  for (Closure c : kAllClosures) {
    for (double tau : {0.1, 2.0}) {
      for (double mu0 : {0.3, 0.9}) {
        const double ad = 0.35, af = 0.6;
        const LayerResponse r = solve_layer(tau, 0.9, 0.6, mu0, c);
        const double want = r.r_beam + (r.t_direct * ad + r.t_beam * af) * r.t_diffuse / (1 - af * r.r_diffuse);
        const Column col = solve({{tau, 0.9, 0.6}}, mu0, ad, af, c);
        CHECK(col.top_up() / col.incident == Approx(want).margin(1e-13));
      }
    }
  }
}

TEST_CASE("every valid input gives finite fluxes", "[rt]") {
  for (Closure c : kAllClosures) {
    for (double tau : kTaus) {
      for (double w : {0.0, 0.5, 0.999999, 1.0}) {
        for (double g : kGs) {
          for (double mu0 : kMus) {
            for (double a : {0.0, 1.0}) {
              const Column col = solve({{tau, w, g}, {tau * 0.5, 1.0, 0.0}, {0.0, w, g}}, mu0, a, a, c, 1361.0);
              bool finite = true;
              for (std::size_t i = 0; i < col.up.size(); ++i)
                finite = finite && std::isfinite(col.dir[i]) && std::isfinite(col.dif[i]) && std::isfinite(col.up[i]);
              INFO(to_string(c) << " tau " << tau << " omega " << w << " g " << g << " mu0 " << mu0 << " albedo " << a);
              CHECK(finite);
              if (c == Closure::delta_eddington) {
                // Delta-Eddington stays physical: nothing negative, nothing more than came in.
                CHECK(col.top_up() >= -1e-12 * col.incident);
                CHECK(col.top_up() <= col.incident * (1 + 1e-12));
                CHECK(col.dif.back() >= -1e-12 * col.incident);
              }
            }
          }
        }
      }
    }
  }
}

TEST_CASE("quadrature reproduces its known failure for thin forward-scattering layers at high sun", "[rt]") {
  // shared/checkvalues.md section 2 "Known weakness" [computed against an exact reference]: the
  // quadrature closure gives R < 0 at tau = 1, omega = 1, g = 0.75, mu0 = 1, while
  // delta-Eddington stays positive. A faithful closure must show this.
  CHECK(solve_layer(1.0, 1.0, 0.75, 1.0, Closure::quadrature).r_beam < 0.0);
  CHECK(solve_layer(1.0, 1.0, 0.75, 1.0, Closure::delta_eddington).r_beam > 0.0);
}

TEST_CASE("delta scaling is the identity at g = 0 and at omega = 0", "[rt]") {
  // shared/checkvalues.md section 4.
  for (double tau : {0.1, 3.0}) {
    for (double mu0 : {0.3, 1.0}) {
      // Identity up to round-off: the beam terms involve cancellation of O(1) products.
      const LayerResponse a = solve_layer(tau, 0.8, 0.0, mu0, Closure::delta_eddington);
      const LayerResponse b = solve_layer(tau, 0.8, 0.0, mu0, Closure::eddington);
      CHECK(a.r_beam == Approx(b.r_beam).epsilon(1e-13));
      CHECK(a.t_beam == Approx(b.t_beam).epsilon(1e-13));
      const LayerResponse c = solve_layer(tau, 0.0, 0.7, mu0, Closure::delta_eddington);
      CHECK(c.t_direct == Approx(std::exp(-tau / mu0)).epsilon(4 * kEps));
      CHECK(c.r_beam == 0.0);
    }
  }
}

TEST_CASE("a batch gives each problem the answer it gets alone, whatever the block size", "[rt]") {
  const std::size_t np = 203, nl = 9;
  std::vector<double> tau(np * nl), omega(np * nl), g(np * nl), mu0(np), sol(np), ad(np), af(np);
  for (std::size_t p = 0; p < np; ++p) {
    mu0[p] = 0.02 + 0.98 * double((p * 37) % np) / double(np);
    sol[p] = 1.0 + double(p);
    ad[p] = double(p % 5) * 0.2;
    af[p] = double(p % 3) * 0.4;
    for (std::size_t l = 0; l < nl; ++l) {
      tau[l * np + p] = 0.01 * double((p + 3 * l) % 17) * double(l + 1);
      omega[l * np + p] = double(10 - (p + l) % 11) / 10.0;
      g[l * np + p] = -0.5 + 0.13 * double((2 * p + l) % 11);
    }
  }
  const ColumnBatch in{np, nl, tau, omega, g, mu0, sol, ad, af};
  std::vector<double> d1((nl + 1) * np), f1((nl + 1) * np), u1((nl + 1) * np);
  std::vector<double> d2 = d1, f2 = f1, u2 = u1;
  Workspace w;
  SolverOptions o;
  const Status st = solve_columns(in, o, {d1, f1, u1}, w);
  INFO(st.message);
  REQUIRE(st.ok);
  o.block_size = 7;
  REQUIRE(solve_columns(in, o, {d2, f2, u2}, w).ok);
  for (std::size_t i = 0; i < d1.size(); ++i) {
    CHECK(d1[i] == Approx(d2[i]).epsilon(1e-14).margin(1e-14));
    CHECK(f1[i] == Approx(f2[i]).epsilon(1e-14).margin(1e-14));
    CHECK(u1[i] == Approx(u2[i]).epsilon(1e-14).margin(1e-14));
  }
  for (std::size_t p : {std::size_t{0}, std::size_t{101}, np - 1}) {
    std::vector<Layer> layers;
    for (std::size_t l = 0; l < nl; ++l) layers.push_back({tau[l * np + p], omega[l * np + p], g[l * np + p]});
    const Column alone = solve(layers, mu0[p], ad[p], af[p], Closure::delta_eddington, sol[p]);
    for (std::size_t l = 0; l <= nl; ++l) {
      CHECK(alone.dir[l] == Approx(d1[l * np + p]).epsilon(1e-14).margin(1e-14));
      CHECK(alone.dif[l] == Approx(f1[l * np + p]).epsilon(1e-14).margin(1e-14));
      CHECK(alone.up[l] == Approx(u1[l * np + p]).epsilon(1e-14).margin(1e-14));
    }
  }
}

TEST_CASE("invalid input is rejected with a message naming the value", "[rt]") {
  std::vector<double> tau{0.1}, omega{0.9}, g{0.5}, mu0{0.5}, sol{1.0}, ad{0.1}, af{0.1};
  std::vector<double> d(2), f(2), u(2);
  Workspace w;
  const auto run = [&] {
    return solve_columns({1, 1, tau, omega, g, mu0, sol, ad, af}, {}, {d, f, u}, w);
  };
  REQUIRE(run().ok);
  const auto refused = [&](std::vector<double>& v, double bad, const char* name) {
    const double keep = v[0];
    v[0] = bad;
    const Status s = run();
    v[0] = keep;
    INFO(name << " = " << bad << ": " << s.message);
    CHECK_FALSE(s.ok);
    CHECK(s.message.find(name) != std::string::npos);
  };
  refused(omega, 1.0000001, "omega");
  refused(omega, -0.1, "omega");
  refused(g, 1.0, "g");
  refused(g, -1.0, "g");
  refused(tau, -1e-9, "tau");
  refused(tau, std::nan(""), "tau");
  refused(tau, std::numeric_limits<double>::infinity(), "tau");
  refused(mu0, 0.0, "mu0");
  refused(mu0, 1.01, "mu0");
  refused(ad, 1.5, "albedo_direct");
  refused(af, -0.5, "albedo_diffuse");
  refused(sol, -1.0, "solar");
  std::vector<double> short_out(1);
  CHECK_FALSE(solve_columns({1, 1, tau, omega, g, mu0, sol, ad, af}, {}, {short_out, f, u}, w).ok);
  CHECK_THROWS_AS(solve_layer(0.1, 1.2, 0.0, 0.5), std::invalid_argument);
  CHECK_THROWS_AS(solve_layer(0.1, 0.5, 0.0, 0.0), std::invalid_argument);
  SolverOptions bad;
  bad.block_size = 0;
  CHECK_FALSE(solve_columns({1, 1, tau, omega, g, mu0, sol, ad, af}, bad, {d, f, u}, w).ok);
}
