#include <catch2/catch.hpp>

#include "sample_run.hpp"
#include "tannery/error.hpp"
#include "tannery/report/results.hpp"

using namespace tannery;

TEST_CASE("results JSON round-trips every field a resume or comparison needs", "[report]") {
  RunRecord a = test::sample_run();
  a.sent_bits = 6;
  const RunRecord b = parse_results_json(results_json(a), "x.json");
  CHECK(b.sent_bits == 6);
  CHECK(b.config.decoder == a.config.decoder);
  CHECK(b.config.channel == a.config.channel);
  CHECK(b.config.stop == a.config.stop);
  CHECK(b.config.sweep == a.config.sweep);
  CHECK(b.code.matrix_sha256 == "bb");
  REQUIRE(b.points.size() == 1);
  CHECK(b.points[0].iterations == a.points[0].iterations);
  CHECK(b.points[0].failed_frames == a.points[0].failed_frames);
  CHECK(b.points[0].failure_classes == a.points[0].failure_classes);
  CHECK(b.points[0].larger_failures == a.points[0].larger_failures);
  CHECK(results_json(b) == results_json(a));
}

TEST_CASE("bad results files are refused naming the problem", "[report]") {
  CHECK_THROWS_WITH(parse_results_json("{", "r.json"), Catch::Contains("r.json: not valid JSON"));
  CHECK_THROWS_WITH(parse_results_json("{}", "r.json"),
                    Catch::Contains("not a tannery results file"));
  // Found by tests/fuzz/fuzz_results: a number beyond any JSON number type, a float where an
  // integer count belongs.
  CHECK_THROWS_WITH(parse_results_json("[6e5148]", "r.json"),
                    Catch::Contains("r.json: not valid JSON"));
  std::string huge = results_json(test::sample_run());
  huge.replace(huge.find("\"frames\": 640"), 13, "\"frames\": 1e300");
  CHECK_THROWS_WITH(parse_results_json(huge, "r.json"), Catch::Contains("not a valid integer"));
  std::string text = results_json(test::sample_run());
  text.replace(text.find("\"frames\": 640"), 13, "\"frames\": 1");
  CHECK_THROWS_WITH(parse_results_json(text, "r.json"), Catch::Contains("more errors than trials"));
  // Files edited into inconsistency: each refused with the point and the problem.
  auto edited = [](auto change) {
    RunRecord r = test::sample_run();
    change(r.points[0]);
    return results_json(r);
  };
  const std::pair<std::string, std::string> cases[] = {
      {edited([](PointResult& p) {
         p.failed_frames = {3, 3};
       }),
       "failed frames are not listed in increasing order without repeats"},
      {edited([](PointResult& p) {
         p.failed_frames = {3, 640};
       }),
       "failed frame 640 is beyond the point's 640 frames"},
      {edited([](PointResult& p) { p.seconds = -1; }), "seconds must be >= 0"},
      {edited([](PointResult& p) {
         p.iteration_histogram = {0, 600, 28, 13};
       }),
       "the iteration histogram counts more frames than the point has"},
      {edited([](PointResult& p) {
         p.iteration_histogram = {0, 1, ~std::uint64_t{0}};
       }),
       "the iteration histogram counts more frames than the point has"},
      {edited([](PointResult& p) { p.undetected_errors = 13; }), "more errors than trials"},
      {edited([](PointResult& p) {
         p.iteration_histogram = {0, 600};
       }),
       "the iteration histogram counts 600 frames, the point has 640"},
  };
  for (const auto& [json, message] : cases) {
    INFO(message);
    CHECK_THROWS_WITH(parse_results_json(json, "r.json"),
                      Catch::Contains("r.json: point 0: " + message));
  }
  RunRecord zero = test::sample_run();
  zero.config.chunk_frames = 0;
  CHECK_THROWS_WITH(parse_results_json(results_json(zero), "r.json"),
                    Catch::Contains("chunk_frames 0 is outside"));
}
