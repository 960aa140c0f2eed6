#include <catch2/catch.hpp>

#include "tannery/code/code.hpp"
#include "tannery/error.hpp"
#include "test_support.hpp"

using namespace tannery;

TEST_CASE("check-major and variable-major indexes describe the same edges", "[code]") {
  for (std::uint64_t seed = 1; seed <= 5; ++seed) {
    const Code code = test::random_code(9, 17, 0.3, seed);
    std::size_t seen = 0;
    for (std::size_t v = 0; v < code.n(); ++v) {
      std::uint32_t previous_check = 0;
      for (std::size_t i = 0; i < code.variable_degree(v); ++i) {
        const std::uint32_t e = code.variable_edges(v)[i];
        CHECK(code.edge_variable(e) == v);
        const std::uint32_t c = code.edge_check(e);
        CHECK(e >= code.check_begin(c));
        CHECK(e < code.check_end(c));
        if (i > 0) CHECK(c > previous_check);  // increasing check order
        previous_check = c;
        ++seen;
      }
    }
    CHECK(seen == code.edges());
  }
}

TEST_CASE("edge ids are stable: check-major, variables increasing", "[code]") {
  const Code code = Code::from_checks(5, {{4, 0, 2}, {}, {1, 3}});
  REQUIRE(code.edges() == 5);
  CHECK(code.check_begin(0) == 0);
  CHECK(code.check_end(0) == 3);
  CHECK(code.check_degree(1) == 0);
  CHECK(code.edge_variable(0) == 0);
  CHECK(code.edge_variable(2) == 4);
  CHECK(code.edge_variable(3) == 1);
  CHECK(code.variable_degree(2) == 1);
  CHECK(code.checks() == std::vector<std::vector<std::uint32_t>>{{0, 2, 4}, {}, {1, 3}});
}

TEST_CASE("duplicate and out-of-range entries are errors naming the check", "[code]") {
  CHECK_THROWS_WITH(Code::from_checks(4, {{0, 1}, {2, 3, 2}}),
                    Catch::Contains("check 1 lists variable 2 twice"));
  CHECK_THROWS_WITH(Code::from_checks(4, {{0, 4}}), Catch::Contains("variable 4"));
}

TEST_CASE("empty columns are legal (an unprotected bit)", "[code]") {
  const Code code = Code::from_checks(4, {{0, 1}, {1, 2}});
  CHECK(code.variable_degree(3) == 0);
  CHECK(code.variable_edges(3).empty());
}

TEST_CASE("a base table expands to circulant permutation blocks", "[code]") {
  // Block (i, j) with shift s: row r of the block has its 1 in column (r + s) mod Z.
  QuasiCyclic base{1, 2, 4, {1, -1}};
  const Code code = Code::from_quasi_cyclic(base);
  REQUIRE(code.n() == 8);
  REQUIRE(code.m() == 4);
  CHECK(code.check_variables(0)[0] == 1);
  CHECK(code.check_variables(3)[0] == 0);  // (3 + 1) mod 4
  CHECK(code.quasi_cyclic()->lifting == 4);
  CHECK_THROWS_AS(Code::from_quasi_cyclic(QuasiCyclic{1, 1, 4, {4}}), Error);
}

TEST_CASE("syndrome weight counts unsatisfied checks", "[code]") {
  const Code code = Code::from_checks(4, {{0, 1}, {1, 2}, {2, 3}});
  const std::vector<std::uint8_t> word{0, 1, 0, 0};
  CHECK(syndrome_weight(code, word) == 2);
}

TEST_CASE("a matrix that is a lifting of a base table is recognised as one", "[code]") {
  // A base table with zero blocks and every shift, expanded and rebuilt from its rows only.
  QuasiCyclic base{2, 4, 5, {0, 3, -1, 4, 2, -1, 1, 0}};
  const Code lifted = Code::from_quasi_cyclic(base);
  const Code plain = Code::from_checks(lifted.n(), lifted.checks());
  REQUIRE(plain.quasi_cyclic());
  CHECK(plain.quasi_cyclic()->lifting == 5);
  CHECK(plain.quasi_cyclic()->shifts == base.shifts);
  // The largest lifting size is found: Z = 5 here, not 1.
  // One extra one in a block breaks the circulant: no base table then.
  auto rows = lifted.checks();
  rows[0].push_back(rows[0].back() == 19 ? 18 : 19);
  CHECK_FALSE(Code::from_checks(lifted.n(), rows).quasi_cyclic());
  // A row missing from a circulant block, likewise.
  rows = lifted.checks();
  rows[3].erase(rows[3].begin());
  CHECK_FALSE(Code::from_checks(lifted.n(), rows).quasi_cyclic());
  // Codes without the structure.
  CHECK_FALSE(test::shipped("regular-3-6-n2016.tanner").quasi_cyclic());
  CHECK_FALSE(test::shipped("hamming-7-4.tanner").quasi_cyclic());
}
