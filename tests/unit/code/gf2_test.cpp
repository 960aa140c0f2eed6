#include <catch2/catch.hpp>

#include "tannery/code/construct.hpp"
#include "tannery/code/gf2.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

// Encodes random information words and checks H c = 0 and the systematic positions; the
// bit-sliced encoder must give the same words, all at once.
void check_encoder(const Code& code, std::uint64_t seed, int words = 20) {
  const Encoder enc(code);
  SplitMix rng(seed);
  std::vector<std::uint8_t> info(enc.k()), word(code.n());
  std::vector<std::uint64_t> info_lanes(enc.k()), word_lanes(code.n());
  std::vector<std::vector<std::uint8_t>> encoded;
  for (int t = 0; t < words; ++t) {
    for (auto& b : info) b = static_cast<std::uint8_t>(rng.next() & 1u);
    enc.encode(info, word);
    INFO("seed " << seed << " word " << t);
    REQUIRE(syndrome_weight(code, word) == 0);
    for (std::size_t i = 0; i < enc.k(); ++i) REQUIRE(word[enc.info_positions()[i]] == info[i]);
    for (std::size_t i = 0; i < enc.k(); ++i) info_lanes[i] |= std::uint64_t{info[i]} << t;
    encoded.push_back(word);
  }
  enc.encode_lanes(info_lanes, word_lanes);
  for (int t = 0; t < words; ++t) {
    for (std::size_t v = 0; v < code.n(); ++v) {
      INFO("seed " << seed << " lane " << t << " position " << v);
      REQUIRE(((word_lanes[v] >> t) & 1u) == encoded[static_cast<std::size_t>(t)][v]);
    }
  }
}

}  // namespace

TEST_CASE("rank and dimension of random matrices match plain Gaussian elimination", "[gf2]") {
  // Dense and sparse, square and wide, with dependent rows: the peeling + dense path must agree
  // with textbook elimination everywhere.
  for (std::uint64_t seed = 1; seed <= 40; ++seed) {
    const std::size_t m = 3 + seed % 17, n = m + 1 + (seed * 7) % 23;
    const double density = seed % 3 == 0 ? 0.5 : 0.15;
    const Code code = test::random_code(m, n, density, seed);
    const Encoder enc(code);
    INFO("seed " << seed << " m " << m << " n " << n);
    CHECK(enc.rank() == test::naive_rank(code));
    CHECK(enc.k() == n - enc.rank());
    check_encoder(code, seed);
  }
}

TEST_CASE("encoder satisfies every check on every shipped code", "[gf2]") {
  for (const auto& file : test::shipped_codes()) {
    INFO(file);
    check_encoder(test::shipped(file), 99, 64);
  }
}

TEST_CASE("repeated and empty rows lower the rank", "[gf2]") {
  const Code code = Code::from_checks(6, {{0, 1, 2}, {}, {0, 1, 2}, {2, 3}, {3, 4, 5}, {0, 1, 3}});
  const Encoder enc(code);
  // Rows 0 and 2 are equal, row 1 is empty, row 5 = row 0 + row 3.
  CHECK(enc.rank() == 3);
  CHECK(enc.rank() == test::naive_rank(code));
  CHECK(enc.k() == 3);
  check_encoder(code, 5);
}

TEST_CASE("an empty column is an information bit", "[gf2]") {
  const Code code = Code::from_checks(4, {{0, 1}, {1, 2}});
  const Encoder enc(code);
  CHECK(enc.k() == 2);
  CHECK(std::find(enc.info_positions().begin(), enc.info_positions().end(), 3u) !=
        enc.info_positions().end());
}

TEST_CASE("dense reduction gives row-echelon pivots", "[gf2]") {
  BitMatrix a(3, 70);
  a.set(0, 65);
  a.set(1, 3);
  a.set(1, 65);
  a.set(2, 3);
  const auto pivots = a.reduce();
  REQUIRE(pivots == std::vector<std::size_t>{3, 65});
  CHECK(a.get(0, 3));
  CHECK_FALSE(a.get(0, 65));
  CHECK(a.get(1, 65));
}
