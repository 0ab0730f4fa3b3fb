// Fuzz target: bytes of a sweep checkpoint (OUT.h5.partial) -> read_checkpoint. A damaged file
// must be an OutputError or a shorter valid prefix; every record offset it reports must lie
// inside the valid prefix.
#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string>

#include "io/atomic_file.hpp"
#include "io/checkpoint.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace solstrata::io;
  std::istringstream in(std::string(reinterpret_cast<const char*>(data), size));
  try {
    const CheckpointContents c = read_checkpoint(in, "fuzz.partial");
    if (c.valid_bytes > size) __builtin_trap();
    for (const auto& [scenario, offset] : c.offsets) {
      if (scenario >= c.header.n_scenarios) __builtin_trap();
      if (offset + c.header.record_values * sizeof(double) > c.valid_bytes) __builtin_trap();
    }
  } catch (const OutputError& e) {
    if (std::string(e.what()).rfind("fuzz.partial", 0) != 0) __builtin_trap();
  }
  return 0;
}
