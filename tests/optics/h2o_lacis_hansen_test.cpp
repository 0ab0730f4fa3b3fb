#include "optics/h2o_lacis_hansen.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "atmos/profile.hpp"
#include "spectrum/solar.hpp"

using namespace solstrata;

namespace {

struct Setup {
  spectrum::Grid grid =
      spectrum::make_grid(spectrum::default_segments(), spectrum::default_bands());
  std::vector<double> solar;
  optics::KTable table;
  Setup() {
    // ASTM E490-00a on the default grid (tests/data, provenance in tests/data/README.md).
    const auto e490 =
        spectrum::read_spectrum_csv(std::string(SOLSTRATA_TEST_DATA) + "/astm-e490-00a.csv");
    solar = spectrum::tabulated_solar(e490, grid).bin_irradiance;
    table = optics::h2o_lacis_hansen(grid, solar);
  }
};

std::size_t index_of(const std::vector<double>& v, double x) {
  const auto it = std::find(v.begin(), v.end(), x);
  REQUIRE(it != v.end());
  return static_cast<std::size_t>(it - v.begin());
}

std::size_t bin_containing(const spectrum::Grid& g, double nm) {
  for (std::size_t b = 0; b < g.size(); ++b) {
    if (g.bins()[b].lower_nm <= nm && nm < g.bins()[b].upper_nm) return b;
  }
  FAIL("no bin contains " << nm);
  return 0;
}

}  // namespace

TEST_CASE("the exponential sum reproduces the Lacis-Hansen absorptance formula", "[optics][h2o]") {
  // checkvalues section 7: the 8-term sum (from memory) matches eq. (18) of Lacis & Hansen
  // (1974) [published] to about 1e-4 for y = 0.01..10 g cm-2 (computed: 1.04e-4 at worst).
  double worst = 0.0;
  for (double ly = -2.0; ly <= 1.0 + 1e-9; ly += 0.05) {
    const double y = std::pow(10.0, ly);
    double a = 0.0;
    for (std::size_t i = 0; i < 8; ++i)
      a += optics::kLacisHansenWeights[i] * (1.0 - std::exp(-optics::kLacisHansenK[i] * y));
    worst = std::max(worst, std::abs(a - optics::lacis_hansen_absorptance(y)));
  }
  INFO("largest difference " << worst);
  CHECK(worst < 1.5e-4);
  // Weights are fractions of the whole solar flux: they sum to 1 (published normalisation).
  double sw = 0.0;
  for (double w : optics::kLacisHansenWeights) sw += w;
  CHECK(sw == Approx(1.0).epsilon(1e-12));
}

TEST_CASE("the built-in table's whole-grid absorptance is the Lacis-Hansen formula",
          "[optics][h2o]") {
  const Setup s;
  const optics::KTable& t = s.table;
  REQUIRE(t.bins.size() == s.grid.size());
  const std::size_t ip = index_of(t.pressure_hpa, optics::kLacisHansenP0);
  const std::size_t it = index_of(t.temperature_k, optics::kLacisHansenT0);
  const std::size_t nt = t.temperature_k.size();
  double s_total = 0.0;
  for (double v : s.solar) s_total += v;
  // No scattering, black surface: the column absorptance of the solar beam through an
  // effective path y (g cm-2) at the reference state is sum_bins S sum_terms w (1 - e^{-k u}),
  // u = y N_A / M molecules cm-2, over S_total. Lacis & Hansen (1974), eq. (18) [published].
  double worst = 0.0;
  for (double ly = -2.0; ly <= 1.0 + 1e-9; ly += 0.05) {
    const double y = std::pow(10.0, ly);
    const double u = y * atmos::kAvogadro / optics::kLacisHansenWaterMolarMass;
    double a = 0.0;
    for (std::size_t b = 0; b < t.bins.size(); ++b) {
      const optics::KTableBin& kb = t.bins[b];
      for (std::size_t i = 0; i < kb.weights.size(); ++i) {
        a += s.solar[b] * kb.weights[i] * -std::expm1(-kb.k[i][ip * nt + it] * u);
      }
    }
    worst = std::max(worst, std::abs(a / s_total - optics::lacis_hansen_absorptance(y)));
  }
  INFO("largest difference from the formula " << worst);
  CHECK(worst < 1e-3);
}

