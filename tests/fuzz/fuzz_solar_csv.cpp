// Fuzz target: solar spectrum CSV text -> TabulatedSpectrum (parse_spectrum_csv), with no column
// choice and with a column chosen by number. Bad input must be a std::runtime_error naming the
// file; an accepted table must pass TabulatedSpectrum::validate().
#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>

#include "spectrum/solar.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace solstrata::spectrum;
  const std::string text(reinterpret_cast<const char*>(data), size);
  for (const char* column : {"", "2"}) {
    try {
      const TabulatedSpectrum s = parse_spectrum_csv(text, "fuzz.csv", column);
      if (!s.validate().empty()) __builtin_trap();
      (void)integrate(s, 300.0, 700.0);
    } catch (const std::runtime_error& e) {
      if (std::string(e.what()).rfind("fuzz.csv", 0) != 0) __builtin_trap();  // names the file
    }
  }
  return 0;
}
