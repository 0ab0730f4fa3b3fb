#include "sun/tilted_plane.hpp"

#include <catch2/catch.hpp>

using namespace solstrata::sun;

TEST_CASE("sky diffuse on a tilted plane matches the worked cases of the three models", "[sun]") {
  // checkvalues section 14 (formulas published: Liu & Jordan 1963, Hay & Davies 1980, Perez et
  // al. 1990 table 6; worked values computed): case A, DHI 100, DNI 800, Z 30, tilt 30, AOI 10,
  // E_a 1361, AM 1.15470.
  PlaneInputs a;
  a.dhi = 100, a.dni = 800, a.ghi = 100 + 800 * 0.8660254, a.zenith_deg = 30, a.tilt_deg = 30, a.aoi_deg = 10,
  a.extraterrestrial_normal = 1361, a.air_mass = 1.15470;
  CHECK(plane_of_array(a, SkyDiffuseModel::isotropic).sky_diffuse == Approx(93.3013).margin(1e-3));
  CHECK(plane_of_array(a, SkyDiffuseModel::hay_davies).sky_diffuse == Approx(105.3010).margin(1e-3));
  CHECK(plane_of_array(a, SkyDiffuseModel::perez).sky_diffuse == Approx(112.4335).margin(1e-3));
  // Case B: DHI 300, DNI 100, Z 60, tilt 45, AOI 40, AM 2 -> Perez 307.3326 (clearness bin 2).
  PlaneInputs b;
  b.dhi = 300, b.dni = 100, b.ghi = 350, b.zenith_deg = 60, b.tilt_deg = 45, b.aoi_deg = 40, b.air_mass = 2,
  b.extraterrestrial_normal = 1361;
  CHECK(plane_of_array(b, SkyDiffuseModel::perez).sky_diffuse == Approx(307.3326).margin(1e-3));
}

TEST_CASE("a horizontal plane receives the global horizontal irradiance", "[sun]") {
  // Exact limit: tilt 0 -> AOI = Z, beam = DNI cos Z, sky = DHI, ground = 0, for every model.
  for (SkyDiffuseModel m : {SkyDiffuseModel::isotropic, SkyDiffuseModel::hay_davies, SkyDiffuseModel::perez}) {
    PlaneInputs in;
    in.dni = 700, in.dhi = 120, in.zenith_deg = 40, in.tilt_deg = 0;
    in.aoi_deg = angle_of_incidence_deg(40, 150, 0, 180);
    in.ghi = 120 + 700 * std::cos(40 * M_PI / 180);
    in.air_mass = 1 / std::cos(40 * M_PI / 180);
    const PlaneIrradiance p = plane_of_array(in, m);
    INFO(to_string(m));
    CHECK(in.aoi_deg == Approx(40.0).margin(1e-12));
    CHECK(p.total() == Approx(in.ghi).epsilon(1e-12));
  }
  // A plane facing away from the sun gets no beam; a vertical plane sees half the ground.
  CHECK(angle_of_incidence_deg(30, 180, 90, 0) == Approx(120.0).margin(1e-9));
  PlaneInputs v;
  v.dni = 800, v.dhi = 100, v.ghi = 800, v.albedo = 0.25, v.zenith_deg = 30, v.tilt_deg = 90, v.aoi_deg = 120;
  const PlaneIrradiance p = plane_of_array(v, SkyDiffuseModel::isotropic);
  CHECK(p.beam == 0.0);
  CHECK(p.ground == Approx(0.25 * 800 / 2));
  CHECK(p.sky_diffuse == Approx(50.0));
}
