#include "optics/column_optics.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>

#include "atmos/standard_atmosphere.hpp"
#include "optics/ozone.hpp"
#include "optics/rayleigh.hpp"
#include "rt/two_stream.hpp"
#include "spectrum/solar.hpp"

using namespace solstrata;

namespace {

// Bodhaine et al. (1999) eq. 30 [published], lambda in um (see rayleigh_test.cpp).
double bodhaine_eq30(double l) {
  return 0.0021520 * (1.0455996 - 341.29061 / (l * l) - 0.90230850 * l * l) /
         (1.0 + 0.0027059889 / (l * l) - 85.968563 * l * l);
}

struct SurfaceFluxes {
  std::vector<double> direct, diffuse, toa_up;  // [point]
};

// Solves the column optics with every spectral point as one problem of rt::solve_columns.
SurfaceFluxes solve(const optics::ColumnOptics& o, const std::vector<double>& solar, double mu0,
                    double albedo) {
  const std::size_t np = o.n_points, nl = o.n_layers;
  std::vector<double> mu(np, mu0), alb(np, albedo);
  std::vector<double> dir((nl + 1) * np), dif((nl + 1) * np), up((nl + 1) * np);
  rt::Workspace w;
  const rt::Status st =
      rt::solve_columns({np, nl, o.tau, o.omega, o.g, mu, solar, alb, alb}, {}, {dir, dif, up}, w);
  REQUIRE(st.ok);
  SurfaceFluxes s;
  for (std::size_t k = 0; k < np; ++k) {
    s.direct.push_back(dir[nl * np + k]);
    s.diffuse.push_back(dif[nl * np + k]);
    s.toa_up.push_back(up[k]);
  }
  return s;
}

double sum(const std::vector<double>& v) {
  double s = 0.0;
  for (double x : v) s += x;
  return s;
}

}  // namespace

TEST_CASE("column optics are laid out layer by layer and sum to the component columns", "[optics]") {
  const atmos::Profile p = atmos::make_us_standard_1976();
  const spectrum::Grid g = spectrum::make_grid({{300, 700, 50}});
  optics::AerosolSpec a = optics::from_preset(optics::AerosolType::continental_moderate, 0.2);
  a.reference_nm = 525;  // a bin centre
  optics::OpticsOptions opt;
  opt.ozone_temperature_dependence = false;  // the table's reference-temperature cross sections
  const optics::ColumnOptics o = optics::build_column_optics(p, g, a, opt);
  REQUIRE(o.n_layers == p.n_layers());
  REQUIRE(o.n_points == g.size());
  REQUIRE(o.tau.size() == o.n_layers * o.n_points);
  for (std::size_t k = 0; k < o.n_points; ++k) {
    double tau = 0.0;
    for (std::size_t l = 0; l < o.n_layers; ++l) {
      const double t = o.tau[l * o.n_points + k];
      CHECK(std::isfinite(t));
      CHECK(o.omega[l * o.n_points + k] >= 0.0);
      CHECK(o.omega[l * o.n_points + k] <= 1.0);
      tau += t;
    }
    CHECK(tau == Approx(o.column_tau_rayleigh[k] + o.column_tau_ozone[k] + o.column_tau_aerosol[k])
                     .epsilon(1e-13));
    // Ozone column optical depth is cross section x 343 DU.
    CHECK(o.column_tau_ozone[k] ==
          Approx(optics::ozone_cross_section(o.wavelength_nm[k]) * 343.0 * atmos::kDobsonUnit)
              .epsilon(1e-12));
    CHECK(o.point_weight[k] == 1.0);
    CHECK(o.point_bin[k] == k);
  }
  CHECK(o.column_tau_aerosol[4] == Approx(0.2).epsilon(1e-13));  // bin 500-550 nm, centre 525
}

TEST_CASE("column Rayleigh depth of the standard atmosphere matches Bodhaine's eq. 30", "[optics]") {
  // Layer by layer with gravity at each layer's altitude, against the column formula of
  // Bodhaine et al. (1999) eq. 30 (45 deg, 1013.25 hPa, 360 ppm). The generated profile stops at
  // 80 km (0.0105 hPa, 1e-5 of the column); tolerance 0.1 %.
  atmos::Profile p = atmos::make_us_standard_1976();
  p.co2_ppmv = 360;
  optics::OpticsOptions opt;
  opt.ozone = false;
  opt.aerosol = false;
  const spectrum::Grid g = spectrum::make_grid({{295, 805, 10}});  // centres 300, 310, ..., 800
  const optics::ColumnOptics o = optics::build_column_optics(p, g, {}, opt);
  for (std::size_t k = 0; k < o.n_points; ++k) {
    const double lam = o.wavelength_nm[k];
    INFO(lam << " nm: layers " << o.column_tau_rayleigh[k] << ", eq. 30 " << bodhaine_eq30(lam / 1000));
    CHECK(o.column_tau_rayleigh[k] == Approx(bodhaine_eq30(lam / 1000)).epsilon(1e-3));
    CHECK(o.column_tau_ozone[k] == 0.0);
  }
}

