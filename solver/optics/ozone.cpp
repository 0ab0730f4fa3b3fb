#include "optics/ozone.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <stdexcept>
#include <string>

namespace solstrata::optics {
namespace {

// Sources of the entries (typed in by hand; no file from any other program is used):
//  [J18]  Janssen, Elandaloussi & Gröbner (2018), Atmos. Meas. Tech. 11, 1707: 1.6470e-20 cm2 at
//         325.126 nm (vacuum; 325.03 nm in air), 294 K, temperature coefficient 0.0031 K-1.
//         Published.
//  [H19]  Hodges et al. (2019), Metrologia 56, 034001: 1.1329e-17 cm2 at 253.65 nm (Hg line),
//         room temperature. From memory.
//  [mem]  Smooth room-temperature band shapes of the Hartley, Huggins (structure smoothed) and
//         Chappuis bands as in the widely used laboratory sets (e.g. Molina & Molina 1986,
//         J. Geophys. Res. 91, 14501; Burrows et al. 1999, JQSRT 61, 509), recalled at 5-20 nm
//         spacing: FROM MEMORY, uncertain by about 10-20 % in the Hartley/Huggins bands and the
//         Chappuis peak, 30 % or more in the Chappuis wings and the Wulf bands beyond 700 nm.
//  [memT] Temperature coefficients in the Huggins band recalled from the same laboratory sets:
//         FROM MEMORY (only 325 nm is published, [J18]); the Hartley and Chappuis bands are
//         treated as temperature independent (their dependence is a few percent over 200-300 K).
constexpr std::string_view kJ18 = "Janssen et al. 2018, 294 K (published)";
constexpr std::string_view kH19 = "Hodges et al. 2019, room temperature (from memory)";
constexpr std::string_view kMem = "smooth band shape, room temperature (from memory)";

constexpr std::array<OzoneCrossSectionEntry, 95> kTable = {{
    // Hartley band
    {230.0, 4.2e-18, 0.0, kMem},
    {235.0, 6.0e-18, 0.0, kMem},
    {240.0, 7.8e-18, 0.0, kMem},
    {245.0, 9.6e-18, 0.0, kMem},
    {250.0, 1.08e-17, 0.0, kMem},
    {253.65, 1.1329e-17, 0.0, kH19},
    {257.0, 1.14e-17, 0.0, kMem},
    {260.0, 1.10e-17, 0.0, kMem},
    {265.0, 9.7e-18, 0.0, kMem},
    {270.0, 8.0e-18, 0.0, kMem},
    {275.0, 6.0e-18, 0.0, kMem},
    {280.0, 3.95e-18, 0.0, kMem},
    {285.0, 2.4e-18, 0.0, kMem},
    {290.0, 1.3e-18, 0.0, kMem},
    {295.0, 6.7e-19, 0.0005, kMem},
    // Huggins band (vibrational structure smoothed)
    {300.0, 3.8e-19, 0.0008, kMem},
    {305.0, 1.8e-19, 0.0012, kMem},
    {310.0, 9.5e-20, 0.0016, kMem},
    {315.0, 5.2e-20, 0.0020, kMem},
    {320.0, 3.0e-20, 0.0025, kMem},
    {325.03, 1.647e-20, 0.0031, kJ18},
    {330.0, 6.8e-21, 0.0038, kMem},
    {335.0, 3.3e-21, 0.0045, kMem},
    {340.0, 1.5e-21, 0.0050, kMem},
    {345.0, 7.5e-22, 0.0055, kMem},
    {350.0, 3.8e-22, 0.0060, kMem},
    {355.0, 1.8e-22, 0.0060, kMem},
    {360.0, 9.0e-23, 0.0050, kMem},
    {365.0, 5.0e-23, 0.0040, kMem},
    {370.0, 3.0e-23, 0.0020, kMem},
    {375.0, 1.8e-23, 0.0, kMem},
    {380.0, 1.1e-23, 0.0, kMem},
    {390.0, 1.0e-23, 0.0, kMem},
    // Chappuis band
    {400.0, 1.5e-23, 0.0, kMem},
    {410.0, 2.8e-23, 0.0, kMem},
    {420.0, 5.0e-23, 0.0, kMem},
    {430.0, 8.0e-23, 0.0, kMem},
    {440.0, 1.3e-22, 0.0, kMem},
    {450.0, 2.2e-22, 0.0, kMem},
    {460.0, 3.4e-22, 0.0, kMem},
    {470.0, 5.0e-22, 0.0, kMem},
    {480.0, 7.0e-22, 0.0, kMem},
    {490.0, 9.5e-22, 0.0, kMem},
    {500.0, 1.25e-21, 0.0, kMem},
    {510.0, 1.6e-21, 0.0, kMem},
    {520.0, 1.95e-21, 0.0, kMem},
    {530.0, 2.5e-21, 0.0, kMem},
    {540.0, 2.8e-21, 0.0, kMem},
    {550.0, 3.25e-21, 0.0, kMem},
    {560.0, 3.7e-21, 0.0, kMem},
    {570.0, 4.4e-21, 0.0, kMem},
    {580.0, 4.6e-21, 0.0, kMem},
    {590.0, 4.6e-21, 0.0, kMem},
    {596.0, 4.9e-21, 0.0, kMem},
    {603.0, 5.05e-21, 0.0, kMem},
    {610.0, 4.8e-21, 0.0, kMem},
    {620.0, 4.3e-21, 0.0, kMem},
    {630.0, 3.7e-21, 0.0, kMem},
    {640.0, 3.2e-21, 0.0, kMem},
    {650.0, 2.6e-21, 0.0, kMem},
    {660.0, 2.2e-21, 0.0, kMem},
    {670.0, 1.8e-21, 0.0, kMem},
    {680.0, 1.5e-21, 0.0, kMem},
    {690.0, 1.2e-21, 0.0, kMem},
    {700.0, 9.5e-22, 0.0, kMem},
    {710.0, 8.0e-22, 0.0, kMem},
    {720.0, 6.5e-22, 0.0, kMem},
    {730.0, 5.5e-22, 0.0, kMem},
    {740.0, 4.6e-22, 0.0, kMem},
    {750.0, 3.9e-22, 0.0, kMem},
    {760.0, 3.3e-22, 0.0, kMem},
    {770.0, 2.8e-22, 0.0, kMem},
    {780.0, 2.4e-22, 0.0, kMem},
    {790.0, 2.1e-22, 0.0, kMem},
    {800.0, 1.9e-22, 0.0, kMem},
    {820.0, 1.6e-22, 0.0, kMem},
    {840.0, 1.4e-22, 0.0, kMem},
    {860.0, 1.3e-22, 0.0, kMem},
    {880.0, 1.2e-22, 0.0, kMem},
    {900.0, 1.0e-22, 0.0, kMem},
    {920.0, 8.5e-23, 0.0, kMem},
    {940.0, 7.0e-23, 0.0, kMem},
    {960.0, 6.0e-23, 0.0, kMem},
    {980.0, 5.2e-23, 0.0, kMem},
    {1000.0, 4.5e-23, 0.0, kMem},
    {1010.0, 4.2e-23, 0.0, kMem},
    {1020.0, 3.9e-23, 0.0, kMem},
    {1030.0, 3.6e-23, 0.0, kMem},
    {1040.0, 3.3e-23, 0.0, kMem},
    {1050.0, 3.0e-23, 0.0, kMem},
    {1060.0, 2.6e-23, 0.0, kMem},
    {1070.0, 2.2e-23, 0.0, kMem},
    {1080.0, 1.9e-23, 0.0, kMem},
    {1090.0, 1.7e-23, 0.0, kMem},
    {1100.0, 1.5e-23, 0.0, kMem},
}};

}  // namespace

std::span<const OzoneCrossSectionEntry> ozone_cross_section_table() { return kTable; }

double ozone_cross_section(double wavelength_nm, double temperature_k) {
  if (!std::isfinite(wavelength_nm) || wavelength_nm < kOzoneTableLowerNm) {
    throw std::invalid_argument("ozone cross section: wavelength " + std::to_string(wavelength_nm) +
                                " nm is below the table's range (starts at 230 nm)");
  }
  if (wavelength_nm > kOzoneTableUpperNm) return 0.0;
  const auto it = std::upper_bound(kTable.begin(), kTable.end(), wavelength_nm,
                                   [](double w, const OzoneCrossSectionEntry& e) {
                                     return w < e.wavelength_nm;
                                   });
  const std::size_t hi = std::min<std::size_t>(static_cast<std::size_t>(it - kTable.begin()),
                                               kTable.size() - 1);
  const std::size_t lo = hi == 0 ? 0 : hi - 1;
  const OzoneCrossSectionEntry& a = kTable[lo];
  const OzoneCrossSectionEntry& b = kTable[hi];
  const double t = hi == lo ? 0.0 : (wavelength_nm - a.wavelength_nm) / (b.wavelength_nm - a.wavelength_nm);
  double sigma = std::exp((1 - t) * std::log(a.sigma_cm2) + t * std::log(b.sigma_cm2));
  if (temperature_k > 0.0) {
    const double c = (1 - t) * a.temperature_coefficient + t * b.temperature_coefficient;
    sigma *= std::max(0.1, 1.0 + c * (temperature_k - kOzoneReferenceTemperature));
  }
  return sigma;
}

}  // namespace solstrata::optics
