#include "atmos/profile.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>

#include "atmos/standard_atmosphere.hpp"

using namespace solstrata::atmos;

namespace {
Profile two_layers() {
  Profile p;
  p.name = "invented";
  p.pressure_hpa = {0, 500, 1000};
  p.temperature_k = {220, 250, 290};
  p.altitude_km = {30, 5.5, 0};
  p.ozone_ppmv = {6, 2, 0};
  p.h2o_ppmv = {5, 1000, 10000};
  return p;
}
}  // namespace

TEST_CASE("gravity follows Bodhaine's formula at sea level", "[atmos]") {
  // Bodhaine et al. (1999): g0(45 deg) = 980.6160 (1 - 0.0026373 cos 90 + ...) = 980.6160
  // [published]; at the equator 980.6160 (1 - 0.0026373 + 0.0000059) = 978.03561 and at the
  // pole 980.6160 (1 + 0.0026373 + 0.0000059) = 983.20796 [computed by hand]. The international
  // gravity formula gives 978.03 and 983.22 cm s-2 (common practice, 2e-5).
  CHECK(gravity_cm_s2(45, 0) == Approx(980.6160).epsilon(1e-12));
  CHECK(gravity_cm_s2(0, 0) == Approx(978.03561).epsilon(1e-8));
  CHECK(gravity_cm_s2(90, 0) == Approx(983.20796).epsilon(1e-8));
  CHECK(gravity_cm_s2(0, 0) == Approx(978.03).epsilon(2e-5));
  CHECK(gravity_cm_s2(90, 0) == Approx(983.22).epsilon(2e-5));
  // Free-air gradient about -0.3086 mGal/m (common practice): 10 km up is 3.08 cm s-2 less.
  CHECK(gravity_cm_s2(45, 0) - gravity_cm_s2(45, 10000) == Approx(3.08).epsilon(0.01));
}

TEST_CASE("the air column of a standard atmosphere is 2.15e25 molecules per cm2", "[atmos]") {
  // Hydrostatic column N = p_s N_A / (M g) = 1013.25e3 dyn cm-2 * 6.022e23 / (28.96 g * 980)
  // = 2.15e25 cm-2 (common practice).
  const Profile p = make_us_standard_1976();
  const LayerColumns c = layer_columns(p);
  double n = 0.0;
  for (double v : c.air) n += v;
  CHECK(n == Approx(2.15e25).epsilon(0.005));
  // Doubling every pressure doubles the air column (exact: N is linear in delta p).
  Profile q = p;
  for (double& v : q.pressure_hpa) v *= 2;
  const LayerColumns d = layer_columns(q);
  for (std::size_t i = 0; i < c.air.size(); ++i) CHECK(d.air[i] == Approx(2 * c.air[i]).epsilon(1e-14));
}

TEST_CASE("layer gas columns are mean mixing ratio times air column", "[atmos]") {
  const Profile p = two_layers();
  const LayerColumns c = layer_columns(p);
  REQUIRE(c.air.size() == 2);
  // Air: 500 hPa over gravity at the layer's mid altitude.
  const double m = air_molar_mass(400) / kAvogadro;
  CHECK(c.air[0] == Approx(500e3 / (m * gravity_cm_s2(45, 17750))).epsilon(1e-14));
  // Ozone: 4 ppmv of that column, in DU.
  CHECK(c.ozone_du[0] == Approx(4e-6 * c.air[0] / kDobsonUnit).epsilon(1e-14));
  // Water: 5500 ppmv of the lower column, in g cm-2 = cm of liquid water.
  CHECK(c.h2o_cm[1] == Approx(5500e-6 * c.air[1] * kWaterMolarMass / kAvogadro).epsilon(1e-14));
  CHECK(c.temperature_k[1] == Approx(270));
}

TEST_CASE("ozone can be rescaled to a given total column", "[atmos]") {
  Profile p = two_layers();
  scale_ozone_to(p, 300.0);
  CHECK(total_ozone_du(p) == Approx(300.0).epsilon(1e-13));
  Profile none = two_layers();
  none.ozone_ppmv.clear();
  CHECK_THROWS_WITH(scale_ozone_to(none, 300.0), Catch::Contains("no ozone"));
  CHECK_THROWS_WITH(scale_ozone_to(p, -1.0), Catch::Contains("-1 DU"));
}

TEST_CASE("profile validation names the field, the level and the rule", "[atmos]") {
  CHECK(two_layers().validate().empty());
  Profile p = two_layers();
  p.pressure_hpa[2] = 400;
  CHECK(p.validate().find("pressure_hpa[2] = 400") != std::string::npos);
  p = two_layers();
  p.temperature_k[1] = NAN;
  CHECK(p.validate().find("temperature_k[1]") != std::string::npos);
  p = two_layers();
  p.altitude_km[1] = 40;
  CHECK(p.validate().find("altitude_km[1] = 40") != std::string::npos);
  p = two_layers();
  p.ozone_ppmv.pop_back();
  CHECK(p.validate().find("ozone_ppmv has 2 values") != std::string::npos);
  p = two_layers();
  p.h2o_ppmv[0] = -1;
  CHECK(p.validate().find("h2o_ppmv[0] = -1") != std::string::npos);
  p = two_layers();
  p.latitude_deg = 95;
  CHECK(p.validate().find("latitude_deg = 95") != std::string::npos);
  p.pressure_hpa = {1000};
  CHECK(p.validate().find("at least 2 levels") != std::string::npos);
  CHECK_THROWS_AS(layer_columns(p), std::invalid_argument);
}

TEST_CASE("cutting a profile at a site elevation interpolates an isothermal column exactly", "[atmos]") {
  // Exact limit: an isothermal atmosphere in hydrostatic balance has p(z) = p0 exp(-z / H), so
  // log-linear interpolation in altitude is exact (H = R T / (M g); any H serves here).
  Profile p;
  const double H = 7.9;  // km
  for (double z : {20.0, 10.0, 5.0, 2.0, 0.0}) {
    p.altitude_km.push_back(z);
    p.pressure_hpa.push_back(1013.25 * std::exp(-z / H));
    p.temperature_k.push_back(250.0);
    p.h2o_ppmv.push_back(1000.0 + 100.0 * z);  // linear in z: linear interpolation is exact too
  }
  const Profile c = cut_at_altitude(p, 1.25);
  REQUIRE(c.n_levels() == 5);
  CHECK(c.altitude_km.back() == 1.25);
  CHECK(c.pressure_hpa.back() == Approx(1013.25 * std::exp(-1.25 / H)).epsilon(1e-13));
  CHECK(c.temperature_k.back() == Approx(250.0).epsilon(1e-14));
  CHECK(c.h2o_ppmv.back() == Approx(1125.0).epsilon(1e-13));
  CHECK(c.ozone_ppmv.empty());
  // At an existing level (within 1 m): that level becomes the surface.
  const Profile at = cut_at_altitude(p, 2.0004);
  REQUIRE(at.n_levels() == 4);
  CHECK(at.pressure_hpa.back() == p.pressure_hpa[3]);
  // Outside the profile: a clear error.
  CHECK_THROWS_WITH(cut_at_altitude(p, 25.0), Catch::Contains("outside the profile's altitude range"));
  CHECK_THROWS_WITH(cut_at_altitude(p, -0.3), Catch::Contains("outside the profile's altitude range"));
}
