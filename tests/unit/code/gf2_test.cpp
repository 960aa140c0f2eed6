#include <bit>
#include <catch2/catch.hpp>

#include "tannery/code/construct.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
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

TEST_CASE("the shipped protograph family encodes by peeling, information first", "[gf2]") {
  // codes/README.md: the encodable parity part leaves one dense check per parity system (one
  // for the binary short protographs) and the information bits are the first k positions.
  for (const char* rate : {"1-2", "2-3", "3-4", "5-6"}) {
    for (const char* n : {"648", "1944"}) {
      const std::string file = std::string("pg-") + rate + "-n" + n + ".qc";
      INFO(file);
      const Code code = test::shipped(file);
      const Encoder enc(code);
      CHECK(enc.dense_checks() == 1);
      CHECK(enc.k() == code.n() - code.m());
      for (std::uint32_t i = 0; i < enc.k(); ++i) REQUIRE(enc.info_positions()[i] == i);
      check_encoder(code, 7, 8);
    }
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

TEST_CASE("requested information positions: taken when they are an information set", "[gf2]") {
  // Every k-subset of a small random code: the encoder must take it exactly when the other
  // columns of H have full rank (checked by the naive elimination of the test support), and
  // then put the information bits there.
  const Code code = construct_regular(12, 2, 4, 3);
  const Encoder plain(code);
  const std::size_t n = code.n(), k = plain.k();
  int accepted = 0, refused = 0;
  for (std::uint32_t mask = 0; mask < (1u << n); ++mask) {
    if (static_cast<std::size_t>(std::popcount(mask)) != k) continue;
    std::vector<std::uint32_t> wanted;
    std::vector<std::vector<std::uint32_t>> others(code.m());
    for (std::uint32_t v = 0; v < n; ++v) {
      if (mask >> v & 1u) wanted.push_back(v);
    }
    for (std::size_t c = 0; c < code.m(); ++c) {
      for (std::uint32_t v : code.check_variables(c)) {
        if (!(mask >> v & 1u)) others[c].push_back(v);
      }
    }
    const bool information_set = test::naive_rank(Code::from_checks(n, others)) == plain.rank();
    if (!information_set) {
      CHECK_THROWS_AS(Encoder(code, wanted), Error);
      ++refused;
      continue;
    }
    const Encoder enc(code, wanted);
    CHECK(enc.info_positions() == wanted);
    std::vector<std::uint8_t> info, word(n);
    for (std::size_t i = 0; i < k; ++i) info.push_back(static_cast<std::uint8_t>((mask >> i) & 1u));
    enc.encode(info, word);
    CHECK(syndrome_weight(code, word) == 0);
    for (std::size_t i = 0; i < k; ++i) CHECK(word[wanted[i]] == info[i]);
    ++accepted;
  }
  CHECK(accepted > 0);
  CHECK(refused > 0);
}
