#include <catch2/catch.hpp>
#include <cmath>

#include "tannery/code/construct.hpp"
#include "tannery/report/compare.hpp"
#include "tannery/sim/stats.hpp"

using namespace tannery;

namespace {

PointResult point(double parameter, std::uint64_t frames, std::uint64_t errors) {
  PointResult p;
  p.parameter = parameter;
  p.frames = frames;
  p.frame_errors = errors;
  p.bits = frames * 100;
  p.bit_errors = errors * 5;
  p.bit_error_squares = static_cast<double>(errors) * 25;
  p.complete = true;
  return p;
}

RunRecord run_of(std::vector<PointResult> points, std::uint64_t seed) {
  RunRecord r;
  r.tool_version = "test";
  r.config.seed = seed;
  r.points = std::move(points);
  return r;
}

// Binomial sample by inversion on SplitMix uniforms (test-only).
std::uint64_t binomial(SplitMix& rng, std::uint64_t n, double p) {
  std::uint64_t k = 0;
  for (std::uint64_t i = 0; i < n; ++i) k += static_cast<double>(rng.next() >> 11) * 0x1.0p-53 < p;
  return k;
}

}  // namespace

TEST_CASE("Fisher's exact test keeps its false-alarm rate on equal proportions", "[compare]") {
  // 2000 synthetic pairs from the same distribution (p = 0.02, 2000 trials each), fixed seed.
  // An exact one-sided test at level 0.05 must reject at most 5% (it is conservative); the
  // bound adds 3 binomial standard deviations of the observed rate.
  SplitMix rng(11);
  int rejections = 0;
  const int pairs = 2000;
  for (int i = 0; i < pairs; ++i) {
    const auto a = binomial(rng, 2000, 0.02), b = binomial(rng, 2000, 0.02);
    rejections += fisher_greater_p(a, 2000, b, 2000) < 0.05;
  }
  INFO("false alarms " << rejections << " of " << pairs);
  CHECK(rejections <= 0.05 * pairs + 3 * std::sqrt(0.05 * 0.95 * pairs));
  CHECK(rejections > 0);  // the test is not vacuous
}

TEST_CASE("the exact McNemar test keeps its false-alarm rate", "[compare]") {
  // Under no change, each discordant frame is equally likely to be a failure of either run.
  SplitMix rng(12);
  int rejections = 0;
  const int trials = 4000;
  for (int i = 0; i < trials; ++i) {
    const std::uint64_t discordant = 5 + rng.below(60);
    const auto only_current = binomial(rng, discordant, 0.5);
    rejections += binomial_half_upper_p(only_current, discordant) < 0.05;
  }
  CHECK(rejections <= 0.05 * trials + 3 * std::sqrt(0.05 * 0.95 * trials));
}

TEST_CASE("reference values of the two exact tests", "[compare]") {
  // Binomial(10, 1/2): P(X >= 8) = (45 + 10 + 1) / 1024 (textbook arithmetic).
  CHECK(binomial_half_upper_p(8, 10) == Approx(56.0 / 1024).epsilon(1e-12));
  // scipy 1.10.1 (Debian python3-scipy): fisher_exact([[30, 970], [15, 985]], 'greater')[1]
  CHECK(fisher_greater_p(30, 1000, 15, 1000) == Approx(0.016827898663700026).epsilon(1e-9));
}

TEST_CASE("the dB tolerance measures the shift of the FER crossing", "[compare]") {
  // Reference: FER 1e-1, 1e-2, 1e-3 at 1, 2, 3 dB, so it crosses 1e-2 at exactly 2 dB.
  const RunRecord ref =
      run_of({point(1, 10000, 1000), point(2, 10000, 100), point(3, 100000, 100)}, 1);
  CHECK(*fer_crossing(ref.points, 1e-2, true) == Approx(2.0));
  CHECK(*fer_crossing(ref.points, 3.1622776601683795e-2, true) == Approx(1.5));
  auto shifted = [](double db) {
    // A curve whose log FER falls one decade per dB, db later than the reference (error counts
    // are rounded to integers, so the shift is exact to about 1e-5).
    std::vector<PointResult> pts;
    for (double x : {1.0, 2.0, 3.0}) {
      const double fer = std::pow(10.0, -(x - db));
      pts.push_back(point(x, 1000000, static_cast<std::uint64_t>(std::llround(fer * 1e6))));
    }
    return run_of(pts, 1);
  };
  CompareOptions o;
  o.tolerance = 0.1;
  const Comparison small = compare_runs(shifted(0.05), ref, o);
  CHECK(*small.shift == Approx(0.05).margin(1e-4));
  CHECK_FALSE(small.regression);
  const Comparison large = compare_runs(shifted(0.2), ref, o);
  CHECK(*large.shift == Approx(0.2).margin(1e-4));
  CHECK(large.regression);
  const Comparison better = compare_runs(shifted(-0.3), ref, o);
  CHECK_FALSE(better.regression);
}

TEST_CASE("mode selection, unmatched points and warnings", "[compare]") {
  const RunRecord a = run_of({point(1, 1000, 10), point(2, 1000, 1)}, 1);
  RunRecord b = run_of({point(2, 1000, 1), point(3, 1000, 0)}, 1);
  Comparison c = compare_runs(a, b, CompareOptions{});
  CHECK(c.mode == CompareMode::exact);
  CHECK(c.only_current == std::vector<double>{1});
  CHECK(c.only_reference == std::vector<double>{3});
  CHECK_FALSE(c.regression);
  b.config.seed = 2;
  c = compare_runs(a, b, CompareOptions{});
  CHECK(c.mode == CompareMode::unpaired);
  CHECK(c.warnings.size() == 1);
  CHECK_THAT(c.warnings[0], Catch::Contains("seed (1 vs 2)"));
  // Same seed, different decoder, complete failure lists: paired.
  RunRecord d = a, e = a;
  e.config.decoder.algorithm = Algorithm::min_sum;
  for (auto* r : {&d, &e}) {
    for (auto& p : r->points) {
      p.failed_frames.clear();
      for (std::uint64_t f = 0; f < p.frame_errors; ++f) p.failed_frames.push_back(f * 7);
    }
  }
  c = compare_runs(d, e, CompareOptions{});
  CHECK(c.mode == CompareMode::paired);
  CHECK(c.points[0].only_current == 0);
  CHECK_FALSE(c.regression);
}
