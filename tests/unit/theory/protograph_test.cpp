#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>

#include "tannery/code/code.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/protograph.hpp"

using namespace tannery;

namespace {
Protograph proto(const char* text) {
  return parse_protograph(text, "test");
}
// The rate-1/2 AR4JA protograph (Divsalar, Dolinar, Jones & Andrews, "Capacity-approaching
// protograph codes", IEEE JSAC 2009; the structure of CCSDS 131.1-O-2's rate-1/2 matrix), written
// from memory: column 5 is punctured, column 3 the degree-1 accumulator.
const char* kAr4ja = "0 0 1 0 2\n1 1 0 1 3\n1 2 0 2 1\npunctured 5\n";
// A quick search: rate-1/2 encodable protographs of 4 rows, one round of 30 steps.
ProtographSearchSettings quick_encodable_search() {
  ProtographSearchSettings s;
  s.rate = 0.5;
  s.rows = 4;
  s.encodable = true;
  s.rounds = 1;
  s.steps = 30;
  return s;
}
}  // namespace

TEST_CASE("the J function of EXIT analysis", "[theory]") {
  // J(sigma) is the BPSK-AWGN capacity at noise deviation 2 / sigma (the channel LLR 2y / s^2 has
  // mean 2 / s^2 and deviation 2 / s): an independent integration in the y domain.
  for (double sigma : {0.25, 0.5, 1.0, 2.0, 3.0, 5.0, 8.0}) {
    INFO("sigma " << sigma);
    CHECK(exit_j(sigma) == Approx(biawgn_capacity(2 / sigma)).margin(1e-9));
    // Brannstrom, Rasmussen & Grant (IEEE Trans. IT 2005) fit J ~ (1 - 2^(-H1 s^(2 H2)))^H3,
    // H1 = 0.3073, H2 = 0.8935, H3 = 1.1064 (constants from memory), good to about 1e-3.
    const double fit = std::pow(1 - std::pow(2.0, -0.3073 * std::pow(sigma, 2 * 0.8935)), 1.1064);
    CHECK(exit_j(sigma) == Approx(fit).margin(2e-3));
    CHECK(exit_j_inverse(exit_j(sigma)) == Approx(sigma).epsilon(1e-9));
    CHECK(exit_j_inverse_complement(exit_j_complement(sigma)) == Approx(sigma).epsilon(1e-9));
  }
  CHECK(exit_j(0) == 0);
  // Near 1 the complement keeps its digits: for large sigma 1 - J falls like exp(-sigma^2 / 8)
  // (the Gaussian tail of the LLR below 0), so -ln(1 - J) / sigma^2 tends to 1/8.
  CHECK(-std::log(exit_j_complement(30)) / 900 == Approx(0.125).epsilon(0.02));
  CHECK(exit_j_inverse_complement(exit_j_complement(20)) == Approx(20).epsilon(1e-8));
  CHECK(exit_j_inverse(1) == 40);
  CHECK_THROWS_AS(exit_j_inverse(std::nan("")), Error);
}

TEST_CASE("protograph EXIT thresholds of regular protographs equal density evolution",
          "[theory][long]") {
  // (3,6): Richardson & Urbanke, IEEE Trans. IT 2001, sigma* = 0.8809 by discretized density
  // evolution; a single-row protograph with multiplicity 3 and the 3 x 6 all-ones protograph
  // are the same ensemble.
  for (const char* text : {"3 3\n", "1 1 1 1 1 1\n1 1 1 1 1 1\n1 1 1 1 1 1\n"}) {
    const ThresholdResult r = protograph_threshold(proto(text), ChannelKind::awgn);
    CHECK(r.threshold == Approx(0.8809).margin(0.001));
    CHECK(r.rate == 0.5);
  }
  // (4,8): sigma* = 0.8376 (same table).
  CHECK(protograph_threshold(proto("4 4\n"), ChannelKind::awgn).threshold ==
        Approx(0.8376).margin(0.002));
  // The protograph reduces to the ensemble, so the discretized method applies and agrees.
  const ThresholdResult de =
      protograph_threshold(proto("3 3\n"), ChannelKind::awgn, ThresholdMethod::discretized);
  CHECK(de.threshold == Approx(0.8809).margin(de.accuracy));
  // BEC: the exact recursion per edge type equals the ensemble's (3,6) 0.4294 (Richardson &
  // Urbanke, Modern Coding Theory, 2008).
  CHECK(protograph_threshold(proto("3 3\n"), ChannelKind::bec).threshold ==
        Approx(0.42944).margin(2e-5));
  CHECK(protograph_ensemble(proto("3 3\n"))->rho.at(6) == 1);
}

