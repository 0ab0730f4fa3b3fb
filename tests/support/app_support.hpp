// Helpers of the command-line tests: reading a file whole, comparing two output files.
#pragma once

#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "io/hdf5_reader.hpp"
#include "support/fixtures.hpp"

namespace solstrata::testing {

/// The whole content of a file ("" when it cannot be read).
inline std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

/// Every variable of two files holds the same values (bit for bit) and the same attributes,
/// except the creation time in the global `history`.
inline void same_content(const std::filesystem::path& a, const std::filesystem::path& b) {
  const auto names = io::list_datasets(a);
  REQUIRE(names == io::list_datasets(b));
  for (const std::string& n : names) {
    const auto x = io::read_variable(a, n), y = io::read_variable(b, n);
    INFO(n);
    CHECK(x.dimensions == y.dimensions);
    CHECK(x.values == y.values);
    CHECK(x.texts == y.texts);
    CHECK(x.attributes == y.attributes);
  }
  auto ga = io::read_global_attributes(a), gb = io::read_global_attributes(b);
  ga.erase("history");
  gb.erase("history");
  CHECK(ga == gb);
}

}  // namespace solstrata::testing
