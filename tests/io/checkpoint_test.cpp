// The sweep checkpoint reader on damaged files, including what tests/fuzz/fuzz_checkpoint found.
#include "io/checkpoint.hpp"

#include <catch2/catch.hpp>

#include <cstdint>
#include <sstream>
#include <string>
#include <vector>

#include "io/atomic_file.hpp"

using namespace solstrata::io;

namespace {

std::string bytes(const std::vector<unsigned char>& b) { return std::string(b.begin(), b.end()); }

/// A checkpoint header: magic (the 16 bytes of checkpoint.cpp's kMagic), hash, scenarios, values.
std::string header(std::uint64_t n, std::uint64_t values) {
  std::string s = "SOLSTRATA-CKPT1\n";
  const std::uint64_t h[3] = {0x1234, n, values};
  s.append(reinterpret_cast<const char*>(h), sizeof h);
  return s;
}

}  // namespace

TEST_CASE("a checkpoint header asking for gigabytes is refused without allocating them", "[io][fuzz]") {
  // fuzz_checkpoint, out-of-memory (malloc of 5368709160 bytes): the 41 bytes as found, a header
  // whose record length is 0x28000005 doubles.
  const std::string found = bytes({0x53, 0x4f, 0x4c, 0x53, 0x54, 0x52, 0x41, 0x54, 0x41, 0x2d, 0x43, 0x4b, 0x50, 0x54,
                                   0x31, 0x0a, 0x34, 0x12, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x0a, 0x00, 0x00, 0x00,
                                   0x00, 0x84, 0x00, 0x00, 0x05, 0x00, 0x00, 0x28, 0x00, 0x00, 0x00, 0x00, 0x00});
  std::istringstream in(found);
  CHECK_THROWS_AS(read_checkpoint(in, "found.partial"), OutputError);
  // A plausible record length that the file is too short to hold: no records, no allocation.
  std::istringstream short_file(header(10, 1u << 20) + std::string(100, '\0'));
  const CheckpointContents c = read_checkpoint(short_file, "short.partial");
  CHECK(c.offsets.empty());
  CHECK(c.valid_bytes == 40);
}

TEST_CASE("a checkpoint keeps its valid records and stops at a torn one", "[io]") {
  // One record of 2 values: index, values, FNV-1a checksum of index then values (checkpoint.hpp).
  const std::uint64_t index = 1;
  const double v[2] = {1.5, -2.0};
  const std::uint64_t sum = fnv1a(v, sizeof v, fnv1a(&index, sizeof index));
  std::string rec(reinterpret_cast<const char*>(&index), 8);
  rec.append(reinterpret_cast<const char*>(v), sizeof v);
  rec.append(reinterpret_cast<const char*>(&sum), 8);
  std::istringstream whole(header(3, 2) + rec + rec.substr(0, 20));
  const CheckpointContents c = read_checkpoint(whole, "t.partial");
  REQUIRE(c.offsets.size() == 1);
  CHECK(c.offsets.at(1) == 48);
  CHECK(c.valid_bytes == 40 + 32);
  // A record naming a scenario beyond the study ends the valid part too.
  std::istringstream beyond(header(1, 2) + rec);
  CHECK(read_checkpoint(beyond, "b.partial").offsets.empty());
}
