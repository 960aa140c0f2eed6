#include <catch2/catch.hpp>
#include <sstream>

#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

std::string written(const Code& code, MatrixFormat f) {
  std::ostringstream out;
  write_code(code, f, out);
  return out.str();
}

void check_round_trip(const Code& code, const std::string& label) {
  std::vector<MatrixFormat> formats{MatrixFormat::tannery, MatrixFormat::alist, MatrixFormat::mtx,
                                    MatrixFormat::dense};
  if (code.quasi_cyclic()) formats.push_back(MatrixFormat::qc);
  for (auto f : formats) {
    INFO(label << " as " << name_of(f));
    const std::string text = written(code, f);
    CHECK(detect_format(text, "t") == f);
    const Code back = parse_code(text, "t");
    CHECK(back == code);
    CHECK(written(back, f) == text);  // writing is canonical
    if (f == MatrixFormat::qc) CHECK(back.quasi_cyclic()->shifts == code.quasi_cyclic()->shifts);
  }
}

}  // namespace

TEST_CASE("every format round-trips every shipped code exactly", "[io]") {
  for (const auto& file : test::shipped_codes()) check_round_trip(test::shipped(file), file);
}

TEST_CASE("every format round-trips random codes with empty rows and columns", "[io]") {
  for (std::uint64_t seed = 1; seed <= 20; ++seed) {
    check_round_trip(test::random_code(4 + seed % 5, 5 + seed % 9, 0.25, seed),
                     "seed " + std::to_string(seed));
  }
}

TEST_CASE("readers accept the common variants", "[io]") {
  // alist without zero padding, Matrix Market with integer values and comments,
  // base tables with '-' and the lifting size on the command line, compact dense rows.
  const Code ref = Code::from_checks(3, {{0, 1}, {1, 2}});
  CHECK(parse_code("3 2\n2 2\n1 2 1\n2 2\n1\n1 2\n2\n1 2\n2 3\n", "a") == ref);
  CHECK(parse_code("%%MatrixMarket matrix coordinate integer general\n% c\n2 3 5\n1 1 1\n1 2 1\n2 "
                   "2 1\n2 3 1\n1 3 0\n",
                   "m") == ref);
  // Real values in exponent form, and the dense array layout (column-major), as scipy writes
  // them (the scipy round trip itself is tests/cli/scipy_mmread.sh).
  CHECK(
      parse_code("%%MatrixMarket matrix coordinate real general\n2 3 4\n1 1 1.000000000000000e+00\n"
                 "1 2 1.0\n2 2 1e0\n2 3 1.\n",
                 "m") == ref);
  CHECK(parse_code("%%MatrixMarket matrix array real general\n2 3\n1.0e+00\n0.0e+00\n1.0e+00\n"
                   "1.0e+00\n0.0e+00\n1.0e+00\n",
                   "m") == ref);
  CHECK(parse_code("110\n011\n", "d") == ref);
  const Code qc = parse_code("# base\n0 -\n1 2\n", "q", ReadOptions{std::nullopt, 3});
  CHECK(qc.n() == 6);
  CHECK(qc.check_variables(0)[0] == 0);
  CHECK(qc.check_variables(3).size() == 2);
  CHECK(parse_code("Z=3\n0 -1\n1 2\n", "q") == qc);
  CHECK(parse_code("Z 3\n0 -1\n1 2\n", "q") == qc);
}