TEST_CASE("protograph EXIT threshold of the rate-1/2 AR4JA protograph", "[theory]") {
  // Divsalar et al. 2009 report a threshold of 0.628 dB for it (from memory).
  const Protograph p = proto(kAr4ja);
  CHECK(p.design_rate() == 0.5);
  const ThresholdResult r = protograph_threshold(p, ChannelKind::awgn);
  CHECK(r.ebn0_db == Approx(0.628).margin(0.02));
  CHECK(r.gap_db == Approx(r.ebn0_db - 0.187).margin(0.002));
  // The structure matters: its degree distribution as an unstructured ensemble has no threshold
  // method here, and the discretized method refuses it rather than answer for another ensemble.
  CHECK(!protograph_ensemble(p));
  CHECK_THROWS_AS(protograph_threshold(p, ChannelKind::awgn, ThresholdMethod::discretized), Error);
  // Without puncturing (every column sent) the rate falls to 2/5.
  Protograph sent = p;
  sent.punctured.clear();
  CHECK(sent.design_rate() == Approx(0.4));
}

TEST_CASE("protographs that cannot decode or are malformed are refused", "[theory]") {
  // Row 1 joins only the two punctured columns: they are never determined.
  CHECK_THROWS_WITH(
      protograph_threshold(proto("1 1 0 0 0 0\n1 1 1 1 1 1\n0 0 1 1 1 1\npunctured 1 2\n"),
                           ChannelKind::awgn),
      Catch::Contains("does not converge"));
  CHECK_FALSE(protograph_bec_converges(
      proto("1 1 0 0 0 0\n1 1 1 1 1 1\n0 0 1 1 1 1\npunctured 1 2\n"), 0.01));
  CHECK_THROWS_WITH(proto("1 1\npunctured 3\n"), Catch::Contains("test:2"));
  CHECK_THROWS_WITH(proto("1 1\npunctured 1\npunctured 2\n"), Catch::Contains("second punctured"));
  CHECK_THROWS_WITH(proto("1 1 2\n1 x 1\n"), Catch::Contains("test:2"));
  CHECK_THROWS_WITH(proto("2 0 1\n").validate(), Catch::Contains("column 2 has no edge"));
  CHECK_THROWS_WITH(proto("1 1\n1 1\n").validate(), Catch::Contains("not in (0, 1)"));
  // Round trip through the text form.
  const Protograph p = proto(kAr4ja);
  const Protograph again = proto(protograph_text(p).c_str());
  CHECK(again.cells == p.cells);
  CHECK(again.punctured == p.punctured);
}

TEST_CASE("protograph design rules", "[theory]") {
  // AR4JA keeps them: its degree-1 column sits on a check with the punctured column.
  CHECK(protograph_design_violation(proto(kAr4ja), false).empty());
  // The same degree-1 column without puncturing is no precoder.
  Protograph sent = proto(kAr4ja);
  sent.punctured.clear();
  CHECK_THAT(protograph_design_violation(sent, false), Catch::Contains("degree 1"));
  // Degree-2 columns closing a cycle among the checks: rows (1, 2), (2, 3), (1, 3).
  CHECK_THAT(protograph_design_violation(proto("1 0 1 1 1 1\n1 1 0 1 1 1\n0 1 1 1 1 1\n"), false),
             Catch::Contains("cycle"));
  // A double edge on a degree-2 column is a cycle of length 2.
  CHECK_THAT(protograph_design_violation(proto("2 1 1 1\n0 1 1 1\n"), false),
             Catch::Contains("cycle"));
  // Encodable: the last rows columns are a weight-3 column and a dual diagonal.
  const Protograph encodable =
      proto("1 1 1 1 1 1 0 0\n1 1 1 1 0 1 1 0\n1 1 1 1 1 0 1 1\n1 1 1 1 1 0 0 1\n");
  CHECK(protograph_design_violation(encodable, true).empty());
  CHECK_THAT(
      protograph_design_violation(
          proto("1 1 1 1 1 1 0 0\n1 1 1 1 1 1 1 0\n1 1 1 1 1 0 1 1\n1 1 1 1 1 0 0 1\n"), true),
      Catch::Contains("column 5"));
}

