// Fuzz target: scenario list CSV text (sweep.scenario_file) -> one zipped sweep axis
// (parse_scenario_csv). Bad input must be std::invalid_argument naming the file; an accepted
// table has equal-length, finite columns.
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>

#include "experiment/sweep.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace solstrata::experiment;
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    const SweepAxis a = parse_scenario_csv(text, "fuzz.csv", SourceMark{});
    if (a.parameters.empty() || a.size() == 0) __builtin_trap();
    for (const SweepParameter& p : a.parameters) {
      if (p.values.size() != a.size() || p.path.empty()) __builtin_trap();
      for (double v : p.values)
        if (!std::isfinite(v)) __builtin_trap();
    }
  } catch (const std::invalid_argument& e) {
    if (std::string(e.what()).find("fuzz.csv") == std::string::npos) __builtin_trap();
  }
  return 0;
}