// The table of bad inputs: each must raise one clear error naming the source, the line and the
// problem. Never a crash, a hang or a huge allocation.
TEST_CASE("bad inputs give one-line errors with file and line", "[io][bad-input]") {
  struct Bad {
    const char* what;
    std::string text;
    std::optional<MatrixFormat> format;
    std::optional<std::size_t> lifting;
    const char* message;
  };
  const std::vector<Bad> table = {
      {"non-numeric token",
       "tannery-h 1 n=4 m=1\n0 x 2\n",
       {},
       {},
       "bad:2: expected an integer, found 'x'"},
      {"index out of range",
       "tannery-h 1 n=4 m=1\n0 4\n",
       {},
       {},
       "bad:2: variable index 4 is out of range [0, 3]"},
      {"duplicate index",
       "tannery-h 1 n=4 m=1\n1 3 1\n",
       {},
       {},
       "bad:2: check 0 lists variable 1 twice"},
      {"more rows than header",
       "tannery-h 1 n=4 m=1\n0\n1\n",
       {},
       {},
       "bad:3: more check lines than the header's m=1"},
      {"fewer rows than header",
       "tannery-h 1 n=4 m=3\n0\n1\n",
       {},
       {},
       "header says m=3 checks but the file has 2"},
      {"size too large",
       "tannery-h 1 n=99999999999 m=1\n0\n",
       {},
       {},
       "bad:1: n 99999999999 is out of range"},
      {"negative size", "tannery-h 1 n=-5 m=1\n0\n", {}, {}, "bad:1: n -5 is out of range"},
      {"number overflow",
       "tannery-h 1 n=4 m=1\n99999999999999999999999\n",
       {},
       {},
       "bad:2: number '99999999999999999999999' is too large"},
      {"unknown version",
       "tannery-h 2 n=4 m=1\n0\n",
       {},
       {},
       "bad:1: unsupported format version '2'"},
      {"empty file", "", {}, {}, "bad: empty file"},
      {"only comments", "# nothing\n\n", {}, {}, "bad: empty file"},
      {"binary garbage",
       std::string("\x7f"
                   "ELF\x02\x01\x01\x00\x00",
                   9),
       {},
       {},
       "bad:1: binary data (byte 0x02 at offset 4)"},
      {"alist degree mismatch",
       "3 2\n2 2\n1 2 1\n2 2\n1 0\n1 2\n2 0\n1 2 3\n2 3\n",
       {},
       {},
       "bad:8: alist: row 1 has 3 entries, its degree is 2"},
      {"alist rows and columns disagree",
       "3 2\n1 2\n1 1 1\n2 1\n1\n1\n2\n1 3\n2\n",
       {},
       {},
       "bad:8: alist: column 2 lists row 1 but row 1 does not list column 2"},
      {"alist truncated",
       "3 2\n2 2\n1 2 1\n2 2\n1 0\n",
       {},
       {},
       "bad:5: file ends before the column 2"},
      {"alist index out of range",
       "2 1\n1 2\n1 1\n2\n1\n1\n1 7\n",
       {},
       {},
       "bad:7: index 7 is out of range [0, 2]"},
      {"mtx entry count",
       "%%MatrixMarket matrix coordinate pattern general\n2 2 3\n1 1\n2 2\n",
       {},
       {},
       "declares 3 entries but the file has 2"},
      {"mtx duplicate entry",
       "%%MatrixMarket matrix coordinate pattern general\n2 2 2\n1 2\n1 2\n",
       {},
       {},
       "bad:4: entry (1, 2) repeats the one on line 3"},
      {"mtx non-binary value",
       "%%MatrixMarket matrix coordinate integer general\n2 2 1\n1 2 2\n",
       {},
       {},
       "bad:3: value '2' is not a binary entry"},
      {"mtx row out of range",
       "%%MatrixMarket matrix coordinate pattern general\n2 2 1\n3 1\n",
       {},
       {},
       "bad:3: row 3 is out of range [1, 2]"},
      {"mtx huge declared size",
       "%%MatrixMarket matrix coordinate pattern general\n1000000000000 2 1\n1 1\n",
       {},
       {},
       "bad:2: rows 1000000000000 is out of range"},
      {"mtx array layout, too few values",
       "%%MatrixMarket matrix array integer general\n2 2\n1\n0\n0\n",
       {},
       {},
       "declares 2 x 2 = 4 values but the file has 3"},
      {"mtx array layout, a real value other than 0 or 1",
       "%%MatrixMarket matrix array real general\n2 2\n1.0e+00\n0\n5.0e-01\n1\n",
       {},
       {},
       "bad:5: value '5.0e-01' is not a binary entry"},
      {"mtx array layout has no pattern field",
       "%%MatrixMarket matrix array pattern general\n2 2\n",
       {},
       {},
       "bad:1: Matrix Market field 'pattern' is not supported (use integer or real)"},
      {"mtx symmetric",
       "%%MatrixMarket matrix coordinate pattern symmetric\n2 2 1\n1 1\n",
       {},
       {},
       "bad:1: Matrix Market symmetry 'symmetric' is not supported"},
      {"qc shift >= Z",
       "Z = 5\n0 1\n2 7\n",
       {},
       {},
       "bad:3: base table entry (row 2, column 2) has shift 7 >= Z = 5"},
      {"qc without Z", "0 -1\n1 2\n", {}, {}, "needs a lifting size"},
      {"qc ragged row",
       "Z = 5\n0 1 -\n2 3\n",
       {},
       {},
       "bad:3: base table row has 2 entries, the first row has 3"},
      {"qc Z too large",
       "Z = 99999999\n0 -1\n",
       {},
       {},
       "bad:1: lifting size Z 99999999 is out of range"},
      {"qc Z conflicts", "Z = 5\n0 -1\n", {}, 7, "bad:1: file says Z = 5 but Z = 7 was requested"},
      {"qc shift below -1", "Z = 5\n0 -2\n", {}, {}, "bad:2: shift -2 is out of range"},
      {"qc malformed Z line", "Z = = 5\n0 -1\n", {}, {}, "bad:1: malformed lifting line"},
      {"dense ragged",
       "0 1 1\n1 1\n",
       MatrixFormat::dense,
       {},
       "bad:2: row has 2 columns, the first row has 3"},
      {"dense non-binary",
       "0 1 2\n",
       MatrixFormat::dense,
       {},
       "bad:1: dense matrix entry '2' is not 0 or 1"},
      {"lifting on a non-qc file",
       "0 1\n1 1\n",
       {},
       4,
       "a lifting size only applies to quasi-cyclic base tables"},
  };
  for (const auto& bad : table) {
    INFO(bad.what);
    try {
      (void)parse_code(bad.text, "bad", ReadOptions{bad.format, bad.lifting});
      FAIL("accepted");
    } catch (const Error& e) {
      const std::string message = e.what();
      CHECK_THAT(message, Catch::Contains(bad.message));
      CHECK(message.find('\n') == std::string::npos);
    }
  }
}

TEST_CASE("missing and unreadable files are errors naming the path", "[io][bad-input]") {
  CHECK_THROWS_WITH(read_code_file("/nonexistent/h.alist"),
                    Catch::Contains("/nonexistent/h.alist: cannot open file"));
  CHECK_THROWS_WITH(read_code_file("/tmp"), Catch::Contains("/tmp: is a directory"));
}

TEST_CASE("format names and extensions", "[io]") {
  CHECK(format_from_extension("a/b.alist") == MatrixFormat::alist);
  CHECK(format_from_extension("x.qc") == MatrixFormat::qc);
  CHECK_FALSE(format_from_extension("x.txt").has_value());
  CHECK(from_name<MatrixFormat>("mtx") == MatrixFormat::mtx);
  CHECK_THROWS_WITH(written(Code::from_checks(2, {{0, 1}}), MatrixFormat::qc),
                    Catch::Contains("no quasi-cyclic structure"));
}
