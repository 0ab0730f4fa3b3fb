#include "io/csv_writer.hpp"

#include <catch2/catch.hpp>
#include <cstdlib>
#include <fstream>

#include "io/atomic_file.hpp"
#include "support/temp_dir.hpp"

using namespace solstrata::io;
using solstrata::testing::TempDir;

TEST_CASE("fields are quoted as RFC 4180 requires", "[io]") {
  // RFC 4180 section 2, rules 6 and 7, and its example "aaa","b""bb","ccc".
  CHECK(csv_field("aaa") == "aaa");
  CHECK(csv_field("b\"bb") == "\"b\"\"bb\"");
  CHECK(csv_field("a,b") == "\"a,b\"");
  CHECK(csv_field("line\r\nbreak") == "\"line\r\nbreak\"");
  CHECK(csv_field("") == "");
  CHECK(csv_field(" spaced ") == " spaced ");  // spaces are part of a field (rule 4)
}

TEST_CASE("numbers are the shortest text that reads back exactly", "[io]") {
  for (double x : {0.1, 1.0 / 3.0, 1361.0, 1e-7, -2.5e300, 0.0}) {
    const std::string text = csv_number(x);
    CHECK(std::strtod(text.c_str(), nullptr) == x);  // round trip through the C library's reader
  }
  CHECK(csv_number(0.1) == "0.1");
  CHECK(csv_number(1361.0) == "1361");
  CHECK_THROWS_AS(csv_number(std::nan("")), OutputError);
  CHECK_THROWS_AS(csv_number(HUGE_VAL), OutputError);
}

TEST_CASE("a table has a header, equal-length rows and LF line ends", "[io]") {
  CsvTable table({"scenario", "note", "flux_W_m-2"});
  table.add_row({"clear, dry", "said \"hello\"", "900.5"});
  table.add_row(std::vector<double>{1, 2, 3});
  CHECK(table.rows() == 2);
  CHECK(table.to_string() ==
        "scenario,note,flux_W_m-2\n\"clear, dry\",\"said \"\"hello\"\"\",900.5\n1,2,3\n");
  CHECK_THROWS_WITH(table.add_row({"only one"}),
                    Catch::Contains("row 3 has 1 cells, the header has 3"));
  CHECK_THROWS_AS(CsvTable({}), OutputError);
}

TEST_CASE("a table written to disk is read back by Python's csv module", "[io]") {
  TempDir dir("csv");
  CsvTable table({"name", "value"});
  table.add_row({"comma, inside", "1"});
  table.add_row({"quote \" inside", "2"});
  table.add_row({"new\nline", "3"});
  const auto path = dir / "summary.csv";
  table.write(path);
  CHECK(dir.files() == std::vector<std::string>{"summary.csv"});
  if (!solstrata::testing::have_program("python3")) {
    WARN("python3 not found: the independent CSV read-back is skipped");
    return;
  }
  // Python's csv module is an independent RFC 4180 reader; repr() shows each cell exactly.
  const auto result = solstrata::testing::run_command(
      "python3 -c \"import csv,sys; print([r for r in csv.reader(open(sys.argv[1], "
      "newline=''))])\" " +
      path.string());
  REQUIRE(result.status == 0);
  CHECK(result.output ==
        "[['name', 'value'], ['comma, inside', '1'], ['quote \" inside', '2'], ['new\\nline', "
        "'3']]\n");
}
