#include <catch2/catch.hpp>

#include "tannery/code/analysis.hpp"
#include "tannery/floor/estimate.hpp"
#include "tannery/floor/search.hpp"
#include "tannery/report/results.hpp"
#include "test_support.hpp"

using namespace tannery;
using V = std::vector<std::uint32_t>;

TEST_CASE("shape of hand-made subgraphs: absorbing and elementary", "[floor]") {
  // Checks {0,1,2}, {1,3}, {2,3,4}, {0,4} (as in the (a, b) classifier's test).
  const Code code = Code::from_checks(5, {{0, 1, 2}, {1, 3}, {2, 3, 4}, {0, 4}});
  StructureClassifier classify(code);
  // {1, 3}: check 1 even (both), checks 0 and 2 odd; each bit has one even and one odd check.
  StructureShape s = classify.shape(V{1, 3});
  CHECK(s.cls == StructureClass{2, 2});
  CHECK(s.odd_checks == V{0, 2});
  CHECK(!s.absorbing);
  CHECK(s.elementary);
  // Every bit: checks 0 and 2 hold three of the set (odd, degree 3), 1 and 3 hold two (even).
  s = classify.shape(V{0, 1, 2, 3, 4});
  CHECK(s.cls == StructureClass{5, 2});
  CHECK(!s.elementary);
  CHECK(!s.absorbing);  // bit 0: check 0 odd, check 3 even — a tie is not absorbing
  // A cycle 0-c0-1-c1-3-c2-... : {0, 1, 3, 4} meets c0 {0,1}, c1 {1,3}, c2 {3,4}, c3 {0,4}: all
  // even, so a codeword of the sub-code — and absorbing (every bit's checks all even).
  s = classify.shape(V{0, 1, 3, 4});
  CHECK(s.cls == StructureClass{4, 0});
  CHECK(s.absorbing);
  CHECK(s.elementary);
}

TEST_CASE("cyclic orbits: canonical member and orbit size", "[floor]") {
  const CyclicOrbits orbits(4);  // two blocks of Z = 4: positions 0..3 and 4..7
  CHECK(orbits.shifted(V{3, 5}, 1) == V{0, 6});
  auto [rep, size] = orbits.canonical(V{2, 7});
  CHECK(rep == V{0, 5});
  CHECK(size == 4);
  // {0, 2} repeats after a shift of 2: an orbit of two sets.
  std::tie(rep, size) = orbits.canonical(V{1, 3});
  CHECK(rep == V{0, 2});
  CHECK(size == 2);
  CHECK(CyclicOrbits(1).canonical(V{5, 2}).first == V{2, 5});
}

// The impulse method against the exact weight enumerator (k <= 24): the smallest codeword weight
// found is d_min, and for the Hamming codes every weight-3 codeword is found (A_3 = 7 and 35).
TEST_CASE("impulses find d_min of every shipped code with k <= 24", "[floor]") {
  for (const char* file :
       {"hamming-7-4.tanner", "hamming-15-11.tanner", "repetition-5.tanner", "parity-8.tanner"}) {
    INFO(file);
    auto code = std::make_shared<const Code>(test::shipped(file));
    const Encoder encoder(*code);
    const auto enumerator = weight_enumerator(*code, encoder);
    REQUIRE(enumerator);
    FloorSearchSettings s;
    s.threads = 2;
    const FloorSearchResult r = floor_search(code, s);
    CHECK(r.smallest_codeword_weight() == minimum_distance(*enumerator).value());
    std::uint64_t weight3 = 0;
    for (const auto& c : r.codewords) {
      CHECK(c.shape.cls.b == 0);
      CHECK(syndrome_weight(*code, [&] {
              std::vector<std::uint8_t> word(code->n(), 0);
              for (auto v : c.variables) word[v] = 1;
              return word;
            }()) == 0);
      weight3 += c.variables.size() == 3 ? c.multiplicity : 0;
    }
    if (std::string(file).starts_with("hamming")) CHECK(weight3 == (*enumerator)[3]);
  }
}

TEST_CASE("floor search is deterministic and independent of threads", "[floor]") {
  auto code = std::make_shared<const Code>(test::shipped("qc-rate-half-z54.qc"));
  FloorSearchSettings s;
  s.threads = 1;
  const FloorSearchResult one = floor_search(code, s);
  s.threads = 2;
  const FloorSearchResult two = floor_search(code, s);
  REQUIRE(one.trapping_sets.size() == two.trapping_sets.size());
  REQUIRE(!one.trapping_sets.empty());
  CHECK(one.lifting == 54);
  for (std::size_t i = 0; i < one.trapping_sets.size(); ++i) {
    CHECK(one.trapping_sets[i].variables == two.trapping_sets[i].variables);
    CHECK(one.trapping_sets[i].multiplicity == two.trapping_sets[i].multiplicity);
    CHECK(one.trapping_sets[i].shape.absorbing);
  }
}

TEST_CASE("importance-sampled points survive a results file round trip", "[floor]") {
  auto code = std::make_shared<const Code>(test::shipped("hamming-7-4.tanner"));
  FloorSearchSettings ss;
  const FloorSearchResult found = floor_search(code, ss);
  FloorEstimateSettings s;
  s.sweep = {6};
  s.frames = 2000;
  s.threads = 2;
  const auto points = floor_estimate(code, found.codewords, s);
  REQUIRE(points.size() == 1);
  const PointResult& p = points[0].point;
  REQUIRE(p.importance);
  CHECK(p.importance->fer > 0);
  CHECK(p.fer() == p.importance->fer);
  RunRecord run;
  run.tool_version = "test";
  run.code.n = 7;
  run.code.k = 4;
  run.config.sweep = {6};
  run.config.chunk_frames = 64;
  run.threads_used = 2;
  run.points = {p};
  const RunRecord back = parse_results_json(results_json(run), "round trip");
  REQUIRE(back.points.size() == 1);
  REQUIRE(back.points[0].importance);
  CHECK(*back.points[0].importance == *p.importance);
  const PointStats stats = point_stats(back.points[0], 0.95);
  CHECK(stats.fer.low < p.importance->fer);
  CHECK(stats.fer.high > p.importance->fer);
}

TEST_CASE("liftings chosen by their floor: the best score among the candidates", "[floor]") {
  // A (3,6) all-ones base lifted by 8 has weight-4 codewords at some shifts (the test code of
  // the estimate tests); the choice takes the candidate whose search finds the heaviest smallest
  // codeword (none found ranks first), then the largest smallest absorbing set.
  const std::vector<std::uint8_t> all_ones(3 * 6, 1);
  LiftOptions options;
  options.candidates = 5;
  Lifting lift = lift_base_graph(3, 6, all_ones, 8, 1, options);
  REQUIRE(lift.candidates.size() >= 2);
  const LiftingChoice choice = choose_lifting_by_floor(lift);
  REQUIRE(choice.scores.size() == lift.candidates.size());
  CHECK(lift.base.shifts == lift.candidates[choice.chosen].shifts);
  auto weight = [](const FloorScore& s) { return s.codeword == 0 ? SIZE_MAX : s.codeword; };
  for (const FloorScore& s : choice.scores)
    CHECK(weight(s) <= weight(choice.scores[choice.chosen]));
  // The score is the floor search's own finding on the chosen code.
  const FloorScore again = floor_score(Code::from_quasi_cyclic(lift.base));
  CHECK(again.codeword == choice.scores[choice.chosen].codeword);
  CHECK(again.smallest == choice.scores[choice.chosen].smallest);
}
