#include "spectrum/solar.hpp"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <map>
#include <memory>
#include <mutex>
#include <sstream>
#include <stdexcept>

namespace solstrata::spectrum {
namespace {

// nm K: second radiation constant c2 = h c / k (CODATA 2018, exact SI constants).
constexpr double kC2 = 1.438776877e7;

std::string num(double x) {
  std::ostringstream s;
  s << x;
  return s.str();
}

std::string trim(std::string_view s) {
  const auto b = s.find_first_not_of(" \t\r\"");
  if (b == std::string_view::npos) return {};
  const auto e = s.find_last_not_of(" \t\r\"");
  return std::string(s.substr(b, e - b + 1));
}

std::vector<std::string> split_csv(const std::string& line) {
  std::vector<std::string> out;
  std::stringstream ss(line);
  std::string cell;
  while (std::getline(ss, cell, ',')) out.push_back(trim(cell));
  if (!line.empty() && line.back() == ',') out.emplace_back();
  return out;
}

// dimensionless: fraction of blackbody emission at wavelengths below the one with
// x = c2 / (lambda T). Series for the upper tail integral_x^inf t^3/(e^t - 1) dt
// = sum_n e^{-n x} (x^3/n + 3x^2/n^2 + 6x/n^3 + 6/n^4) (e.g. Siegel & Howell), which converges
// fast for large x; for small x the lower part integral_0^x is expanded with Bernoulli numbers
// (t^3/(e^t - 1) = t^2 - t^3/2 + t^4/12 - t^6/720 + t^8/30240 - t^10/1209600 + ...).
double blackbody_fraction_below(double x) {
  constexpr double kNorm = 15.0 / (std::numbers::pi * std::numbers::pi * std::numbers::pi *
                                   std::numbers::pi);
  if (x <= 0.0) return 1.0;  // lambda -> infinity
  if (x < 0.5) {
    // Truncation after x^11: the next term is below 1e-13 of the sum for x < 0.5.
    const double x2 = x * x, x3 = x2 * x;
    const double lower = x3 * (1.0 / 3.0 - x / 8.0 + x2 / 60.0 - x2 * x2 / 5040.0 +
                               x2 * x2 * x2 / 272160.0 - x2 * x2 * x2 * x2 / 13305600.0);
    return 1.0 - kNorm * lower;
  }
  double tail = 0.0;
  for (int n = 1; n < 200; ++n) {
    const double dn = n;
    const double term =
        std::exp(-dn * x) * (x * x * x / dn + 3 * x * x / (dn * dn) + 6 * x / (dn * dn * dn) +
                             6 / (dn * dn * dn * dn));
    tail += term;
    if (term < 1e-17 * tail) break;
  }
  return kNorm * tail;
}

}  // namespace

std::string TabulatedSpectrum::validate() const {
  if (wavelength_nm.size() != irradiance.size()) {
    return "spectrum '" + label + "': " + std::to_string(wavelength_nm.size()) +
           " wavelengths but " + std::to_string(irradiance.size()) + " irradiance values";
  }
  if (wavelength_nm.size() < 2) return "spectrum '" + label + "': needs at least 2 samples";
  for (std::size_t i = 0; i < wavelength_nm.size(); ++i) {
    if (!std::isfinite(wavelength_nm[i]) || wavelength_nm[i] <= 0.0) {
      return "spectrum '" + label + "': wavelength " + num(wavelength_nm[i]) + " nm at sample " +
             std::to_string(i) + " must be finite and > 0";
    }
    if (i > 0 && !(wavelength_nm[i] > wavelength_nm[i - 1])) {
      return "spectrum '" + label + "': wavelength " + num(wavelength_nm[i]) + " nm at sample " +
             std::to_string(i) + " must exceed the previous one (" + num(wavelength_nm[i - 1]) + ")";
    }
    if (!std::isfinite(irradiance[i]) || irradiance[i] < 0.0) {
      return "spectrum '" + label + "': irradiance " + num(irradiance[i]) + " W m-2 nm-1 at " +
             num(wavelength_nm[i]) + " nm must be finite and >= 0";
    }
  }
  return {};
}

TabulatedSpectrum read_spectrum_csv(const std::string& path, std::string_view column) {
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) {
    throw std::runtime_error(path + ": is a directory; expected a spectrum file (CSV)");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) throw std::runtime_error(path + ": cannot open the spectrum file: " + std::strerror(errno));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw std::runtime_error(path + ": cannot read the spectrum file: " + std::strerror(errno));
  return parse_spectrum_csv(text.str(), path, column);
}

