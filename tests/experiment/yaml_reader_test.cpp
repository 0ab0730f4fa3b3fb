#include "experiment/yaml_reader.hpp"

#include <algorithm>
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <functional>
#include <string>

#include "support/temp_dir.hpp"

using namespace solstrata::experiment;

namespace {

/// 1-based line and column of the first occurrence of `needle` in `text`, counted here
/// independently of yaml-cpp.
SourceMark position_of(const std::string& text, const std::string& needle) {
  const std::size_t at = text.find(needle);
  REQUIRE(at != std::string::npos);
  const std::size_t line_start = text.rfind('\n', at == 0 ? 0 : at - 1);
  const int line =
      1 + static_cast<int>(std::count(text.begin(), text.begin() + static_cast<long>(at), '\n'));
  const std::size_t col0 = (line_start == std::string::npos || at == 0) ? at : at - line_start - 1;
  return {line, static_cast<int>(col0) + 1};
}

/// Runs `read` on the parsed text and returns the InputError it must throw.
InputError error_from(const std::string& text, const std::function<void(Section&)>& read) {
  try {
    Section root = Document::parse(text, "exp.yaml").root();
    read(root);
  } catch (const InputError& e) {
    return e;
  }
  FAIL("no InputError was thrown for:\n" << text);
  throw std::logic_error("unreachable");
}

/// Checks an error's position, key, message and the rendered excerpt with its caret.
void check_error(const InputError& e, SourceMark where, const std::string& key,
                 const std::vector<std::string>& message_parts) {
  INFO("what():\n" << e.what());
  CHECK(e.file() == "exp.yaml");
  CHECK(e.line() == where.line);
  CHECK(e.column() == where.column);
  CHECK(e.key_path() == key);
  for (const std::string& part : message_parts) CHECK_THAT(e.message(), Catch::Contains(part));
  const std::string what = e.what();
  const std::string head = "exp.yaml:" + std::to_string(where.line) + ":" +
                           std::to_string(where.column) +
                           ": error: " + (key.empty() ? "" : key + ": ") + e.message();
  CHECK(what.rfind(head, 0) == 0);
  // Last two lines: "  <source line>" and "  <spaces>^" with the caret under the column.
  const std::size_t caret_nl = what.rfind('\n');
  const std::size_t source_nl = what.rfind('\n', caret_nl - 1);
  REQUIRE(caret_nl != std::string::npos);
  REQUIRE(source_nl != std::string::npos);
  const std::string source = what.substr(source_nl + 1, caret_nl - source_nl - 1);
  const std::string caret = what.substr(caret_nl + 1);
  CHECK(source == "  " + e.source_line());
  CHECK(caret == std::string(static_cast<std::size_t>(1 + where.column), ' ') + "^");
}

}  // namespace