TEST_CASE("a pure-Rayleigh atmosphere transmits the direct beam as exp(-tau/mu0) at 550 nm", "[optics]") {
  // Beer-Lambert (exact limit, shared/checkvalues.md section 4) for the unscattered beam.
  const atmos::Profile p = atmos::make_us_standard_1976();
  optics::OpticsOptions opt;
  opt.ozone = false;
  opt.aerosol = false;
  const spectrum::Grid g = spectrum::make_grid({{545, 555, 10}});
  const optics::ColumnOptics o = optics::build_column_optics(p, g, {}, opt);
  const double tau = o.column_tau_rayleigh[0];
  // About 0.097 (Bodhaine eq. 30 at 550 nm, 0.09707 at 360 ppm; 400 ppm here).
  CHECK(tau == Approx(0.09707).epsilon(2e-3));
  for (double mu0 : {1.0, 0.5, 0.2}) {
    const SurfaceFluxes s = solve(o, {1.0}, mu0, 0.0);
    const double t_direct = s.direct[0] / mu0;
    INFO("mu0 " << mu0 << ": direct transmittance " << t_direct << ", exp(-tau/mu0) " << std::exp(-tau / mu0));
    CHECK(t_direct == Approx(std::exp(-tau / mu0)).epsilon(1e-12));
    // Conservative column over a black surface: what is not reflected is transmitted.
    CHECK(s.direct[0] + s.diffuse[0] + s.toa_up[0] == Approx(mu0).epsilon(1e-12));
    // Symmetric Rayleigh phase function: roughly half the scattered light goes down.
    const double scattered = mu0 - s.direct[0];
    CHECK(s.diffuse[0] / scattered > 0.4);
    CHECK(s.diffuse[0] / scattered < 0.6);
  }
}

TEST_CASE("clear-sky surface irradiance at overhead sun is in the physically expected range", "[optics]") {
  // Full chain: standard atmosphere + Rayleigh + ozone + aerosol (tau 0) -> two-stream, overhead
  // sun, black surface, no water vapour (not yet an absorber here). Expected (common practice):
  // Rayleigh removes about 9-10 % of the broadband beam at air mass 1 and about half of that
  // reaches the surface as diffuse light; ozone absorbs 2-3 % (Lacis & Hansen 1974, from memory).
  // So direct about 85-92 % and global about 88-95 % of the TOA irradiance, diffuse 3-6 %.
  // Run with the built-in spectrum on the default grid and with the ASTM G173 extraterrestrial
  // spectrum (test data) on 1 nm bins.
  const atmos::Profile p = atmos::make_us_standard_1976();
  const auto g173 = spectrum::read_spectrum_csv(std::string(SOLSTRATA_TEST_DATA) + "/astm-g173-03.csv",
                                                "extraterrestrial_W_m2_nm");
  for (int source = 0; source < 2; ++source) {
    const spectrum::Grid g = source == 0 ? spectrum::make_grid(spectrum::default_segments(),
                                                               spectrum::default_bands())
                                         : spectrum::make_grid({{280, 4000, 1}}, spectrum::default_bands());
    const spectrum::SolarSource sun =
        source == 0 ? spectrum::builtin_solar(g) : spectrum::tabulated_solar(g173, g);
    const optics::ColumnOptics o = optics::build_column_optics(p, g, {}, {});
    const SurfaceFluxes s = solve(o, sun.bin_irradiance, 1.0, 0.0);
    const double toa = sun.total(), direct = sum(s.direct), diffuse = sum(s.diffuse);
    INFO(sun.description << ": TOA " << toa << " direct " << direct << " diffuse " << diffuse
                         << " global " << direct + diffuse << " reflected " << sum(s.toa_up) << " W m-2");
    CHECK(direct / toa > 0.85);
    CHECK(direct / toa < 0.92);
    CHECK(diffuse / toa > 0.03);
    CHECK(diffuse / toa < 0.06);
    CHECK((direct + diffuse) / toa > 0.88);
    CHECK((direct + diffuse) / toa < 0.95);
    // Independent Beer-Lambert sum of the direct beam, bin by bin.
    double beer = 0.0;
    for (std::size_t k = 0; k < o.n_points; ++k) {
      beer += sun.bin_irradiance[k] *
              std::exp(-(o.column_tau_rayleigh[k] + o.column_tau_ozone[k] + o.column_tau_aerosol[k]));
    }
    CHECK(direct == Approx(beer).epsilon(1e-12));
    // The column absorbs only through ozone: absorption lies between the beam's ozone loss and
    // that loss enhanced by the longer diffuse paths.
    double ozone_beam = 0.0;
    for (std::size_t k = 0; k < o.n_points; ++k) {
      ozone_beam += sun.bin_irradiance[k] * -std::expm1(-o.column_tau_ozone[k]);
    }
    const double absorbed = toa - sum(s.toa_up) - direct - diffuse;
    INFO("absorbed " << absorbed << " ozone beam loss " << ozone_beam);
    CHECK(absorbed > 0.8 * ozone_beam);
    CHECK(absorbed < 1.6 * ozone_beam);
    // UV-B is mostly absorbed.
    const auto uvb = g.band_bins(0);
    double uvb_toa = 0.0, uvb_sfc = 0.0;
    for (std::size_t k = uvb.first; k < uvb.last; ++k) {
      uvb_toa += sun.bin_irradiance[k];
      uvb_sfc += s.direct[k] + s.diffuse[k];
    }
    CHECK(uvb_sfc / uvb_toa < 0.3);
  }
}

