// Fuzz target: experiment file text -> validated study (Study::parse, the first and last
// scenario and the aerosol-free companion), no solve. Bad input must be an InputError.
#include <cstddef>
#include <cstdint>
#include <string>

#include "experiment/input_error.hpp"
#include "experiment/sweep.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace solstrata::experiment;
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    // Relative paths (profile, solar spectrum, scenario file) resolve in config/, as for the
    // example experiments the corpus starts from.
    const Study s = Study::parse(text, "fuzz.yaml", SOLSTRATA_SOURCE_DIR "/config");
    const std::size_t n = s.size();
    (void)s.scenario(0);
    if (n > 1) (void)s.scenario(n - 1);
    if (s.has_aerosol()) (void)s.aerosol_free(n - 1);
  } catch (const InputError& e) {
    if (std::string(e.what()).empty()) __builtin_trap();  // every error has a message
  }
  return 0;
}
