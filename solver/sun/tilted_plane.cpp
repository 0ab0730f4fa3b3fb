#include "sun/tilted_plane.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

namespace solstrata::sun {
namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

/// Perez et al. (1990), Solar Energy 44, 271, table 6: upper edge of each sky-clearness bin and
/// f11, f12, f13, f21, f22, f23 (published; transcribed in checkvalues section 14).
struct PerezRow {
  double eps_upper, f11, f12, f13, f21, f22, f23;
};
constexpr std::array<PerezRow, 8> kPerez = {{
    {1.065, -0.008, 0.588, -0.062, -0.060, 0.072, -0.022},
    {1.230, 0.130, 0.683, -0.151, -0.019, 0.066, -0.029},
    {1.500, 0.330, 0.487, -0.221, 0.055, -0.064, -0.026},
    {1.950, 0.568, 0.187, -0.295, 0.109, -0.152, -0.014},
    {2.800, 0.873, -0.392, -0.362, 0.226, -0.462, 0.001},
    {4.500, 1.132, -1.237, -0.412, 0.288, -0.823, 0.056},
    {6.200, 1.060, -1.600, -0.359, 0.264, -1.127, 0.131},
    {1e300, 0.678, -0.327, -0.250, 0.156, -1.377, 0.251},
}};

}  // namespace

double angle_of_incidence_deg(double zenith_deg, double sun_azimuth_deg, double tilt_deg, double plane_azimuth_deg) {
  const double z = zenith_deg * kDeg, b = tilt_deg * kDeg;
  const double c = std::cos(z) * std::cos(b) + std::sin(z) * std::sin(b) * std::cos((sun_azimuth_deg - plane_azimuth_deg) * kDeg);
  return std::acos(std::clamp(c, -1.0, 1.0)) / kDeg;
}

std::string_view to_string(SkyDiffuseModel m) {
  switch (m) {
    case SkyDiffuseModel::isotropic: return "isotropic";
    case SkyDiffuseModel::hay_davies: return "hay_davies";
    case SkyDiffuseModel::perez: return "perez";
  }
  return "unknown";
}

std::optional<SkyDiffuseModel> parse_sky_diffuse_model(std::string_view name) {
  for (SkyDiffuseModel m : {SkyDiffuseModel::isotropic, SkyDiffuseModel::hay_davies, SkyDiffuseModel::perez})
    if (to_string(m) == name) return m;
  return std::nullopt;
}

PlaneIrradiance plane_of_array(const PlaneInputs& in, SkyDiffuseModel model) {
  PlaneIrradiance out;
  const double cb = std::cos(in.tilt_deg * kDeg), sb = std::sin(in.tilt_deg * kDeg);
  const double a = std::max(0.0, std::cos(in.aoi_deg * kDeg));
  const bool up = in.zenith_deg < 90.0;
  out.beam = up ? in.dni * a : 0.0;
  out.ground = in.albedo * in.ghi * (1.0 - cb) / 2.0;
  const double iso = in.dhi * (1.0 + cb) / 2.0;
  if (!(in.dhi > 0.0) || model == SkyDiffuseModel::isotropic || !up) {
    out.sky_diffuse = std::max(0.0, iso);
    return out;
  }
  const double c = std::max(std::cos(85.0 * kDeg), std::cos(in.zenith_deg * kDeg));
  if (model == SkyDiffuseModel::hay_davies) {
    const double ai = std::clamp(in.dni / in.extraterrestrial_normal, 0.0, 1.0);
    out.sky_diffuse = in.dhi * (ai * a / c + (1.0 - ai) * (1.0 + cb) / 2.0);
    return out;
  }
  const double z = in.zenith_deg * kDeg, k = 1.041, z3 = k * z * z * z;
  const double eps = ((in.dhi + in.dni) / in.dhi + z3) / (1.0 + z3);
  const double delta = in.dhi * in.air_mass / in.extraterrestrial_normal;
  const PerezRow* row = &kPerez.back();
  for (const PerezRow& r : kPerez) {
    if (eps < r.eps_upper) {
      row = &r;
      break;
    }
  }
  const double f1 = std::max(0.0, row->f11 + row->f12 * delta + z * row->f13);
  const double f2 = row->f21 + row->f22 * delta + z * row->f23;
  out.sky_diffuse = std::max(0.0, in.dhi * ((1.0 - f1) * (1.0 + cb) / 2.0 + f1 * a / c + f2 * sb));
  return out;
}

}  // namespace solstrata::sun