TEST_CASE("aerosol dims the direct beam and brightens the diffuse", "[optics]") {
  const atmos::Profile p = atmos::make_us_standard_1976();
  const spectrum::Grid g = spectrum::make_grid(spectrum::default_segments());
  const spectrum::SolarSource sun = spectrum::builtin_solar(g);
  const SurfaceFluxes clean = solve(optics::build_column_optics(p, g, {}, {}), sun.bin_irradiance, 1.0, 0.0);
  const optics::AerosolSpec a = optics::from_preset(optics::AerosolType::continental_moderate, 0.2);
  const optics::ColumnOptics o = optics::build_column_optics(p, g, a, {});
  const SurfaceFluxes hazy = solve(o, sun.bin_irradiance, 1.0, 0.0);
  CHECK(sum(hazy.direct) < sum(clean.direct));
  CHECK(sum(hazy.diffuse) > sum(clean.diffuse));
  CHECK(sum(hazy.direct) + sum(hazy.diffuse) < sum(clean.direct) + sum(clean.diffuse));
  // Direct beam ratio bin by bin is exp(-tau_aerosol) (Beer-Lambert).
  for (std::size_t k = 0; k < o.n_points; k += 17) {
    CHECK(hazy.direct[k] / clean.direct[k] == Approx(std::exp(-o.column_tau_aerosol[k])).epsilon(1e-10));
  }
}

TEST_CASE("ozone rescaling and temperature dependence change the ozone optics", "[optics]") {
  const atmos::Profile p = atmos::make_us_standard_1976();
  // Bins 0 (320-330 nm, Huggins) and 2 (600-610 nm, Chappuis).
  const spectrum::Grid g = spectrum::make_grid({{320, 330, 10}, {330, 600, 270}, {600, 610, 10}});
  optics::OpticsOptions opt;
  CHECK(opt.ozone_temperature_dependence);  // the default: on
  opt.ozone_temperature_dependence = false;
  opt.total_ozone_du = 300;
  const optics::ColumnOptics o300 = optics::build_column_optics(p, g, {}, opt);
  opt.total_ozone_du = 0;
  const optics::ColumnOptics o343 = optics::build_column_optics(p, g, {}, opt);
  CHECK(o300.column_tau_ozone[2] / o343.column_tau_ozone[2] == Approx(300.0 / 343.0).epsilon(1e-12));
  opt.ozone_temperature_dependence = true;
  const optics::ColumnOptics cold = optics::build_column_optics(p, g, {}, opt);
  // The stratosphere is colder than 294 K: Huggins-band absorption drops, Chappuis unchanged.
  CHECK(cold.column_tau_ozone[0] < 0.9 * o343.column_tau_ozone[0]);
  CHECK(cold.column_tau_ozone[2] == Approx(o343.column_tau_ozone[2]).epsilon(1e-12));
}

TEST_CASE("column optics reject invalid input with a message naming it", "[optics]") {
  const atmos::Profile p = atmos::make_us_standard_1976();
  optics::OpticsOptions opt;
  opt.total_ozone_du = -5;
  CHECK_THROWS_WITH(optics::build_column_optics(p, spectrum::make_grid({{400, 500, 50}}), {}, opt),
                    Catch::Contains("total_ozone_du = -5"));
  CHECK_THROWS_WITH(optics::build_column_optics(p, spectrum::make_grid({{200, 250, 10}}), {}, {}),
                    Catch::Contains("205 nm"));
  optics::AerosolSpec a;
  a.omega = 2;
  CHECK_THROWS_WITH(optics::build_column_optics(p, spectrum::make_grid({{400, 500, 50}}), a, {}),
                    Catch::Contains("albedo 2"));
}
