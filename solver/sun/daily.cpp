#include "sun/daily.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <vector>

#include "sun/position.hpp"

namespace solstrata::sun {

double sunset_hour_angle(double lat, double dec) {
  const double c = -std::tan(lat) * std::tan(dec);
  if (c >= 1.0) return 0.0;               // polar night
  if (c <= -1.0) return std::numbers::pi;  // polar day
  return std::acos(c);
}

double daily_mean_toa(double s0, double factor, double lat, double dec) {
  const double h0 = sunset_hour_angle(lat, dec);
  return s0 / std::numbers::pi * factor *
         (h0 * std::sin(lat) * std::sin(dec) + std::cos(lat) * std::cos(dec) * std::sin(h0));
}

GaussLegendre gauss_legendre(int n) {
  if (n < 1 || n > 1000) throw std::invalid_argument("gauss_legendre: nodes must be 1..1000");
  // Newton iteration on P_n from the Chebyshev-like first guess (Golub & Welsch 1969 give the
  // same nodes; the recurrence is Bonnet's, common practice).
  GaussLegendre q;
  q.x.assign(static_cast<std::size_t>(n), 0.0);
  q.w.assign(static_cast<std::size_t>(n), 0.0);
  for (int i = 0; i < (n + 1) / 2; ++i) {
    double x = std::cos(std::numbers::pi * (i + 0.75) / (n + 0.5));
    double dp = 1.0;
    for (int it = 0; it < 100; ++it) {
      double p0 = 1.0, p1 = x;
      for (int k = 2; k <= n; ++k) {
        const double p2 = ((2.0 * k - 1.0) * x * p1 - (k - 1.0) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      if (n == 1) p0 = 1.0, p1 = x;
      dp = n * (x * p1 - p0) / (x * x - 1.0);
      const double dx = p1 / dp;
      x -= dx;
      if (std::abs(dx) < 1e-15) break;
    }
    const double w = 2.0 / ((1.0 - x * x) * dp * dp);
    q.x[static_cast<std::size_t>(i)] = -x;
    q.w[static_cast<std::size_t>(i)] = w;
    q.x[static_cast<std::size_t>(n - 1 - i)] = x;
    q.w[static_cast<std::size_t>(n - 1 - i)] = w;
  }
  if (n % 2 == 1) q.x[static_cast<std::size_t>(n / 2)] = 0.0;
  return q;
}

double integrate_daylight(const std::function<double(double)>& f, double lat, double dec, int nodes) {
  if (nodes < 1 || nodes > 1000) throw std::invalid_argument("integrate_daylight: nodes must be 1..1000");
  const double h0 = sunset_hour_angle(lat, dec);
  if (h0 <= 0.0) return 0.0;
  const GaussLegendre q = gauss_legendre(nodes);
  double sum = 0.0;
  for (std::size_t i = 0; i < q.x.size(); ++i) sum += q.w[i] * f(h0 * q.x[i]);
  return sum * h0;
}

std::vector<double> sign_changes(const std::function<double(double)>& f, double from_unix, double to_unix) {
  constexpr double kSample = 300.0;
  std::vector<double> out;
  double t0 = from_unix, f0 = f(t0);
  while (t0 < to_unix) {
    const double t1 = std::min(t0 + kSample, to_unix), f1 = f(t1);
    if ((f0 > 0.0) != (f1 > 0.0)) {
      double a = t0, b = t1, fa = f0;
      for (int it = 0; it < 40 && b - a > 0.01; ++it) {
        const double m = 0.5 * (a + b), fm = f(m);
        if ((fm > 0.0) == (fa > 0.0)) a = m, fa = fm;
        else b = m;
      }
      out.push_back(0.5 * (a + b));
    }
    t0 = t1;
    f0 = f1;
  }
  return out;
}

std::vector<std::pair<double, double>> daylight_intervals(const Site& site, double from_unix, double to_unix,
                                                          bool refracted, double min_elevation_deg) {
  if (!(to_unix > from_unix) || !std::isfinite(from_unix) || !std::isfinite(to_unix)) {
    throw std::invalid_argument("daylight_intervals: the interval must be finite and not empty");
  }
  const auto elevation = [&](double t) {
    const SolarPosition p = solar_position(site, {t});
    return 90.0 - (refracted ? p.zenith_deg : p.true_zenith_deg) - min_elevation_deg;
  };
  // Sampled every 5 minutes (the sun moves at most 1.25 degrees in that time, so no daylight
  // shorter than that is missed except grazing ones at the poles), then each sign change refined
  // by bisection to 0.01 s.
  constexpr double kSample = 300.0;
  std::vector<std::pair<double, double>> out;
  double t0 = from_unix, e0 = elevation(t0);
  double rise = e0 > 0.0 ? from_unix : NAN;
  const auto refine = [&](double a, double b, double ea) {
    for (int it = 0; it < 40 && b - a > 0.01; ++it) {
      const double m = 0.5 * (a + b), em = elevation(m);
      if ((em > 0.0) == (ea > 0.0)) a = m, ea = em;
      else b = m;
    }
    return 0.5 * (a + b);
  };
  while (t0 < to_unix) {
    const double t1 = std::min(t0 + kSample, to_unix), e1 = elevation(t1);
    if ((e0 > 0.0) != (e1 > 0.0)) {
      const double c = refine(t0, t1, e0);
      if (e1 > 0.0) rise = c;
      else {
        out.emplace_back(rise, c);
        rise = NAN;
      }
    }
    t0 = t1;
    e0 = e1;
  }
  if (!std::isnan(rise)) out.emplace_back(rise, to_unix);
  return out;
}

double extraterrestrial_insolation(const Site& site, double from_unix, double to_unix, double s0, int nodes) {
  const GaussLegendre q = gauss_legendre(nodes);
  Site geometric = site;
  geometric.pressure_hpa = 0.0;  // no refraction
  double sum = 0.0;
  for (const auto& [rise, set] : daylight_intervals(geometric, from_unix, to_unix, false)) {
    const double mid = 0.5 * (rise + set), half = 0.5 * (set - rise);
    for (std::size_t k = 0; k < q.x.size(); ++k) {
      const SolarPosition p = solar_position(geometric, {mid + half * q.x[k]});
      const double mu = std::cos(p.true_zenith_deg * std::numbers::pi / 180.0);
      sum += half * q.w[k] * s0 * p.distance_factor * std::max(0.0, mu);
    }
  }
  return sum;
}

}  // namespace solstrata::sun
