#include <catch2/catch.hpp>

#include "tannery/code/analysis.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/code/gf2.hpp"

#include <numeric>
#include "test_support.hpp"

using namespace tannery;

TEST_CASE("regular construction: exact degrees, no 4-cycles, deterministic", "[construct]") {
  const Code a = construct_regular(504, 3, 6, 9);
  const auto p = degree_profile(a);
  CHECK(p.variable == std::map<std::size_t, std::size_t>{{3, 504}});
  CHECK(p.check == std::map<std::size_t, std::size_t>{{6, 252}});
  CHECK(*cycle_census(a).girth >= 6);
  CHECK(a == construct_regular(504, 3, 6, 9));
  CHECK_FALSE(a == construct_regular(504, 3, 6, 10));
}

TEST_CASE("lifting reaches girth 6 at least, checked by the independent girth search",
          "[construct]") {
  std::vector<std::uint8_t> all_ones(3 * 6, 1);
  const Lifting lift = lift_base_graph(3, 6, all_ones, 31, 4);
  const auto census = cycle_census(Code::from_quasi_cyclic(lift.base));
  CHECK(*census.girth >= lift.girth_at_least);
  // Z = 1 is no lifting at all: every block rectangle is a 4-cycle, so it is refused.
  CHECK_THROWS(lift_base_graph(2, 2, std::vector<std::uint8_t>(4, 1), 1, 1));
}

TEST_CASE("shipped codes have the structure codes/README.md claims", "[construct]") {
  const Code regular = test::shipped("regular-3-6-n2016.tanner");
  CHECK(regular.n() == 2016);
  CHECK(*cycle_census(regular).girth >= 6);
  // The shipped file is reproduced by the documented command.
  CHECK(regular == construct_regular(2016, 3, 6, 2016));
  const Code qc = test::shipped("qc-rate-half-z54.qc");
  CHECK(qc.quasi_cyclic()->lifting == 54);
  CHECK(*cycle_census(qc).girth >= 6);
  CHECK(Encoder(qc).k() * 2 == qc.n());
}

TEST_CASE("lifting claims girth 8 only when the search confirms it", "[construct]") {
  // The claim comes from the block-cycle conditions; cycle_census is the independent check.
  const std::vector<std::uint8_t> all_ones(3 * 6, 1);
  for (std::size_t z : {7, 13, 31, 61}) {
    const Lifting lift = lift_base_graph(3, 6, all_ones, z, 9);
    const auto census = cycle_census(Code::from_quasi_cyclic(lift.base));
    INFO("Z = " << z << " claimed " << lift.girth_at_least);
    CHECK(*census.girth >= lift.girth_at_least);
  }
  // A (3,6) all-ones base cannot exceed girth 12 (Fossorier 2004); a large Z reaches 8.
  CHECK(lift_base_graph(3, 6, all_ones, 61, 9).girth_at_least == 8);
}

TEST_CASE("PEG: exact degrees, large girth, deterministic", "[construct]") {
  // Hu, Eleftheriou, Arnold 2005 report girth 8 for their regular dv = 3, n = 504, rate-1/2 PEG
  // graph (value from memory of the paper's table).
  const Code peg = construct_peg(std::vector<std::size_t>(504, 3), 252, 1);
  const auto p = degree_profile(peg);
  CHECK(p.variable == std::map<std::size_t, std::size_t>{{3, 504}});
  // Check degrees kept as even as possible: within one of the mean 6.
  CHECK(p.check.begin()->first >= 5);
  CHECK(p.check.rbegin()->first <= 7);
  CHECK(*cycle_census(peg).girth >= 8);
  CHECK(peg == construct_peg(std::vector<std::size_t>(504, 3), 252, 1));
  // Irregular: degree-2 variables first; every column gets its degree.
  std::vector<std::size_t> degrees(300, 2);
  degrees.resize(500, 3);
  degrees.resize(600, 8);
  const Code irregular = construct_peg(degrees, 300, 2);
  for (std::size_t v = 0; v < 600; ++v) REQUIRE(irregular.variable_degree(v) == degrees[v]);
  CHECK(*cycle_census(irregular).girth >= 6);
}

TEST_CASE("multiplicity tables are split into 0/1 patterns that keep every degree", "[construct]") {
  // Base graph with a double edge: row 0 = (2, 1, 1), row 1 = (1, 1, 2).
  const std::vector<std::uint8_t> table{2, 1, 1, 1, 1, 2};
  const auto pattern = split_multiplicities(2, 3, table, 2);
  REQUIRE(pattern.size() == 4 * 6);
  for (std::size_t r = 0; r < 4; ++r) {
    int weight = 0;
    for (std::size_t c = 0; c < 6; ++c) weight += pattern[r * 6 + c];
    CHECK(weight == 4);  // row degree of the base row: 2 + 1 + 1
  }
  for (std::size_t c = 0; c < 6; ++c) {
    int weight = 0;
    for (std::size_t r = 0; r < 4; ++r) weight += pattern[r * 6 + c];
    CHECK(weight == (c / 2 == 1 ? 2 : 3));  // column degrees 3, 2, 3
  }
  const Lifting lift = lift_base_graph(4, 6, pattern, 17, 3);
  CHECK(*cycle_census(Code::from_quasi_cyclic(lift.base)).girth >= lift.girth_at_least);
}

