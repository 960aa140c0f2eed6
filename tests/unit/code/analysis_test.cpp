#include <catch2/catch.hpp>

#include "tannery/code/analysis.hpp"
#include "tannery/code/construct.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

std::vector<std::uint64_t> enumerator_of(const Code& code) {
  const Encoder enc(code);
  return *weight_enumerator(code, enc);
}

// Cycles of length 4 and 6 counted straight from the definition on the checks.
std::uint64_t brute_force_4_cycles(const Code& code) {
  std::uint64_t total = 0;
  for (std::size_t a = 0; a < code.m(); ++a) {
    for (std::size_t b = a + 1; b < code.m(); ++b) {
      std::uint64_t shared = 0;
      for (auto v : code.check_variables(a)) {
        auto vb = code.check_variables(b);
        shared += std::binary_search(vb.begin(), vb.end(), v);
      }
      total += shared * (shared - (shared > 0)) / 2;
    }
  }
  return total;
}
std::vector<std::uint32_t> shared(const Code& code, std::size_t a, std::size_t b) {
  std::vector<std::uint32_t> out;
  auto x = code.check_variables(a), y = code.check_variables(b);
  std::set_intersection(x.begin(), x.end(), y.begin(), y.end(), std::back_inserter(out));
  return out;
}
std::uint64_t brute_force_6_cycles(const Code& code) {
  std::uint64_t total = 0;
  for (std::size_t a = 0; a < code.m(); ++a)
    for (std::size_t b = a + 1; b < code.m(); ++b)
      for (std::size_t c = b + 1; c < code.m(); ++c)
        for (auto x : shared(code, a, b))
          for (auto y : shared(code, b, c))
            for (auto z : shared(code, c, a)) total += x != y && y != z && x != z;
  return total;
}

}  // namespace

TEST_CASE("Hamming (7,4): d_min 3 and A(z) = 1 + 7z^3 + 7z^4 + z^7", "[analysis]") {
  // Lin & Costello, Error Control Coding, 2nd ed., weight distribution of the (7,4) Hamming code.
  const auto a = enumerator_of(construct_hamming(3));
  CHECK(a == std::vector<std::uint64_t>{1, 0, 0, 7, 7, 0, 0, 1});
  CHECK(minimum_distance(a) == 3u);
}

TEST_CASE("Hamming (15,11): d_min 3 with 35 codewords of weight 3", "[analysis]") {
  // Lin & Costello: A_3 = n(n-1)/6 = 35 for the (15,11) Hamming code.
  const auto a = enumerator_of(test::shipped("hamming-15-11.tanner"));
  CHECK(minimum_distance(a) == 3u);
  CHECK(a[3] == 35);
  std::uint64_t total = 0;
  for (auto x : a) total += x;
  CHECK(total == 2048);  // 2^11 codewords
}

TEST_CASE("repetition and single parity-check enumerators", "[analysis]") {
  // Textbook: repetition code {0^n, 1^n}; SPC code: all even-weight words, A_w = C(n, w).
  CHECK(enumerator_of(construct_repetition(5)) == std::vector<std::uint64_t>{1, 0, 0, 0, 0, 1});
  CHECK(enumerator_of(construct_single_parity(6)) ==
        std::vector<std::uint64_t>{1, 0, 15, 0, 15, 0, 1});
}

TEST_CASE("enumeration is refused above the dimension limit", "[analysis]") {
  const Code code = test::shipped("regular-3-6-n2016.tanner");
  CHECK_FALSE(weight_enumerator(code, Encoder(code)).has_value());
}

TEST_CASE("girth and shortest-cycle counts match brute force", "[analysis]") {
  for (std::uint64_t seed = 1; seed <= 12; ++seed) {
    const Code code = test::random_code(7, 12, 0.3, seed);
    const auto census = cycle_census(code);
    const auto fours = brute_force_4_cycles(code);
    INFO("seed " << seed);
    if (fours > 0) {
      CHECK(census.girth == 4u);
      CHECK(census.count == fours);
    } else if (census.girth) {
      CHECK(*census.girth >= 6);
      if (*census.girth == 6) CHECK(census.count == brute_force_6_cycles(code));
    }
  }
  // A girth-6 graph: 4-cycles removed by construction.
  const Code regular = construct_regular(60, 3, 6, 11);
  const auto census = cycle_census(regular);
  CHECK(brute_force_4_cycles(regular) == 0);
  REQUIRE(census.girth == 6u);
  CHECK(census.count == brute_force_6_cycles(regular));
}

TEST_CASE("trees have no girth, a single cycle is found exactly", "[analysis]") {
  CHECK_FALSE(cycle_census(construct_repetition(6)).girth.has_value());
  // Checks {0,1},{1,2},{2,0}: one cycle through 3 variables and 3 checks, length 6.
  const Code ring = Code::from_checks(3, {{0, 1}, {1, 2}, {0, 2}});
  const auto census = cycle_census(ring);
  CHECK(census.girth == 6u);
  CHECK(census.count == 1);
}

