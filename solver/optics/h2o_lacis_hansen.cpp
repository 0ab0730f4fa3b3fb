#include "optics/h2o_lacis_hansen.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>

#include "atmos/profile.hpp"

namespace solstrata::optics {
namespace {

/// A water-vapour band of the prior: centre (nm), 1-sigma half width (nm), and log10 of the
/// absorption coefficient (cm2 g-1) that dominates at its centre. Centres from memory (the
/// rho-sigma-tau, 0.94, 1.1, 1.38 (psi), 1.87 (phi), 2.7 (X) and 3.2 um bands); widths and
/// strengths are a design choice of this prior (only their ordering matters much: the fit
/// below fixes the total weight of every term exactly).
struct PriorBand {
  double centre_nm, sigma_nm, log10_k;
};
constexpr PriorBand kPriorBands[] = {
    {720, 12, -1.0}, {820, 15, -0.7}, {940, 30, 0.3},   {1130, 40, 0.5},
    {1380, 60, 1.8}, {1870, 80, 2.0}, {2700, 150, 2.5}, {3200, 150, 1.2},
};
/// nm: bins whose centre lies below this carry only the weakest term.
constexpr double kNearInfraredStartNm = 700.0;
/// decades: 1-sigma width of the prior in log10 k around the bin's central k (design choice).
constexpr double kPriorWidthDecades = 0.7;
/// dimensionless: floor of the prior, so that every term may appear in every near-infrared bin
/// (keeps the fit feasible; terms it leaves below kPruneWeight are dropped afterwards).
constexpr double kPriorFloor = 1e-8;
/// dimensionless: terms below this weight in a bin are dropped.
constexpr double kPruneWeight = 1e-6;

/// log10 (cm2 g-1) of the absorption coefficient the prior centres on at `nm`.
double prior_log10_k(double nm) {
  const double base = std::log10(kLacisHansenK.front());
  double best = base;
  for (const PriorBand& b : kPriorBands) {
    const double d = (nm - b.centre_nm) / b.sigma_nm;
    best = std::max(best, base + (b.log10_k - base) * std::exp(-0.5 * d * d));
  }
  return best;
}

/// Iterative proportional fitting (Deming & Stephan 1940; Sinkhorn 1964) of w[b][i] = a_b P_bi c_i
/// to the margins sum_i w_bi = 1 and sum_b S_b w_bi = W_i S_total. Returns the largest column
/// error relative to S_total after the last row normalisation.
double fit(std::vector<std::vector<double>>& w, const std::vector<std::vector<double>>& prior,
           const std::vector<double>& s, double s_total) {
  const std::size_t nb = prior.size(), nt = kLacisHansenK.size();
  std::vector<double> a(nb, 1.0), c(nt, 1.0);
  double err = 1.0;
  for (int iter = 0; iter < 200000 && err > 1e-14; ++iter) {
    for (std::size_t i = 0; i < nt; ++i) {
      double m = 0.0;
      for (std::size_t b = 0; b < nb; ++b) m += s[b] * a[b] * prior[b][i];
      if (!(m > 0.0))
        throw std::invalid_argument("water-vapour table: no bin can carry term " +
                                    std::to_string(i));
      c[i] = kLacisHansenWeights[i] * s_total / m;
    }
    for (std::size_t b = 0; b < nb; ++b) {
      double m = 0.0;
      for (std::size_t i = 0; i < nt; ++i) m += prior[b][i] * c[i];
      a[b] = 1.0 / m;
    }
    if (iter % 50 == 0) {
      err = 0.0;
      for (std::size_t i = 0; i < nt; ++i) {
        double m = 0.0;
        for (std::size_t b = 0; b < nb; ++b) m += s[b] * a[b] * prior[b][i] * c[i];
        err = std::max(err, std::abs(m / s_total - kLacisHansenWeights[i]));
      }
    }
  }
  w.assign(nb, std::vector<double>(nt, 0.0));
  for (std::size_t b = 0; b < nb; ++b) {
    for (std::size_t i = 0; i < nt; ++i) w[b][i] = a[b] * prior[b][i] * c[i];
  }
  return err;
}

}  // namespace

double lacis_hansen_absorptance(double y) {
  // Lacis & Hansen (1974), eq. (18).
  return 2.9 * y / (std::pow(1.0 + 141.5 * y, 0.635) + 5.925 * y);
}

KTable h2o_lacis_hansen(const spectrum::Grid& grid, const std::vector<double>& bin_solar_w_m2,
                        const std::string& spectrum_name) {
  const std::vector<spectrum::Bin>& bins = grid.bins();
  if (bin_solar_w_m2.size() != bins.size()) {
    throw std::invalid_argument("water-vapour table: " + std::to_string(bin_solar_w_m2.size()) +
                                " solar values for " + std::to_string(bins.size()) + " bins");
  }
  double s_total = 0.0;
  for (double v : bin_solar_w_m2) {
    if (!std::isfinite(v) || v < 0.0)
      throw std::invalid_argument("water-vapour table: solar irradiance must be finite and >= 0");
    s_total += v;
  }
  if (std::none_of(bins.begin(), bins.end(),
                   [](const spectrum::Bin& b) { return b.center_nm >= kNearInfraredStartNm; })) {
    throw std::invalid_argument("water-vapour table: the grid has no bin at 700 nm or above");
  }
  const std::size_t nb = bins.size(), nt = kLacisHansenK.size();
  std::vector<std::vector<double>> prior(nb, std::vector<double>(nt, 0.0));
  for (std::size_t b = 0; b < nb; ++b) {
    if (bins[b].center_nm < kNearInfraredStartNm) {
      prior[b][0] = 1.0;
      continue;
    }
    const double lc = prior_log10_k(bins[b].center_nm);
    for (std::size_t i = 0; i < nt; ++i) {
      const double d = (std::log10(kLacisHansenK[i]) - lc) / kPriorWidthDecades;
      prior[b][i] = std::exp(-0.5 * d * d) + kPriorFloor;
    }
  }
  std::vector<std::vector<double>> w;
  double err = fit(w, prior, bin_solar_w_m2, s_total);
  for (int round = 0; round < 20; ++round) {
    bool pruned = false;
    for (std::size_t b = 0; b < nb; ++b) {
      for (std::size_t i = 0; i < nt; ++i) {
        if (prior[b][i] > 0.0 && w[b][i] < kPruneWeight) {
          prior[b][i] = 0.0;
          pruned = true;
        }
      }
    }
    if (!pruned) break;
    err = fit(w, prior, bin_solar_w_m2, s_total);
  }
  if (!(err < 1e-9)) {
    std::ostringstream m;
    m << "water-vapour table: the fit of the term weights did not converge (error " << err << ")";
    throw std::invalid_argument(m.str());
  }

  KTable t;
  t.origin = "built in";
  t.gas = "H2O";
  t.title =
      "H2O, Lacis & Hansen (1974) exponential sum spread over the grid: broadband representation; "
      "spectral detail in the near infrared approximate";
  t.source = {
      "Lacis, A. A. and Hansen, J. E. (1974), J. Atmos. Sci. 31, 118-133: 8-term exponential sum "
      "(k, weights as fractions of the total solar flux; values from memory)",
      "pressure scaling (p/1013 hPa)(273 K/T)^0.5 (Lacis & Hansen 1974; from memory); M = 18.015 "
      "g/mol",
      "broadband representation; spectral detail in the near infrared approximate"};
  t.generator = {
      "solstrata built-in (optics/h2o_lacis_hansen.cpp): iterative proportional fitting "
      "(Deming & Stephan 1940) of a band-centre prior; bins < 700 nm carry only k = 4e-5 cm2/g; "
      "terms below 1e-6 dropped"};
  t.weighting = "solar " + spectrum_name;
  t.pressure_hpa = {1e-5, 1e-4, 1e-3, 1e-2, 0.1, 1.0, 10.0, 100.0, kLacisHansenP0, 1100.0};
  for (double T = 153.0; T <= 353.0 + 1e-9; T += 10.0) t.temperature_k.push_back(T);
  const double per_molecule = kLacisHansenWaterMolarMass / atmos::kAvogadro;  // g molecule-1
  for (std::size_t b = 0; b < nb; ++b) {
    KTableBin kb;
    kb.lower_nm = bins[b].lower_nm;
    kb.upper_nm = bins[b].upper_nm;
    for (std::size_t i = 0; i < nt; ++i) {
      if (!(prior[b][i] > 0.0)) continue;
      kb.weights.push_back(w[b][i]);
      std::vector<double> k;
      k.reserve(t.pressure_hpa.size() * t.temperature_k.size());
      for (double p : t.pressure_hpa) {
        for (double T : t.temperature_k) {
          k.push_back(kLacisHansenK[i] * per_molecule * (p / kLacisHansenP0) *
                      std::sqrt(kLacisHansenT0 / T));
        }
      }
      kb.k.push_back(std::move(k));
    }
    t.bins.push_back(std::move(kb));
  }
  return t;
}

}  // namespace solstrata::optics
