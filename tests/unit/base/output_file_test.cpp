#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "tannery/base/output_file.hpp"
#include "tannery/error.hpp"

using namespace tannery;
namespace fs = std::filesystem;

namespace {

struct TempDir {
  fs::path path = fs::temp_directory_path() / ("tannery-output-test-" + std::to_string(::getpid()));
  TempDir() { fs::create_directories(path); }
  ~TempDir() { fs::remove_all(path); }
};

std::string contents(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::size_t entries(const fs::path& dir) {
  return static_cast<std::size_t>(std::distance(fs::directory_iterator(dir), {}));
}

}  // namespace

TEST_CASE("an output appears whole at commit, and not at all before", "[output]") {
  TempDir d;
  const fs::path p = d.path / "out.txt";
  {
    OutputFile out(p.string(), false);
    REQUIRE(out.enabled());
    out.write("first part, ");
    out.write("second part");
    CHECK_FALSE(fs::exists(p));  // unnamed until commit
    out.commit();
  }
  CHECK(contents(p) == "first part, second part");
  CHECK(entries(d.path) == 1);  // no temporary file left
}

TEST_CASE("an abandoned or destroyed output leaves the old file as it was", "[output]") {
  TempDir d;
  const fs::path p = d.path / "results.json";
  write_file_atomically(p.string(), "old");
  {
    OutputFile out(p.string(), false);
    out.write("new");
    out.abandon();
  }
  CHECK(contents(p) == "old");
  {
    OutputFile out(p.string(), false);
    out.write("new");
  }  // destroyed without commit, as when an error unwinds
  CHECK(contents(p) == "old");
  CHECK(entries(d.path) == 1);
  write_file_atomically(p.string(), "replaced");
  CHECK(contents(p) == "replaced");
}

TEST_CASE("outputs that cannot be created are refused before work starts", "[output]") {
  TempDir d;
  CHECK_THROWS_AS(OutputFile::check_creatable((d.path / "no-such-dir" / "x").string()), Error);
  CHECK_NOTHROW(OutputFile::check_creatable((d.path / "x").string()));
  CHECK(OutputFile::written_in_place("/dev/null"));
  CHECK_FALSE(OutputFile::written_in_place((d.path / "x").string()));
  OutputFile disabled("", false);
  CHECK_FALSE(disabled.enabled());
  disabled.write("ignored");
  disabled.commit();
  CHECK(entries(d.path) == 0);
}