TEST_CASE("cycle-optimised lifting: block conditions count the lifted cycles exactly",
          "[construct]") {
  // Each closed block cycle condition of length 2l stands for Z cycles of length 2l in the
  // lifted graph (Fossorier, IEEE Trans. IT 2004) when the shifts have no period; cycle_census
  // counts them independently by breadth-first search.
  const Code shipped = test::shipped("qc-rate-half-z54.qc");
  const QuasiCyclic& qc = *shipped.quasi_cyclic();
  std::vector<std::uint8_t> pattern(qc.shifts.size());
  for (std::size_t e = 0; e < pattern.size(); ++e) pattern[e] = qc.shifts[e] >= 0;
  // The greedy pass alone (passes = 0) is the algorithm the shipped code was made with, and
  // rebuilds it bit for bit from its documented command.
  LiftOptions greedy;
  greedy.passes = 0;
  const Lifting old = lift_base_graph(qc.block_rows, qc.block_cols, pattern, 54, 5, greedy);
  CHECK(Code::from_quasi_cyclic(old.base) == shipped);
  const CycleCensus old_census = cycle_census(shipped);
  CHECK(*old_census.girth == 8);
  CHECK(old_census.count == 54 * old.closed[2]);
  // Coordinate descent closes no 8-cycle condition either: girth 10.
  const Lifting better = lift_base_graph(qc.block_rows, qc.block_cols, pattern, 54, 5);
  CHECK(better.closed == std::array<std::size_t, 3>{0, 0, 0});
  CHECK(*cycle_census(Code::from_quasi_cyclic(better.base)).girth == 10);
  // A small lifting of a dense base must keep 6-cycles: counted the same both ways.
  const std::vector<std::uint8_t> all_ones(3 * 6, 1);
  const Lifting small = lift_base_graph(3, 6, all_ones, 7, 2);
  const CycleCensus census = cycle_census(Code::from_quasi_cyclic(small.base));
  REQUIRE(small.closed[0] == 0);
  REQUIRE(small.closed[1] > 0);
  CHECK(*census.girth == 6);
  CHECK(census.count == 7 * small.closed[1]);
  CHECK(lift_base_graph(3, 6, all_ones, 7, 2).base.shifts == small.base.shifts);  // deterministic
  // The starts' results as candidates: distinct, fewest closed conditions first, the first the
  // lifting itself.
  LiftOptions keep;
  keep.candidates = 5;
  const Lifting kept = lift_base_graph(3, 6, all_ones, 7, 2, keep);
  REQUIRE(!kept.candidates.empty());
  CHECK(kept.candidates.size() <= 5);
  CHECK(kept.candidates[0].shifts == small.base.shifts);
  CHECK(kept.candidate_closed[0] == small.closed);
  for (std::size_t i = 1; i < kept.candidates.size(); ++i) {
    CHECK(kept.candidates[i].shifts != kept.candidates[0].shifts);
    const auto& a = kept.candidate_closed[i - 1];
    const auto& b = kept.candidate_closed[i];
    CHECK((a[0] << 40) + (a[1] << 20) + a[2] <= (b[0] << 40) + (b[1] << 20) + b[2]);
  }
}

TEST_CASE("encodable lifting: peeling encodes with one dense check per parity system",
          "[construct]") {
  // Four information columns and the encodable parity part: a weight-3 column in rows 1, 3, 4,
  // then a dual diagonal; one information column with a double edge, so the base is split in 2.
  const Protograph p = parse_protograph(
      "1 2 1 1 1 1 0 0\n1 0 1 1 0 1 1 0\n1 1 1 1 1 0 1 1\n1 1 0 1 1 0 0 1\n", "test");
  const std::size_t t = 2, z = 20;
  const std::vector<std::uint8_t> pattern = split_multiplicities(p.rows, p.cols, p.cells, t);
  ParitySystem system;
  for (std::size_t k = 0; k < 4; ++k) system.rows.push_back(k), system.cols.push_back(4 + k);
  const std::vector<ParitySystem> systems = expand_parity_systems({system}, t);
  REQUIRE(systems.size() == 2);
  CHECK(systems[1].rows == std::vector<std::size_t>{1, 3, 5, 7});
  CHECK(systems[1].cols == std::vector<std::size_t>{9, 11, 13, 15});
  const Lifting lift = lift_base_graph(p.rows * t, p.cols * t, pattern, z, 3,
                                       parity_lift_options(systems, 16, true));
  const Code code = Code::from_quasi_cyclic(lift.base);
  const Encoder encoder(code);
  CHECK(encoder.k() == code.n() / 2);
  CHECK(encoder.dense_checks() <= 2);  // at most one per system
  // The parity shifts keep the conditions: dual diagonal 0, weight-3 column 0, 0 and a unit.
  for (const ParitySystem& s : systems) {
    CHECK(lift.base.shift(s.rows[0], s.cols[1]) == 0);
    CHECK(lift.base.shift(s.rows[2], s.cols[0]) == 0);
    CHECK(std::gcd(lift.base.shift(s.rows[3], s.cols[0]), std::int64_t{z}) == 1);
  }
  // Two steps (2 x 5 then 4): the parity systems follow the first step's copies.
  const Lifting first = lift_base_graph(p.rows * t, p.cols * t, pattern, 5, 3,
                                        parity_lift_options(systems, 16, false));
  const Code stage = Code::from_quasi_cyclic(first.base);
  std::vector<std::uint8_t> stage_pattern(stage.m() * stage.n(), 0);
  for (std::size_t c = 0; c < stage.m(); ++c)
    for (std::uint32_t v : stage.check_variables(c)) stage_pattern[c * stage.n() + v] = 1;
  const auto stage_systems = expand_parity_systems(systems, 5);
  const Lifting second = lift_base_graph(stage.m(), stage.n(), stage_pattern, 4, 4,
                                         parity_lift_options(stage_systems, stage.n(), true));
  const Code two_step = Code::from_quasi_cyclic(second.base);
  CHECK(two_step.n() == code.n());
  CHECK(Encoder(two_step).dense_checks() <= stage_systems.size());  // at most one per system
}