TEST_CASE("base table has a 4-cycle exactly when s1 - s2 + s3 - s4 = 0 mod Z", "[analysis]") {
  // Fossorier, "Quasi-cyclic LDPC codes from circulant permutation matrices", IEEE Trans. IT 2004.
  SplitMix rng(2024);
  int with = 0, without = 0;
  for (int trial = 0; trial < 200; ++trial) {
    const std::size_t rows = 2 + rng.below(2), cols = 3 + rng.below(3), z = 5 + rng.below(6);
    QuasiCyclic base{rows, cols, z, {}};
    for (std::size_t i = 0; i < rows * cols; ++i) {
      base.shifts.push_back(rng.below(5) == 0 ? -1 : static_cast<std::int64_t>(rng.below(z)));
    }
    bool condition = false;
    for (std::size_t i1 = 0; i1 < rows; ++i1)
      for (std::size_t i2 = i1 + 1; i2 < rows; ++i2)
        for (std::size_t j1 = 0; j1 < cols; ++j1)
          for (std::size_t j2 = j1 + 1; j2 < cols; ++j2) {
            const auto a = base.shift(i1, j1), b = base.shift(i2, j1), c = base.shift(i2, j2),
                       d = base.shift(i1, j2);
            if (a < 0 || b < 0 || c < 0 || d < 0) continue;
            const auto zz = static_cast<std::int64_t>(z);
            if ((((a - b + c - d) % zz) + zz) % zz == 0) condition = true;
          }
    const auto census = cycle_census(Code::from_quasi_cyclic(base));
    INFO("trial " << trial);
    CHECK((census.girth == 4u) == condition);
    (condition ? with : without)++;
  }
  CHECK(with > 10);  // both outcomes exercised
  CHECK(without > 10);
}

TEST_CASE("degree profile and edge-perspective fractions", "[analysis]") {
  const auto p = degree_profile(test::shipped("qc-rate-half-z54.qc"));
  CHECK(p.variable.at(2) == 324);
  CHECK(p.variable.at(3) == 324);
  CHECK(p.check.at(5) == 324);
  CHECK(p.edges == 1620);
}

TEST_CASE("redundant rows: empty and repeated are listed", "[analysis]") {
  const Code code = Code::from_checks(4, {{0, 1}, {}, {2, 3}, {0, 1}, {0, 1}});
  const auto r = row_redundancy(code);
  CHECK(r.empty == std::vector<std::size_t>{1});
  REQUIRE(r.repeated.size() == 2);
  CHECK(r.repeated[0] == std::pair<std::size_t, std::size_t>{0, 3});
  CHECK(r.repeated[1] == std::pair<std::size_t, std::size_t>{0, 4});
}

TEST_CASE("(a, b) classes of hand-made variable sets", "[analysis]") {
  // H of a small code written out: checks {0,1,2}, {1,3}, {2,3,4}, {0,4}. A set's b counts the
  // checks joined to it an odd number of times (Richardson 2003's trapping-set notation).
  const Code code = Code::from_checks(5, {{0, 1, 2}, {1, 3}, {2, 3, 4}, {0, 4}});
  StructureClassifier classify(code);
  using V = std::vector<std::uint32_t>;
  CHECK(classify.classify(V{0}) == StructureClass{1, 2});     // checks 0 and 3
  CHECK(classify.classify(V{2}) == StructureClass{1, 2});     // checks 0 and 2
  CHECK(classify.classify(V{0, 4}) == StructureClass{2, 2});  // check 3 twice: even; 0 and 2
  CHECK(classify.classify(V{1, 3}) == StructureClass{2, 2});  // check 1 even; 0 and 2 odd
  CHECK(classify.classify(V{0, 1, 2, 3, 4}) == StructureClass{5, 2});  // checks 0, 2 hold 3
  CHECK(classify.classify(V{}) == StructureClass{0, 0});
  CHECK_THROWS_WITH(classify.classify(V{1, 1}), Catch::Contains("out of range or repeated"));
  CHECK_THROWS_WITH(classify.classify(V{5}), Catch::Contains("out of range or repeated"));
  CHECK(classify.classify(V{3}) == StructureClass{1, 2});  // nothing left over from the errors
}

TEST_CASE("codeword supports are the b = 0 class", "[analysis]") {
  // Every weight-3 codeword of Hamming (7,4) (columns 1..7 in binary: i ^ j ^ k = 0) has b = 0;
  // any other 3-set has b > 0 (Lin & Costello: exactly 7 codewords of weight 3).
  const Code code = construct_hamming(3);
  StructureClassifier classify(code);
  int codewords = 0;
  for (std::uint32_t i = 0; i < 7; ++i)
    for (std::uint32_t j = i + 1; j < 7; ++j)
      for (std::uint32_t k = j + 1; k < 7; ++k) {
        const StructureClass c = classify.classify(std::vector<std::uint32_t>{i, j, k});
        CHECK(c.a == 3);
        codewords += c.b == 0;
      }
  CHECK(codewords == 7);
}