TEST_CASE("the encodable weight bound is the weight of single-bit codewords", "[theory]") {
  // Information columns in rows {1,2,4}, {2,3,4}, {1,3,4}, {1,2,3} (from 1), M = 4: defects in
  // row i (from 0) cost 2M - 2 - i = 6, 5, 4, 3 parity bits, so one bit of each column makes a
  // codeword of weight 15, 13, 14 and 16.
  const Protograph p =
      proto("1 0 1 1 1 1 0 0\n1 1 0 1 0 1 1 0\n0 1 1 1 1 0 1 1\n1 1 1 0 1 0 0 1\n");
  CHECK(encodable_weight_bound(p) == 13);
  // An encodable lifting (the parity part's conditions of construct lift --encodable) and the
  // codeword of every single information bit, from the encoder.
  const std::size_t z = 31;
  ParitySystem system;
  for (std::size_t k = 0; k < 4; ++k) system.rows.push_back(k), system.cols.push_back(4 + k);
  const Lifting lift = lift_base_graph(4, 8, p.cells, z, 1, parity_lift_options({system}, 8, true));
  const Code code = Code::from_quasi_cyclic(lift.base);
  std::vector<std::uint32_t> info(4 * z);
  for (std::uint32_t i = 0; i < info.size(); ++i) info[i] = i;
  const Encoder encoder(code, info);
  REQUIRE(encoder.dense_checks() <= 1);
  const std::size_t expected[4] = {15, 13, 14, 16};
  std::vector<std::uint8_t> bits(encoder.k()), word(code.n());
  for (std::size_t i = 0; i < encoder.k(); ++i) {
    std::fill(bits.begin(), bits.end(), 0);
    bits[i] = 1;
    encoder.encode(bits, word);
    INFO("information bit " << i);
    CHECK(static_cast<std::size_t>(std::count(word.begin(), word.end(), 1)) == expected[i / z]);
  }
  // Only protographs with the encodable parity part have the bound.
  CHECK_THROWS_AS(encodable_weight_bound(proto(kAr4ja)), Error);
  // The search keeps a bound: with 4 rows, degree-3 columns in the last rows weigh 10.
  ProtographSearchSettings s = quick_encodable_search();
  s.min_weight = 16;
  CHECK(encodable_weight_bound(search_protograph(s).best) >= 16);
  s.encodable = false;
  CHECK_THROWS_WITH(search_protograph(s), Catch::Contains("encodable"));
}

TEST_CASE("the protograph search improves on its start, deterministically for a seed", "[theory]") {
  ProtographSearchSettings s;
  s.start = proto("1 1 1 1 1 1\n1 1 1 1 1 1\n1 1 1 1 1 1\n");  // (3,6)-regular: 1.102 dB
  s.max_multiplicity = 2;
  s.rounds = 2;
  s.steps = 40;
  s.seed = 3;
  s.threads = 1;
  const ProtographSearchResult a = search_protograph(s);
  REQUIRE(a.start_threshold);
  CHECK(a.threshold.ebn0_db < a.start_threshold->ebn0_db - 0.05);
  CHECK(a.rounds == 2);
  CHECK(a.evaluations == 80);
  CHECK(protograph_design_violation(a.best, false).empty());
  s.threads = 2;
  const ProtographSearchResult b = search_protograph(s);
  CHECK(b.best.cells == a.best.cells);
  CHECK(b.threshold.threshold == a.threshold.threshold);
  // A random start of a given shape, encodable: the parity part stays fixed.
  ProtographSearchSettings r = quick_encodable_search();
  const ProtographSearchResult c = search_protograph(r);
  CHECK(c.best.cols == 8);
  CHECK(protograph_design_violation(c.best, true).empty());
  CHECK(c.threshold.gap_db < 1.5);
  // Shapes the rate cannot have.
  r.rows = 3;
  r.rate = 0.6;
  CHECK_THROWS_WITH(search_protograph(r), Catch::Contains("not a whole number"));
}