TEST_CASE("a well-formed section reads with values and positions", "[experiment]") {
  const std::string text =
      "title: invented clear day\n"
      "closure: delta_eddington\n"
      "ozone: 300           # DU\n"
      "threads: 2\n"
      "write_layers: true\n"
      "levels: [1000, 850, 500.5]\n"
      "aerosol:\n"
      "  layers:\n"
      "    - {optical_depth: 0.1, omega: 0.9}\n"
      "    - optical_depth: 0.2\n"
      "      omega: 1\n"
      "bands: [uv, visible]\n";
  Section root = Document::parse(text, "exp.yaml").root();
  CHECK(root.required_string("title").value == "invented clear day");
  CHECK(root.choice("closure", {"eddington", "delta_eddington"}).value == "delta_eddington");
  const auto ozone = root.required_number("ozone", Range::greater_than(0), "DU");
  CHECK(ozone.value == 300);
  CHECK(ozone.mark == position_of(text, "300"));
  CHECK(ozone.key == "ozone");
  CHECK(root.optional_integer("threads", 1, Range::at_least(1)).value == 2);
  CHECK(root.optional_bool("write_layers", false).value);
  const auto missing = root.optional_number("surface_albedo", 0.2, Range::closed(0, 1));
  CHECK(missing.value == 0.2);
  CHECK_FALSE(missing.given());
  const LocatedNumbers levels = root.number_list("levels", Range::greater_than(0), 2, "hPa");
  REQUIRE(levels.values == std::vector<double>{1000, 850, 500.5});
  CHECK(levels.marks[2] == position_of(text, "500.5"));
  CHECK(levels.at(1).key == "levels[1]");
  Section aerosol = root.subsection("aerosol");
  std::vector<Section> layers = aerosol.sequence("layers");
  REQUIRE(layers.size() == 2);
  CHECK(layers[0].required_number("omega", Range::closed(0, 1)).value == 0.9);
  CHECK(layers[1].required_number("optical_depth").key == "aerosol.layers[1].optical_depth");
  CHECK(layers[1].mark_of("omega") == position_of(text, "1\nbands"));
  const auto bands = root.string_list("bands");
  REQUIRE(bands.size() == 2);
  CHECK(bands[1].value == "visible");
  CHECK(root.keys().front() == "title");
  CHECK(layers[0].required_number("optical_depth").value == 0.1);
  CHECK_NOTHROW(layers[0].check_no_unknown_keys());
  // mark_of only looks: 'omega' of the second layer was never read, so it is still unknown.
  CHECK_THROWS_AS(layers[1].check_no_unknown_keys(), InputError);
  CHECK_NOTHROW(aerosol.check_no_unknown_keys());
  CHECK_NOTHROW(root.check_no_unknown_keys());
}

TEST_CASE("a value outside an inclusive range names the rule and the value", "[experiment]") {
  const std::string text =
      "aerosol:\n  layers:\n    - omega: 0.9\n    - omega: 0.95\n    - omega: 1.3\n";
  const InputError e = error_from(text, [](Section& root) {
    for (Section& layer : root.subsection("aerosol").sequence("layers")) {
      layer.required_number("omega", Range::closed(0, 1));
    }
  });
  check_error(e, position_of(text, "1.3"), "aerosol.layers[2].omega",
              {"expected 0 <= omega <= 1, got 1.3"});
  // Hand-counted: line 5, the value starts in column 14.
  CHECK(e.line() == 5);
  CHECK(e.column() == 14);
}

TEST_CASE("an exclusive bound is rendered with '<'", "[experiment]") {
  const std::string text = "sun:\n  cos_zenith: 0\n";
  const InputError e = error_from(text, [](Section& root) {
    root.subsection("sun").required_number("cos_zenith", Range::open_closed(0, 1));
  });
  check_error(e, position_of(text, "0\n"), "sun.cos_zenith",
              {"expected 0 < cos_zenith <= 1, got 0"});
}

TEST_CASE("a one-sided range with a unit is rendered with the unit", "[experiment]") {
  const std::string text = "surface_pressure: -5\n";
  const InputError e = error_from(text, [](Section& root) {
    root.required_number("surface_pressure", Range::greater_than(0), "hPa");
  });
  check_error(e, position_of(text, "-5"), "surface_pressure",
              {"expected surface_pressure > 0 (in hPa), got -5"});
}

TEST_CASE("text where a number is expected is a type error naming the unit", "[experiment]") {
  const std::string text = "title: x\nozone: lots\n";
  const InputError e = error_from(
      text, [](Section& root) { root.required_number("ozone", Range::at_least(0), "DU"); });
  check_error(e, position_of(text, "lots"), "ozone", {"expected a number (in DU)", "got 'lots'"});
}

TEST_CASE("a quoted number is text, not a number", "[experiment]") {
  const std::string text = "omega: \"0.5\"\n";
  const InputError e = error_from(text, [](Section& root) { root.required_number("omega"); });
  check_error(e, position_of(text, "\"0.5\""), "omega",
              {"got the quoted text \"0.5\"", "without quotes"});
}

TEST_CASE("a number written with a unit is rejected with a hint", "[experiment]") {
  const std::string text = "surface_pressure: 1013.25 hPa\n";
  const InputError e = error_from(text, [](Section& root) {
    root.required_number("surface_pressure", Range::greater_than(0), "hPa");
  });
  check_error(e, position_of(text, "1013.25"), "surface_pressure",
              {"got '1013.25 hPa'", "write the bare number", "(hPa)"});
}

