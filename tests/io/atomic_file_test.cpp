#include "io/atomic_file.hpp"

#include <catch2/catch.hpp>
#include <fstream>

#include "support/temp_dir.hpp"

using solstrata::io::AtomicOutput;
using solstrata::io::OutputError;
using solstrata::testing::TempDir;

namespace {
void write_text(const std::filesystem::path& p, const std::string& text) {
  std::ofstream out(p);
  out << text;
}
std::string read_text(const std::filesystem::path& p) {
  std::ifstream in(p);
  return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}
}  // namespace

TEST_CASE("the temporary lives beside the final file and commit renames it", "[io]") {
  TempDir dir("atomic");
  const auto final_path = dir / "out.csv";
  AtomicOutput out(final_path);
  CHECK(out.temp_path().parent_path() == final_path.parent_path());
  CHECK(out.temp_path().filename().string().rfind("out.csv.tmp-", 0) == 0);
  write_text(out.temp_path(), "complete");
  CHECK_FALSE(std::filesystem::exists(final_path));
  out.commit();
  CHECK(out.committed());
  CHECK(read_text(final_path) == "complete");
  CHECK(dir.files() == std::vector<std::string>{"out.csv"});
}

TEST_CASE("an uncommitted output leaves nothing behind and keeps the old file", "[io]") {
  TempDir dir("atomic");
  const auto final_path = dir / "out.csv";
  write_text(final_path, "previous run");
  try {
    AtomicOutput out(final_path);
    write_text(out.temp_path(), "half writ");
    throw std::runtime_error("simulated failure while writing");
  } catch (const std::runtime_error&) {
  }
  CHECK(read_text(final_path) == "previous run");
  CHECK(dir.files() == std::vector<std::string>{"out.csv"});
}

TEST_CASE("two outputs to the same path get different temporaries", "[io]") {
  TempDir dir("atomic");
  AtomicOutput a(dir / "x.h5");
  AtomicOutput b(dir / "x.h5");
  CHECK(a.temp_path() != b.temp_path());
}

TEST_CASE("commit without a written temporary and a missing directory are errors", "[io]") {
  TempDir dir("atomic");
  AtomicOutput out(dir / "never_written.h5");
  CHECK_THROWS_WITH(out.commit(), Catch::Contains("nothing was written"));
  CHECK_FALSE(std::filesystem::exists(dir / "never_written.h5"));
  CHECK_THROWS_WITH(AtomicOutput(dir / "no_such_dir" / "a.h5"), Catch::Contains("does not exist"));
}
