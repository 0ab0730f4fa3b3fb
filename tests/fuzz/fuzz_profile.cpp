// Fuzz target: atmosphere profile file text (profiles/*.yaml format) -> validated Profile.
// Bad input must be an InputError.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <string>

#include "experiment/experiment.hpp"
#include "experiment/input_error.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace solstrata;
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const atmos::Profile p = experiment::parse_profile(text, "fuzz_profile.yaml");
    // An accepted profile is valid: at least two levels, finite values, pressure increasing.
    if (p.pressure_hpa.size() < 2 || !p.validate().empty()) __builtin_trap();
    for (std::size_t i = 0; i < p.pressure_hpa.size(); ++i) {
      if (!std::isfinite(p.pressure_hpa[i]) || !std::isfinite(p.temperature_k[i])) __builtin_trap();
      if (i > 0 && !(p.pressure_hpa[i] > p.pressure_hpa[i - 1])) __builtin_trap();
    }
  } catch (const experiment::InputError& e) {
    if (std::string(e.what()).empty()) __builtin_trap();
  }
  return 0;
}