TEST_CASE("a mapping where a number is expected points at the key", "[experiment]") {
  const std::string text = "ozone:\n  column: 300\n";
  const InputError e = error_from(text, [](Section& root) { root.required_number("ozone"); });
  check_error(e, position_of(text, "ozone"), "ozone", {"expected a number, got a mapping"});
}

TEST_CASE("a list where a mapping is expected is a type error", "[experiment]") {
  const std::string text = "aerosol: [0.1, 0.2]\n";
  const InputError e = error_from(text, [](Section& root) { root.subsection("aerosol"); });
  check_error(e, position_of(text, "aerosol"), "aerosol", {"expected a mapping", "got a list"});
}

TEST_CASE("a mapping where a list is expected is a type error", "[experiment]") {
  const std::string text = "levels:\n  top: 1\n";
  const InputError e = error_from(text, [](Section& root) { root.number_list("levels"); });
  check_error(e, position_of(text, "levels"), "levels",
              {"expected a list of numbers", "got a mapping"});
}

TEST_CASE("a bad list element is reported at the element with its index", "[experiment]") {
  const std::string text = "levels: [1000, 850, abc, 300]\n";
  const InputError e = error_from(
      text, [](Section& root) { root.number_list("levels", Range::greater_than(0), 1, "hPa"); });
  check_error(e, position_of(text, "abc"), "levels[2]", {"expected a number (in hPa), got 'abc'"});
}

TEST_CASE("an element out of range in a block list is reported on its own line", "[experiment]") {
  const std::string text = "levels:\n  - 1000\n  - -850\n";
  const InputError e = error_from(
      text, [](Section& root) { root.number_list("levels", Range::greater_than(0), 1, "hPa"); });
  check_error(e, position_of(text, "-850"), "levels[1]",
              {"expected levels[1] > 0 (in hPa), got -850"});
}

TEST_CASE("a list that is too short says how many were expected", "[experiment]") {
  const std::string text = "levels: [1000]\n";
  const InputError e = error_from(text, [](Section& root) { root.number_list("levels", {}, 2); });
  check_error(e, position_of(text, "levels"), "levels", {"expected at least 2 numbers, got 1"});
}

TEST_CASE("an unknown key suggests the closest known key", "[experiment]") {
  const std::string text = "atmosphere:\n  surface_pressure: 1013\n  ozon: 300\n";
  const InputError e = error_from(text, [](Section& root) {
    Section atmosphere = root.subsection("atmosphere");
    atmosphere.optional_number("surface_pressure", 1013.25);
    atmosphere.optional_number("ozone", 300);
    atmosphere.optional_number("water_vapour", 1.4);
    atmosphere.check_no_unknown_keys();
  });
  check_error(e, position_of(text, "ozon:"), "atmosphere.ozon",
              {"unknown key 'ozon' (did you mean 'ozone'?)"});
}

TEST_CASE("an unknown key far from every known key lists the known keys", "[experiment]") {
  const std::string text = "ozone: 300\ncolour: blue\n";
  const InputError e = error_from(text, [](Section& root) {
    root.optional_number("ozone", 300);
    root.optional_number("surface_albedo", 0.2);
    root.check_no_unknown_keys();
  });
  check_error(e, position_of(text, "colour"), "colour",
              {"unknown key 'colour'", "known keys here: 'ozone' or 'surface_albedo'"});
}

TEST_CASE("a missing required key points at its section", "[experiment]") {
  const std::string text = "title: x\nsun:\n  azimuth: 10\n";
  const InputError e = error_from(text, [](Section& root) {
    root.subsection("sun").required_number("cos_zenith", Range::open_closed(0, 1));
  });
  check_error(e, position_of(text, "sun"), "sun.cos_zenith",
              {"required key 'cos_zenith' is missing in 'sun'"});
}

