#include "sun/daily.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <vector>

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

double integrate_daylight(const std::function<double(double)>& f, double lat, double dec, int nodes) {
  if (nodes < 1 || nodes > 1000) throw std::invalid_argument("integrate_daylight: nodes must be 1..1000");
  const double h0 = sunset_hour_angle(lat, dec);
  if (h0 <= 0.0) return 0.0;
  // Gauss-Legendre nodes and weights on [-1, 1] by Newton iteration on P_n (Golub & Welsch 1969
  // give the same; the recurrence is Bonnet's, common practice).
  double sum = 0.0;
  const int n = nodes;
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
    const bool middle = (n % 2 == 1) && i == (n - 1) / 2;
    sum += w * f(h0 * x);
    if (!middle) sum += w * f(-h0 * x);
  }
  return sum * h0;
}

}  // namespace solstrata::sun