TabulatedSpectrum parse_spectrum_csv(const std::string& text, const std::string& path, std::string_view column) {
  // A UTF-8 byte order mark (written by some spreadsheet programs) is not part of the header.
  std::istringstream in(text.rfind("\xEF\xBB\xBF", 0) == 0 ? text.substr(3) : text);
  std::string line;
  std::size_t line_no = 0;
  std::vector<std::string> header;
  while (std::getline(in, line)) {
    ++line_no;
    const std::string t = trim(line);
    if (t.empty() || t.front() == '#') continue;
    header = split_csv(t);
    break;
  }
  if (header.size() < 2) {
    throw std::runtime_error(path + ":" + std::to_string(line_no) +
                             ": expected a header line with a wavelength column and at least one "
                             "irradiance column");
  }
  std::size_t col = 0;  // index into header
  const std::string want = trim(column);
  if (want.empty()) {
    if (header.size() != 2) {
      std::string names;
      for (std::size_t i = 1; i < header.size(); ++i) names += (i > 1 ? ", " : "") + header[i];
      throw SpectrumColumnError(path + ": the file has " + std::to_string(header.size() - 1) +
                                " irradiance columns (" + names + "); choose one by name or number");
    }
    col = 1;
  } else {
    for (std::size_t i = 1; i < header.size(); ++i) {
      if (header[i] == want) col = i;
    }
    if (col == 0) {
      char* end = nullptr;
      const long k = std::strtol(want.c_str(), &end, 10);
      if (end && *end == '\0' && k >= 1 && static_cast<std::size_t>(k) < header.size()) {
        col = static_cast<std::size_t>(k);
      }
    }
    if (col == 0) {
      std::string names;
      for (std::size_t i = 1; i < header.size(); ++i) names += (i > 1 ? ", " : "") + header[i];
      throw SpectrumColumnError(path + ": no irradiance column '" + want + "' (columns: " + names +
                                "; or a number 1.." + std::to_string(header.size() - 1) + ")");
    }
  }
  TabulatedSpectrum s;
  s.label = path + " [" + header[col] + "]";
  while (std::getline(in, line)) {
    ++line_no;
    const std::string t = trim(line);
    if (t.empty() || t.front() == '#') continue;
    const std::vector<std::string> cells = split_csv(t);
    const std::string where = path + ":" + std::to_string(line_no) + ": ";
    if (cells.size() != header.size()) {
      throw std::runtime_error(where + "expected " + std::to_string(header.size()) +
                               " values, found " + std::to_string(cells.size()));
    }
    double v[2];
    const std::size_t idx[2] = {0, col};
    for (int k = 0; k < 2; ++k) {
      const std::string& c = cells[idx[k]];
      char* end = nullptr;
      errno = 0;
      v[k] = std::strtod(c.c_str(), &end);
      if (c.empty() || end == c.c_str() || *end != '\0' || errno == ERANGE || !std::isfinite(v[k])) {
        throw std::runtime_error(where + "'" + c + "' in column '" + header[idx[k]] +
                                 "' is not a finite number");
      }
    }
    if (!s.wavelength_nm.empty() && !(v[0] > s.wavelength_nm.back())) {
      throw std::runtime_error(where + "wavelength " + num(v[0]) +
                               " nm does not increase (previous " + num(s.wavelength_nm.back()) +
                               " nm)");
    }
    if (v[0] <= 0.0) throw std::runtime_error(where + "wavelength " + num(v[0]) + " nm must be > 0");
    if (v[1] < 0.0) {
      throw std::runtime_error(where + "irradiance " + num(v[1]) + " W m-2 nm-1 must be >= 0");
    }
    s.wavelength_nm.push_back(v[0]);
    s.irradiance.push_back(v[1]);
  }
  if (s.wavelength_nm.size() < 2) {
    throw std::runtime_error(path + ": needs at least 2 data rows, found " +
                             std::to_string(s.wavelength_nm.size()));
  }
  return s;
}

double integrate(const TabulatedSpectrum& s, double lower_nm, double upper_nm) {
  const std::vector<double>& w = s.wavelength_nm;
  const std::vector<double>& e = s.irradiance;
  if (w.size() < 2 || !(upper_nm > lower_nm)) return 0.0;
  const double a = std::max(lower_nm, w.front());
  const double b = std::min(upper_nm, w.back());
  if (!(b > a)) return 0.0;
  // First segment [w[i], w[i+1]] that reaches past a.
  std::size_t i = static_cast<std::size_t>(std::upper_bound(w.begin(), w.end(), a) - w.begin());
  i = i == 0 ? 0 : i - 1;
  double sum = 0.0;
  for (; i + 1 < w.size() && w[i] < b; ++i) {
    const double x0 = std::max(a, w[i]), x1 = std::min(b, w[i + 1]);
    if (!(x1 > x0)) continue;
    const double slope = (e[i + 1] - e[i]) / (w[i + 1] - w[i]);
    const double y0 = e[i] + slope * (x0 - w[i]), y1 = e[i] + slope * (x1 - w[i]);
    sum += 0.5 * (y0 + y1) * (x1 - x0);
  }
  return sum;
}

std::string_view to_string(SolarSourceKind k) {
  switch (k) {
    case SolarSourceKind::builtin_planck: return "builtin_planck";
    case SolarSourceKind::user_table: return "user_table";
    case SolarSourceKind::builtin_e490: return "builtin_e490";
  }
  return "unknown";
}

