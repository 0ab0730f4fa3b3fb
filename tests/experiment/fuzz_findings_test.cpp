// Regression tests for what the fuzz targets (tests/fuzz/, scripts/fuzz) found in the readers of
// experiment files: each reproducer is kept here as found (or minimised), with the expected outcome:
// an InputError naming the file and position, never a hang, a crash or unbounded memory.
#include <catch2/catch.hpp>

#include <string>

#include "experiment/input_error.hpp"
#include "experiment/sweep.hpp"
#include "experiment/yaml_reader.hpp"

using namespace solstrata::experiment;

namespace {

/// The InputError that parsing `text` throws (fails the test if none is thrown).
InputError parse_error(const std::string& text) {
  try {
    (void)Document::parse(text, "found.yaml");
  } catch (const InputError& e) {
    return e;
  }
  FAIL("no InputError for: " << text);
  return InputError("", {}, "", "");
}

}  // namespace

TEST_CASE("a document starting with ',' is a syntax error, not an endless loop", "[experiment][fuzz]") {
  // fuzz_experiment, timeout (yaml-cpp 0.7 built nodes until memory ran out): the input as found.
  const std::string found = ", somereference_waveleere (invented)aerosol:pth x 320gle-septh: 0.2}catt\ns";
  const InputError e = parse_error(found);
  CHECK(e.file() == "found.yaml");
  CHECK(e.line() == 1);
  CHECK(e.column() == 1);
  CHECK(std::string(e.what()).find("YAML syntax error") != std::string::npos);
  // Minimised forms: a ',' as the first token of any document (after a marker, anchor or tag).
  for (const char* text : {",", "  ,", "# comment\n,", "--- ,", "&a ,", "!t ,", "a: 1\n---\n,"}) {
    INFO(text);
    const InputError m = parse_error(text);
    CHECK(m.line() >= 1);
    CHECK(std::string(m.what()).find("found.yaml:") == 0);
  }
  // Through the whole loader as well (Study::parse reads the text three ways).
  CHECK_THROWS_AS(Study::parse(found, "found.yaml", "."), InputError);
}
