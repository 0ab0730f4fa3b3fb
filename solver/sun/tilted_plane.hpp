// Irradiance on a tilted plane (plane of array) from the horizontal direct and diffuse fluxes.
#pragma once

#include <optional>
#include <string_view>

namespace solstrata::sun {

/// degrees: angle between the sun and the normal of a plane of tilt `tilt_deg` (0 = horizontal)
/// facing `plane_azimuth_deg` (from north, eastward), for the sun at `zenith_deg`,
/// `sun_azimuth_deg`: cos AOI = cos Z cos b + sin Z sin b cos(sun azimuth - plane azimuth)
/// (spherical trigonometry; e.g. Duffie & Beckman, "Solar Engineering of Thermal Processes").
double angle_of_incidence_deg(double zenith_deg, double sun_azimuth_deg, double tilt_deg, double plane_azimuth_deg);

/// How the sky's diffuse light is spread over the sky dome.
enum class SkyDiffuseModel {
  isotropic,   ///< Liu & Jordan (1963): E = DHI (1 + cos b)/2
  hay_davies,  ///< Hay & Davies (1980): circumsolar share A_i = DNI / E_a beamed, the rest isotropic
  perez,       ///< Perez, Ineichen, Seals, Michalsky & Stewart (1990), Solar Energy 44, 271, table 6
};
std::string_view to_string(SkyDiffuseModel m);
std::optional<SkyDiffuseModel> parse_sky_diffuse_model(std::string_view name);

/// What the plane receives.
struct PlaneIrradiance {
  double beam = 0.0;         ///< W m-2: DNI cos AOI (0 when the sun is behind the plane or set)
  double sky_diffuse = 0.0;  ///< W m-2: diffuse light from the sky
  double ground = 0.0;       ///< W m-2: light reflected by the ground, albedo GHI (1 - cos b)/2 (isotropic ground)
  [[nodiscard]] double total() const { return beam + sky_diffuse + ground; }
};

/// Inputs of a plane-of-array calculation (fluxes in W m-2, angles in degrees).
struct PlaneInputs {
  double dni = 0.0;                  ///< W m-2: direct-normal irradiance
  double dhi = 0.0;                  ///< W m-2: diffuse horizontal irradiance
  double ghi = 0.0;                  ///< W m-2: global horizontal irradiance
  double albedo = 0.2;               ///< dimensionless: ground albedo, [0, 1]
  double zenith_deg = 0.0;           ///< degrees: solar zenith angle
  double aoi_deg = 0.0;              ///< degrees: angle of incidence on the plane
  double tilt_deg = 0.0;             ///< degrees: plane tilt, [0, 180]
  double extraterrestrial_normal = 1361.0;  ///< W m-2: TOA irradiance normal to the beam (E_a)
  double air_mass = 1.0;             ///< dimensionless: relative optical air mass (Perez's delta)
};

/// Plane-of-array irradiance with the chosen sky model. Perez et al. (1990):
///   eps = [(DHI + DNI)/DHI + k Z^3] / (1 + k Z^3), k = 1.041, Z in radians; delta = DHI AM / E_a;
///   F1 = max(0, f11 + f12 delta + Z f13), F2 = f21 + f22 delta + Z f23 (their table 6 by eps bin);
///   E = DHI [(1 - F1)(1 + cos b)/2 + F1 a/c + F2 sin b], a = max(0, cos AOI), c = max(cos 85, cos Z).
/// Hay & Davies (1980): E = DHI [A_i R_b + (1 - A_i)(1 + cos b)/2], R_b = a / c.
PlaneIrradiance plane_of_array(const PlaneInputs& in, SkyDiffuseModel model);

/// The caution printed beside plane-of-array output.
inline constexpr const char* kPlaneCaution =
    "Plane-of-array irradiance is a clear-sky model estimate; yield estimates from it do not replace a "
    "licensed design under local codes.";

}  // namespace solstrata::sun