std::optional<SolarSourceKind> parse_solar_source_kind(std::string_view name) {
  for (SolarSourceKind k : {SolarSourceKind::builtin_planck, SolarSourceKind::user_table, SolarSourceKind::builtin_e490}) {
    if (to_string(k) == name) return k;
  }
  return std::nullopt;
}

double SolarSource::total() const {
  double t = 0.0;
  for (double v : bin_irradiance) t += v;
  return t;
}

double planck_solar_irradiance(double wavelength_nm) {
  // E = S pi B_lambda / (sigma T^4) with B_lambda = 2 h c^2 / lambda^5 / (exp(c2/(lambda T)) - 1);
  // pi 2 h c^2 / sigma = 15 c2^4 / pi^4 (since sigma = 2 pi^5 k^4 / (15 h^3 c^2)), so
  // E = S (15/pi^4) c2^4 / (T^4 lambda^5 (e^x - 1)),  x = c2/(lambda T), lambda in nm -> per nm.
  const double T = kSunEffectiveTemperature;
  const double x = kC2 / (wavelength_nm * T);
  const double pi4 = std::numbers::pi * std::numbers::pi * std::numbers::pi * std::numbers::pi;
  return kTotalSolarIrradiance * 15.0 / pi4 * std::pow(x, 4) / wavelength_nm / std::expm1(x);
}

SolarSource builtin_solar(const Grid& grid) {
  SolarSource s;
  s.kind = SolarSourceKind::builtin_planck;
  s.approximate = true;
  s.description =
      "built-in approximation: Planck spectrum at 5772 K scaled to a total solar irradiance of "
      "1360.8 W m-2 (Kopp & Lean 2011); indicative only, especially in the ultraviolet";
  const double T = kSunEffectiveTemperature;
  for (const Bin& b : grid.bins()) {
    // Fraction below upper minus fraction below lower; x decreases as lambda grows.
    const double f = blackbody_fraction_below(kC2 / (b.upper_nm * T)) -
                     blackbody_fraction_below(kC2 / (b.lower_nm * T));
    s.bin_irradiance.push_back(kTotalSolarIrradiance * std::max(f, 0.0));
    s.bin_coverage.push_back(1.0);
  }
  return s;
}

SolarSource tabulated_solar(const TabulatedSpectrum& t, const Grid& grid) {
  if (const std::string msg = t.validate(); !msg.empty()) throw std::invalid_argument(msg);
  if (t.wavelength_nm.back() <= grid.lower_nm() || t.wavelength_nm.front() >= grid.upper_nm()) {
    throw std::invalid_argument("spectrum '" + t.label + "' (" + num(t.wavelength_nm.front()) +
                                ".." + num(t.wavelength_nm.back()) +
                                " nm) does not overlap the spectral grid (" +
                                num(grid.lower_nm()) + ".." + num(grid.upper_nm()) + " nm)");
  }
  SolarSource s;
  s.kind = SolarSourceKind::user_table;
  s.approximate = false;
  s.description = "user-supplied spectrum " + t.label;
  for (const Bin& b : grid.bins()) {
    s.bin_irradiance.push_back(integrate(t, b.lower_nm, b.upper_nm));
    const double lo = std::max(b.lower_nm, t.wavelength_nm.front());
    const double hi = std::min(b.upper_nm, t.wavelength_nm.back());
    s.bin_coverage.push_back(hi > lo ? (hi - lo) / b.width_nm() : 0.0);
  }
  return s;
}

double e490_scale_factor(const TabulatedSpectrum& e490) {
  const double total = integrate(e490, e490.wavelength_nm.front(), e490.wavelength_nm.back());
  if (!(total > 0.0)) throw std::invalid_argument("spectrum '" + e490.label + "' integrates to " + num(total) + " W m-2");
  return kNominalTotalSolarIrradiance / total;
}

SolarSource builtin_e490_solar(const Grid& grid, const std::string& data_dir) {
  const std::string path = data_dir + "/" + kE490RelativePath;
  // Read once per process and path: sweeps build a source per scenario.
  static std::mutex mutex;
  static std::map<std::string, std::shared_ptr<const TabulatedSpectrum>> read;
  std::shared_ptr<const TabulatedSpectrum> table;
  {
    std::lock_guard<std::mutex> lock(mutex);
    auto& slot = read[path];
    if (!slot) slot = std::make_shared<const TabulatedSpectrum>(read_spectrum_csv(path));
    table = slot;
  }
  const TabulatedSpectrum& e490 = *table;
  const double f = e490_scale_factor(e490);
  SolarSource s = tabulated_solar(e490, grid);
  for (double& v : s.bin_irradiance) v *= f;
  s.kind = SolarSourceKind::builtin_e490;
  s.approximate = false;
  std::ostringstream d;
  d.precision(6);
  d << "built-in ASTM E490-00a air-mass-zero spectrum at its native resolution, integrated onto the bins and "
       "rescaled by "
    << f << " from its own total of " << kNominalTotalSolarIrradiance / f
    << " W m-2 to a total solar irradiance of 1361 W m-2 (IAU 2015 Resolution B3; Kopp & Lean 2011)";
  s.description = d.str();
  return s;
}

}  // namespace solstrata::spectrum
