#include <catch2/catch.hpp>

#include "tannery/error.hpp"
#include "tannery/report/plot.hpp"
#include "tannery/report/results.hpp"

using namespace tannery;

namespace {

RunRecord sample() {
  RunRecord r;
  r.tool_version = "0.1.0";
  r.created = "2026-12-02T00:00:00Z";
  r.code = CodeRecord{"demo", "codes/demo.tanner", "aa", "bb", 8, 4, 4, 16};
  r.config.sweep = {1.0, 2.0};
  r.config.decoder.algorithm = Algorithm::offset_min_sum;
  r.config.decoder.beta = 0.25;
  r.config.decoder.kernel = Kernel::simd;
  r.config.decoder.quantization = parse_quantization("6.2");
  r.config.channel.snr_offset_db = 0.5;
  r.rate_for_snr = 0.5;
  r.threads_used = 2;
  r.config.chunk_frames = 64;
  PointResult p;
  p.parameter = 1.0;
  p.frames = 640;
  p.frame_errors = 12;
  p.bit_errors = 20;
  p.bits = 2560;
  p.coded_bits = 5120;
  p.coded_bit_errors = 44;
  p.iteration_histogram = {0, 600, 28, 12};
  p.iterations = 600 + 56 + 36;
  p.bit_error_squares = 50;
  p.failed_frames = {3, 99};
  p.chunks = 20;
  p.complete = true;
  p.stop_reason = "frame errors";
  p.seconds = 1.5;
  r.points.push_back(p);
  return r;
}

}  // namespace

TEST_CASE("results JSON round-trips every field a resume or comparison needs", "[report]") {
  const RunRecord a = sample();
  const RunRecord b = parse_results_json(results_json(a), "x.json");
  CHECK(b.config.decoder == a.config.decoder);
  CHECK(b.config.channel == a.config.channel);
  CHECK(b.config.stop == a.config.stop);
  CHECK(b.config.sweep == a.config.sweep);
  CHECK(b.code.matrix_sha256 == "bb");
  REQUIRE(b.points.size() == 1);
  CHECK(b.points[0].iterations == a.points[0].iterations);
  CHECK(b.points[0].failed_frames == a.points[0].failed_frames);
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
  std::string huge = results_json(sample());
  huge.replace(huge.find("\"frames\": 640"), 13, "\"frames\": 1e300");
  CHECK_THROWS_WITH(parse_results_json(huge, "r.json"), Catch::Contains("not a valid integer"));
  std::string text = results_json(sample());
  text.replace(text.find("\"frames\": 640"), 13, "\"frames\": 1");
  CHECK_THROWS_WITH(parse_results_json(text, "r.json"), Catch::Contains("more errors than trials"));
  // Files edited into inconsistency: each refused with the point and the problem.
  auto edited = [](auto change) {
    RunRecord r = sample();
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
  RunRecord zero = sample();
  zero.config.chunk_frames = 0;
  CHECK_THROWS_WITH(parse_results_json(results_json(zero), "r.json"),
                    Catch::Contains("chunk_frames 0 is outside"));
}

TEST_CASE("the plot is an SVG document with the curves and references", "[report]") {
  const std::string svg = plot_svg({PlotRun{"oms", sample()}}, PlotOptions{});
  CHECK(svg.rfind("<?xml", 0) == 0);
  CHECK(svg.find("<svg xmlns=\"http://www.w3.org/2000/svg\"") != std::string::npos);
  CHECK(svg.find("uncoded BPSK BER") != std::string::npos);
  CHECK(svg.find("Shannon limit") != std::string::npos);
  CHECK(svg.find("FER oms") != std::string::npos);
  CHECK(svg.substr(svg.size() - 7) == "</svg>\n");
}
