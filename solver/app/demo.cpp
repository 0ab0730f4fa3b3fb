#include "app/demo.hpp"

#include <array>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <ostream>
#include <vector>

#include "rt/two_stream.hpp"

namespace solstrata::app {
namespace {

// An invented six-layer column for one broad visible band (not a real site or measurement):
// Rayleigh-like scattering aloft, a thin absorbing ozone layer, and a hazy boundary layer.
struct DemoLayer {
  const char* what;
  double tau, omega, g;
};
constexpr std::array<DemoLayer, 6> kDemoColumn{{
    {"upper air (Rayleigh)", 0.010, 1.00, 0.00},
    {"ozone layer", 0.030, 0.40, 0.00},
    {"mid troposphere", 0.040, 0.99, 0.20},
    {"lower troposphere", 0.050, 0.98, 0.50},
    {"haze top", 0.120, 0.93, 0.68},
    {"boundary layer", 0.200, 0.90, 0.70},
}};
// Band-integrated TOA irradiance normal to the beam, W m-2 (an invented visible band).
constexpr double kDemoSolar = 530.0;

}  // namespace

int run_demo(const DemoOptions& o, std::ostream& os, std::ostream& err) {
  const double mu0 = std::cos(o.solar_zenith_deg * std::numbers::pi / 180.0);
  const std::size_t nl = kDemoColumn.size();
  std::vector<double> tau(nl), omega(nl), g(nl);
  for (std::size_t l = 0; l < nl; ++l) {
    tau[l] = kDemoColumn[l].tau;
    omega[l] = kDemoColumn[l].omega;
    g[l] = kDemoColumn[l].g;
  }
  const std::array<double, 1> m{mu0}, s{kDemoSolar}, a{o.albedo};
  std::vector<double> dir(nl + 1), dif(nl + 1), up(nl + 1);
  rt::ColumnBatch in{1, nl, tau, omega, g, m, s, a, a};
  rt::SolverOptions opt;
  opt.closure = o.closure;
  rt::Workspace work;
  const rt::Status st = rt::solve_columns(in, opt, {dir, dif, up}, work);
  if (!st.ok) {
    err << "solstrata demo: " << st.message << "\n";
    return 2;
  }
  char line[160];
  os << "solstrata demo column (invented, one visible band, " << kDemoSolar
     << " W m-2 at normal incidence)\n";
  std::snprintf(line, sizeof line, "closure %s, solar zenith %.1f deg, surface albedo %.2f\n\n",
                std::string(rt::to_string(o.closure)).c_str(), o.solar_zenith_deg, o.albedo);
  os << line;
  os << "level  layer above            tau    omega  g     direct_down  diffuse_down  diffuse_up   net_down\n";
  os << "                                                  W m-2        W m-2         W m-2        W m-2\n";
  for (std::size_t k = 0; k <= nl; ++k) {
    const DemoLayer* L = k == 0 ? nullptr : &kDemoColumn[k - 1];
    std::snprintf(line, sizeof line, "%5zu  %-21s %6s %6s %5s  %11.3f  %12.3f  %10.3f  %9.3f\n", k,
                  L ? L->what : "(top of atmosphere)",
                  L ? std::to_string(L->tau).substr(0, 5).c_str() : "",
                  L ? std::to_string(L->omega).substr(0, 4).c_str() : "",
                  L ? std::to_string(L->g).substr(0, 4).c_str() : "", dir[k], dif[k], up[k],
                  dir[k] + dif[k] - up[k]);
    os << line;
  }
  const double toa = dir[0];
  std::snprintf(line, sizeof line,
                "\nreflected to space %.1f%%, absorbed in the column %.1f%%, absorbed by the surface %.1f%%\n",
                100 * up[0] / toa, 100 * ((toa - up[0]) - (dir[nl] + dif[nl] - up[nl])) / toa,
                100 * (dir[nl] + dif[nl] - up[nl]) / toa);
  os << line;
  return 0;
}

}  // namespace solstrata::app
