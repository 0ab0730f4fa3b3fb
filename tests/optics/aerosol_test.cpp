#include "optics/aerosol.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <stdexcept>

#include "atmos/standard_atmosphere.hpp"

using namespace solstrata::optics;

TEST_CASE("aerosol optical depth follows the Ångström law", "[optics]") {
  // Ångström (1929): tau = beta (lambda / 1 um)^-alpha [published].
  AerosolSpec a;
  a.tau_ref = 0.2;
  a.reference_nm = 550;
  a.angstrom = 1.3;
  CHECK(a.column_tau(550) == Approx(0.2).epsilon(1e-15));
  CHECK(a.column_tau(1100) == Approx(0.2 * std::pow(2.0, -1.3)).epsilon(1e-14));
  // Two-wavelength form: tau(440) = 0.3 and tau(870) = 0.1 give alpha = ln 3 / ln(870/440).
  a.tau_ref = 0.3;
  a.reference_nm = 440;
  a.second_nm = 870;
  a.tau_second = 0.1;
  REQUIRE(a.validate().empty());
  CHECK(a.alpha() == Approx(std::log(3.0) / std::log(870.0 / 440.0)).epsilon(1e-14));
  CHECK(a.column_tau(870) == Approx(0.1).epsilon(1e-14));
  AerosolSpec none;
  CHECK(none.column_tau(500) == 0.0);
}

TEST_CASE("aerosol albedo and asymmetry may be tabulated against wavelength", "[optics]") {
  AerosolSpec a;
  a.table_nm = {400, 800};
  a.omega_table = {0.9, 0.8};
  a.g_table = {0.7, 0.6};
  REQUIRE(a.validate().empty());
  CHECK(a.omega_at(600) == Approx(0.85));
  CHECK(a.g_at(500) == Approx(0.675));
  CHECK(a.omega_at(300) == 0.9);  // constant beyond the table
  CHECK(a.g_at(2000) == 0.6);
}

TEST_CASE("aerosol presets carry the OPAC and Dubovik values", "[optics]") {
  // OPAC (Hess, Koepke & Schult 1998), continental polluted, RH 80 %, 550 nm: omega 0.8925,
  // g 0.6977 [published]; the others from shared/checkvalues.md section 10 [memory].
  CHECK(preset(AerosolType::continental_industrial).omega == 0.8925);
  CHECK(preset(AerosolType::continental_industrial).g == 0.6977);
  CHECK(preset(AerosolType::marine_background).omega == 0.998);
  CHECK(preset(AerosolType::urban_haze).omega == 0.82);
  CHECK(preset(AerosolType::biomass_smoke).g == 0.64);
  // Fine-mode aerosols have larger Ångström exponents than coarse dust and sea salt.
  CHECK(preset(AerosolType::urban_haze).angstrom > 1.0);
  CHECK(preset(AerosolType::mineral_dust).angstrom < 0.5);
  CHECK(preset(AerosolType::marine_background).angstrom < 0.5);
  for (const char* n : {"continental_background", "continental_moderate", "continental_industrial", "urban_haze",
                        "mineral_dust", "marine_background", "marine_coastal", "biomass_smoke"}) {
    const auto t = parse_aerosol_type(n);
    REQUIRE(t);
    CHECK(to_string(*t) == n);
    const AerosolSpec s = from_preset(*t, 0.1);
    CHECK(s.validate().empty());
    CHECK_FALSE(preset(*t).source.empty());
  }
  CHECK_FALSE(parse_aerosol_type("volcanic"));
}

TEST_CASE("exponential aerosol puts 1 - 1/e of its depth below one scale height", "[optics]") {
  // Exact for extinction ~ exp(-h/H) (the column top at 80 km adds exp(-80/H) ~ 1e-23).
  const auto p = solstrata::atmos::make_us_standard_1976();
  AerosolSpec a;
  a.tau_ref = 0.1;
  a.scale_height_km = 2.0;
  const std::vector<double> f = layer_fractions(a, p);
  REQUIRE(f.size() == p.n_layers());
  double sum = 0.0, below = 0.0;
  for (std::size_t i = 0; i < f.size(); ++i) {
    sum += f[i];
    if (p.altitude_km[i] <= 2.0 + 1e-9) below += f[i];
  }
  CHECK(sum == Approx(1.0).epsilon(1e-14));
  CHECK(below == Approx(1 - std::exp(-1.0)).epsilon(1e-12));
}

TEST_CASE("boundary-layer aerosol is well mixed below its top plus a background", "[optics]") {
  const auto p = solstrata::atmos::make_us_standard_1976();
  AerosolSpec a;
  a.tau_ref = 0.3;
  a.shape = AerosolShape::boundary_layer;
  a.boundary_layer_top_km = 2.0;
  a.boundary_layer_fraction = 0.8;
  a.scale_height_km = 5.0;
  const std::vector<double> f = layer_fractions(a, p);
  // Bottom layer (0-1 km): half the mixed layer plus the background's exp(0) - exp(-1/5) share
  // (the background normalised over the 80 km column).
  const double norm = 1 - std::exp(-80.0 / 5.0);
  CHECK(f.back() == Approx(0.8 * 0.5 + 0.2 * (1 - std::exp(-0.2)) / norm).epsilon(1e-12));
  // Layer 2-3 km: background only.
  CHECK(f[f.size() - 3] == Approx(0.2 * (std::exp(-0.4) - std::exp(-0.6)) / norm).epsilon(1e-12));
}

TEST_CASE("per-layer aerosol weights are normalised", "[optics]") {
  solstrata::atmos::Profile p;
  p.pressure_hpa = {100, 500, 1000};
  p.temperature_k = {220, 250, 290};
  p.altitude_km = {16, 5.5, 0};
  AerosolSpec a;
  a.tau_ref = 0.1;
  a.shape = AerosolShape::per_layer;
  a.layer_weights = {1, 3};
  CHECK(layer_fractions(a, p) == std::vector<double>{0.25, 0.75});
  a.layer_weights = {1, 2, 3};
  CHECK_THROWS_WITH(layer_fractions(a, p), Catch::Contains("3 values but the profile has 2 layers"));
}

TEST_CASE("aerosol validation names the field, the value and the rule", "[optics]") {
  AerosolSpec a;
  a.tau_ref = -0.1;
  CHECK(a.validate().find("tau_ref = -0.1") != std::string::npos);
  a = {};
  a.omega = 1.2;
  CHECK(a.validate().find("albedo 1.2") != std::string::npos);
  a = {};
  a.g = 1.0;
  CHECK(a.validate().find("asymmetry parameter 1") != std::string::npos);
  a = {};
  a.angstrom = 7;
  CHECK(a.validate().find("exponent 7") != std::string::npos);
  a = {};
  a.table_nm = {500, 400};
  CHECK(a.validate().find("table_nm[1] = 400") != std::string::npos);
  a = {};
  a.shape = AerosolShape::per_layer;
  CHECK(a.validate().find("layer_weights") != std::string::npos);
  a = {};
  a.second_nm = 870;
  CHECK(a.validate().find("tau_second") != std::string::npos);
  CHECK(parse_aerosol_shape("boundary_layer") == AerosolShape::boundary_layer);
}