TEST_CASE("the built-in table's bins are valid k-distributions of the format", "[optics][h2o]") {
  const Setup s;
  const optics::KTable& t = s.table;
  CHECK(t.gas == "H2O");
  CHECK_THAT(t.title,
             Catch::Contains(
                 "broadband representation; spectral detail in the near infrared approximate"));
  CHECK(t.weighting == "solar ASTM E490-00a");
  CHECK(t.h2o_vmr.empty());
  // docs/gas-tables.md: weights > 0 summing to 1 within 1e-9, one k row per term of np x nt.
  for (std::size_t b = 0; b < t.bins.size(); ++b) {
    const optics::KTableBin& kb = t.bins[b];
    CHECK(kb.lower_nm == s.grid.bins()[b].lower_nm);
    REQUIRE(!kb.weights.empty());
    double sum = 0.0;
    for (double w : kb.weights) {
      CHECK(w >= 1e-6);
      sum += w;
    }
    CHECK(sum == Approx(1.0).margin(1e-9));
    REQUIRE(kb.k.size() == kb.weights.size());
    for (const auto& k : kb.k) CHECK(k.size() == t.pressure_hpa.size() * t.temperature_k.size());
    // Below 700 nm only the weakest term (4e-5 cm2 g-1) remains (construction rule).
    if (s.grid.bins()[b].center_nm < 700.0) CHECK(kb.weights.size() == 1);
  }
  // Every term carries its published share of the whole spectrum (the fit's constraint).
  std::vector<double> share(8, 0.0);
  double s_total = 0.0;
  const std::size_t ip = index_of(t.pressure_hpa, optics::kLacisHansenP0);
  const std::size_t it = index_of(t.temperature_k, optics::kLacisHansenT0);
  const double per_g = atmos::kAvogadro / optics::kLacisHansenWaterMolarMass;
  for (std::size_t b = 0; b < t.bins.size(); ++b) {
    s_total += s.solar[b];
    for (std::size_t i = 0; i < t.bins[b].weights.size(); ++i) {
      const double k = t.bins[b].k[i][ip * t.temperature_k.size() + it] * per_g;
      for (std::size_t j = 0; j < 8; ++j) {
        if (std::abs(k / optics::kLacisHansenK[j] - 1.0) < 1e-12)
          share[j] += s.solar[b] * t.bins[b].weights[i];
      }
    }
  }
  for (std::size_t j = 0; j < 8; ++j)
    CHECK(share[j] / s_total == Approx(optics::kLacisHansenWeights[j]).margin(1e-9));
}

TEST_CASE("the table's k follows the Lacis-Hansen pressure and temperature scaling",
          "[optics][h2o]") {
  const Setup s;
  const optics::KTable& t = s.table;
  const std::size_t nt = t.temperature_k.size();
  const optics::KTableBin& kb = t.bins[bin_containing(s.grid, 1380.0)];
  const double per_g = atmos::kAvogadro / optics::kLacisHansenWaterMolarMass;
  // k(p, T) = k0 (p / 1013 hPa) (273 K / T)^0.5 (Lacis & Hansen 1974, from memory): at 100 hPa
  // and 223 K, 0.098717 x 1.106443 of the reference value (computed by hand).
  const std::size_t i0 = index_of(t.pressure_hpa, 1013.0), i1 = index_of(t.pressure_hpa, 100.0);
  const std::size_t j0 = index_of(t.temperature_k, 273.0), j1 = index_of(t.temperature_k, 223.0);
  for (const auto& k : kb.k) {
    CHECK(k[i1 * nt + j1] / k[i0 * nt + j0] ==
          Approx(100.0 / 1013.0 * std::sqrt(273.0 / 223.0)).epsilon(1e-12));
    CHECK(std::sqrt(273.0 / 223.0) == Approx(1.106443).epsilon(1e-6));
  }
  // Linear in p, so log k is linear in log p between nodes: log-log interpolation is exact.
  const double r =
      std::log(kb.k[0][i0 * nt + j0] / kb.k[0][i1 * nt + j0]) / std::log(1013.0 / 100.0);
  CHECK(r == Approx(1.0).epsilon(1e-12));
  // The 1.38 um band centre absorbs more strongly than the 1.6 um window (band positions from
  // memory): solar-weighted mean k.
  const auto mean_k = [&](const optics::KTableBin& b) {
    double m = 0.0;
    for (std::size_t i = 0; i < b.weights.size(); ++i)
      m += b.weights[i] * b.k[i][i0 * nt + j0] * per_g;
    return m;
  };
  CHECK(mean_k(kb) > 10.0 * mean_k(t.bins[bin_containing(s.grid, 1600.0)]));
  CHECK(mean_k(t.bins[bin_containing(s.grid, 2700.0)]) >
        10.0 * mean_k(t.bins[bin_containing(s.grid, 2200.0)]));
}
