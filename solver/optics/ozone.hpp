// Ozone absorption cross sections (Hartley, Huggins and Chappuis bands).
#pragma once

#include <span>
#include <string_view>

namespace solstrata::optics {

/// One tabulated ozone cross section.
struct OzoneCrossSectionEntry {
  double wavelength_nm;  ///< nm (air)
  double sigma_cm2;      ///< cm2 molecule-1 at kOzoneReferenceTemperature
  /// K-1: relative temperature coefficient c in sigma(T) = sigma(T_ref) (1 + c (T - T_ref))
  double temperature_coefficient;
  std::string_view source;  ///< where the value comes from, with 'from memory' where it is
};

/// K: the temperature the table refers to (room temperature, as the anchor values).
inline constexpr double kOzoneReferenceTemperature = 294.0;
/// nm: the table's range; below its first entry the cross section is not defined (an error),
/// above its last entry ozone absorption is taken as zero.
inline constexpr double kOzoneTableLowerNm = 230.0;
inline constexpr double kOzoneTableUpperNm = 1100.0;

/// The built-in table, 230-1100 nm. See ozone.cpp for the source of every entry.
std::span<const OzoneCrossSectionEntry> ozone_cross_section_table();

/// cm2 molecule-1: ozone absorption cross section at `wavelength_nm`, interpolated linearly in
/// log(sigma) between table entries (the bands are close to exponential in wavelength); zero
/// above kOzoneTableUpperNm. With `temperature_k` > 0 the relative temperature coefficient is
/// applied (factor floored at 0.1); with 0 the reference-temperature value is returned.
/// Throws std::invalid_argument below kOzoneTableLowerNm or for a non-finite wavelength.
double ozone_cross_section(double wavelength_nm, double temperature_k = 0.0);

}  // namespace solstrata::optics