TEST_CASE("a misspelt choice lists the allowed values and suggests one", "[experiment]") {
  const std::string text = "closure: delta_edington\n";
  const InputError e = error_from(text, [](Section& root) {
    root.choice("closure", {"eddington", "delta_eddington", "quadrature"});
  });
  check_error(e, position_of(text, "delta_edington"), "closure",
              {"expected one of 'eddington', 'delta_eddington' or 'quadrature'",
               "got 'delta_edington'", "did you mean 'delta_eddington'?"});
}

TEST_CASE("not-a-number and infinity are rejected", "[experiment]") {
  for (const std::string value : {".nan", ".inf", "-.inf", "nan", "inf", "-infinity"}) {
    const std::string text = "optical_depth: " + value + "\n";
    const InputError e =
        error_from(text, [](Section& root) { root.required_number("optical_depth"); });
    check_error(e, {1, 16}, "optical_depth", {"expected a finite number"});
  }
}

TEST_CASE("a number beyond double precision is rejected", "[experiment]") {
  const std::string text = "optical_depth: 1e999\n";
  const InputError e =
      error_from(text, [](Section& root) { root.required_number("optical_depth"); });
  check_error(e, {1, 16}, "optical_depth", {"within the range of double precision"});
}

TEST_CASE("a fraction where a whole number is expected is rejected", "[experiment]") {
  const std::string text = "threads: 2.5\n";
  const InputError e = error_from(text, [](Section& root) { root.required_integer("threads"); });
  check_error(e, position_of(text, "2.5"), "threads", {"expected a whole number, got 2.5"});
  Section exponent = Document::parse("count: 1e3\n", "exp.yaml").root();
  CHECK(exponent.required_integer("count").value == 1000);
  const std::string huge = "count: 1e300\n";
  const InputError e_huge = error_from(huge, [](Section& root) { root.required_integer("count"); });
  check_error(e_huge, position_of(huge, "1e300"), "count", {"expected a whole number, got 1e+300"});
  const std::string text0 = "threads: 0\n";
  const InputError e0 = error_from(
      text0, [](Section& root) { root.required_integer("threads", Range::at_least(1)); });
  check_error(e0, position_of(text0, "0"), "threads", {"expected threads >= 1, got 0"});
}

TEST_CASE("only true and false are booleans", "[experiment]") {
  const std::string text = "write_layers: yes\n";
  const InputError e =
      error_from(text, [](Section& root) { root.optional_bool("write_layers", false); });
  check_error(e, position_of(text, "yes"), "write_layers", {"expected true or false, got 'yes'"});
}

TEST_CASE("an empty value is reported at its key", "[experiment]") {
  const std::string text = "ozone: 300\nomega:\ntitle: x\n";
  const InputError e = error_from(text, [](Section& root) { root.required_number("omega"); });
  check_error(e, position_of(text, "omega"), "omega", {"expected a number, got nothing"});
}

TEST_CASE("a key written twice is an error at the second one", "[experiment]") {
  // yaml-cpp 0.7 keeps both entries of a repeated key in the node, so the reader can detect it.
  const std::string text = "ozone: 300\nsurface_albedo: 0.2\nozone: 250\n";
  const InputError e = error_from(text, [](Section&) {});
  check_error(e, {3, 1}, "ozone", {"key written twice (first on line 1)"});
}

TEST_CASE("a list item that is not a mapping is a type error", "[experiment]") {
  const std::string text = "layers:\n  - omega: 0.9\n  - 0.5\n";
  const InputError e = error_from(text, [](Section& root) { root.sequence("layers"); });
  check_error(e, position_of(text, "0.5"), "layers[1]", {"expected a mapping", "got '0.5'"});
}

TEST_CASE("a YAML syntax error becomes an InputError at the parser's position", "[experiment]") {
  // An unclosed flow list: yaml-cpp 0.7 reports it at the ':' of the next key (line 2, column 6,
  // 1-based), which is the position we pass on.
  const std::string text = "levels: [1000, 850\nozone: 300\n";
  const InputError e = error_from(text, [](Section&) {});
  check_error(e, {2, 6}, "", {"YAML syntax error", "end of sequence flow not found"});
  // Inconsistent indentation.
  const std::string text2 = "sun:\n  cos_zenith: 0.5\n   azimuth: 3\n";
  const InputError e2 = error_from(text2, [](Section&) {});
  CHECK(e2.line() >= 2);
  CHECK_THAT(e2.message(), Catch::StartsWith("YAML syntax error"));
}

