#include "experiment/closest_name.hpp"

#include <catch2/catch.hpp>
#include <string>
#include <vector>

using namespace solstrata::experiment;

TEST_CASE("edit distance matches the textbook examples", "[experiment]") {
  // Classic example: kitten -> sitting takes 3 edits (common practice).
  CHECK(edit_distance("kitten", "sitting") == 3);
  CHECK(edit_distance("", "abc") == 3);
  CHECK(edit_distance("abc", "") == 3);
  CHECK(edit_distance("ozone", "ozone") == 0);
  // A swap of two neighbours is one edit (Damerau 1964), where plain Levenshtein counts two.
  CHECK(edit_distance("ab", "ba") == 1);
  CHECK(edit_distance("albdeo", "albedo") == 1);
  // Optimal string alignment does not edit a substring twice: "ca" -> "abc" is 3, not the
  // unrestricted Damerau-Levenshtein 2 (from memory; the standard example of the difference).
  CHECK(edit_distance("ca", "abc") == 3);
}

TEST_CASE("closest name suggests near misses and nothing for far ones", "[experiment]") {
  const std::vector<std::string> keys = {"ozone", "water_vapour", "surface_albedo", "levels"};
  CHECK(closest_name("ozon", keys) == "ozone");
  CHECK(closest_name("Ozone", keys) == "ozone");
  CHECK(closest_name("water_vapor", keys) == "water_vapour");
  CHECK(closest_name("surface_albdeo", keys) == "surface_albedo");
  CHECK(closest_name("temperature", keys).empty());
  CHECK(closest_name("lv", keys).empty());
  CHECK(closest_name("x", std::vector<std::string>{}).empty());
}