TEST_CASE("a tab in the indentation gets a hint", "[experiment]") {
  const std::string text = "sun:\n\tcos_zenith: 0.5\n";
  const InputError e = error_from(text, [](Section&) {});
  CHECK(e.line() == 2);
  CHECK_THAT(e.message(), Catch::Contains("YAML syntax error"));
  CHECK_THAT(e.message(), Catch::Contains("indented with a tab; YAML allows only spaces"));
}

TEST_CASE("a document that is not a mapping is rejected", "[experiment]") {
  const std::string text = "- 1\n- 2\n";
  const InputError e = error_from(text, [](Section&) {});
  check_error(e, {1, 1}, "", {"expected a mapping of keys to values at the top level, got a list"});
  try {
    (void)Document::parse("# only a comment\n", "exp.yaml").root();
    FAIL("an empty document was accepted");
  } catch (const InputError& empty) {
    CHECK(empty.line() == 0);
    CHECK(std::string(empty.what()) ==
          "exp.yaml: error: the file has no content; expected a mapping of keys to values");
  }
}

TEST_CASE("a second document in one file is rejected", "[experiment]") {
  const std::string text = "ozone: 300\n---\nozone: 250\n";
  const InputError e = error_from(text, [](Section&) {});
  CHECK(e.line() == 3);
  CHECK_THAT(e.message(), Catch::Contains("one document per file"));
}

TEST_CASE("checks after reading can point at a value that was read", "[experiment]") {
  const std::string text = "levels: [1000, 850, 900, 500]\n";
  Document doc = Document::parse(text, "exp.yaml");
  Section root = doc.root();
  const LocatedNumbers levels = root.number_list("levels");
  std::size_t bad = 0;
  for (std::size_t i = 1; i < levels.values.size(); ++i) {
    if (levels.values[i] >= levels.values[i - 1]) {
      bad = i;
      break;
    }
  }
  REQUIRE(bad == 2);
  const InputError e = doc.error(levels.at(bad), "pressures must decrease from the surface up");
  check_error(e, position_of(text, "900"), "levels[2]", {"must decrease"});
  const InputError e2 = root.error("levels", "needs at least one level above 100 hPa");
  check_error(e2, {1, 1}, "levels", {"100 hPa"});  // a list value: the key
}

TEST_CASE("tabs before the error column are kept so the caret lines up", "[experiment]") {
  const std::string rendered = render_input_error("f.yaml", {1, 4}, "k", "bad", "\tk: x");
  CHECK(rendered == "f.yaml:1:4: error: k: bad\n  \tk: x\n  \t  ^");
}

TEST_CASE("files are read from disk and a missing file is named", "[experiment]") {
  const solstrata::testing::TempDir scratch("yaml");
  const auto& dir = scratch.path();
  const auto path = dir / "invented.yaml";
  {
    std::ofstream out(path);
    out << "ozone: 300\r\nomega: 2\r\n";  // CRLF line ends must not leak into the excerpt
  }
  try {
    Section root = Document::load_file(path).root();
    root.required_number("omega", Range::closed(0, 1));
    FAIL("omega = 2 was accepted");
  } catch (const InputError& e) {
    CHECK(e.file() == path.string());
    CHECK(e.line() == 2);
    CHECK(e.column() == 8);
    CHECK(e.source_line() == "omega: 2");
  }
  const auto missing = dir / "no_such_experiment.yaml";
  try {
    (void)Document::load_file(missing);
    FAIL("a missing file was accepted");
  } catch (const InputError& e) {
    CHECK(e.file() == missing.string());
    CHECK(e.line() == 0);
    CHECK_THAT(std::string(e.what()),
               Catch::StartsWith(missing.string() + ": error: cannot open the file"));
    CHECK_THAT(std::string(e.what()), Catch::Contains("No such file"));
  }
  CHECK_THROWS_AS(Document::load_file(dir), InputError);
}
