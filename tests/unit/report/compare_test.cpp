#include <catch2/catch.hpp>
#include <cmath>

#include "tannery/base/stats.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/report/compare.hpp"

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
  // On Rayleigh fading too the sweep is an SNR in dB: later is worse.
  RunRecord faded_ref = ref, faded_late = shifted(0.2);
  faded_ref.config.channel.kind = faded_late.config.channel.kind = ChannelKind::rayleigh;
  const Comparison faded = compare_runs(faded_late, faded_ref, o);
  CHECK(faded.unit == "dB");
  CHECK(*faded.shift == Approx(0.2).margin(1e-4));
  CHECK(faded.regression);
}

TEST_CASE("mode selection, unmatched points and warnings", "[compare]") {
  const RunRecord a = run_of({point(1, 1000, 10), point(2, 1000, 1)}, 1);
  RunRecord b = run_of({point(2, 1000, 1), point(3, 1000, 0)}, 1);
  Comparison c = compare_runs(a, b, CompareOptions{});
  CHECK(c.mode == CompareMode::exact);
  CHECK(c.only_current == std::vector<double>{1});
  CHECK(c.only_reference == std::vector<double>{3});
  CHECK(c.regression);  // the reference's point 3 was not checked: never a pass
  CHECK_THAT(c.reasons.back(), Catch::Contains("point 3 of the reference is missing"));
  b.points.pop_back();
  CHECK_FALSE(compare_runs(a, b, CompareOptions{}).regression);
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

TEST_CASE("exact mode calls fewer errors better, more errors a regression", "[compare]") {
  const RunRecord ref = run_of({point(1, 1000, 20)}, 1);
  const RunRecord fewer = run_of({point(1, 1000, 19)}, 1), more = run_of({point(1, 1000, 21)}, 1);
  const Comparison better = compare_runs(fewer, ref, CompareOptions{});
  CHECK(better.mode == CompareMode::exact);
  CHECK_FALSE(better.regression);
  CHECK_THAT(better.points[0].note, Catch::Contains("counts differ (better"));
  const Comparison worse = compare_runs(more, ref, CompareOptions{});
  CHECK(worse.regression);
  CHECK_THAT(worse.points[0].note, Catch::Contains("counts differ (worse)"));
  CHECK(compare_runs(ref, ref, CompareOptions{}).points[0].note == "identical counts");
}

TEST_CASE("different codes cannot be compared", "[compare]") {
  RunRecord a = run_of({point(1, 1000, 20)}, 1), b = a;
  a.code.matrix_sha256 = std::string(64, 'a');
  b.code.matrix_sha256 = std::string(64, 'b');
  CHECK_THROWS_WITH(compare_runs(a, b, CompareOptions{}), Catch::Contains("different codes"));
}

TEST_CASE("pairing needs the same frames, not the same chunk size", "[compare]") {
  RunRecord a = run_of({point(1, 1000, 3)}, 1), b = a;
  b.config.decoder.algorithm = Algorithm::min_sum;
  a.config.chunk_frames = 64;
  b.config.chunk_frames = 1024;
  for (auto* r : {&a, &b}) r->points[0].failed_frames = {5, 50, 500};
  CHECK(compare_runs(a, b, CompareOptions{}).mode == CompareMode::paired);
}

TEST_CASE("a small loss at every point is caught by the test over all points", "[compare]") {
  // Five points; at each the current run alone fails 12 frames and the reference alone 5. Per
  // point P(X >= 12), X ~ Binomial(17, 1/2) = 0.0717 (textbook arithmetic: 9402 / 131 072), far
  // above the per-test level 0.05 / 11; together P(X >= 60), X ~ Binomial(85, 1/2) < 1e-4.
  RunRecord cur, ref;
  for (auto* r : {&cur, &ref}) r->tool_version = "test", r->config.seed = 1;
  ref.config.decoder.algorithm = Algorithm::min_sum;
  for (int i = 0; i < 5; ++i) {
    PointResult c = point(i, 10000, 12), r = point(i, 10000, 5);
    for (std::uint64_t f = 0; f < 12; ++f) c.failed_frames.push_back(f);
    for (std::uint64_t f = 0; f < 5; ++f) r.failed_frames.push_back(100 + f);
    cur.points.push_back(c);
    ref.points.push_back(r);
  }
  const Comparison c = compare_runs(cur, ref, CompareOptions{});
  CHECK(c.mode == CompareMode::paired);
  CHECK(c.tests == 11);
  CHECK(c.points[0].p_fer == Approx(9402.0 / 131072).epsilon(1e-12));
  REQUIRE(c.points.size() == 5);
  for (const auto& pc : c.points) CHECK_FALSE(pc.regression);
  REQUIRE(c.p_combined);
  CHECK(*c.p_combined < 1e-4);
  CHECK(c.regression);
  // Unpaired (different seeds): Cochran-Mantel-Haenszel over the five tables also catches it
  // where no single Fisher test does (12/10000 against 5/10000 per point).
  for (auto& p : ref.points) p.failed_frames.clear();
  ref.config.seed = 2;
  const Comparison u = compare_runs(cur, ref, CompareOptions{});
  CHECK(u.mode == CompareMode::unpaired);
  REQUIRE(u.points.size() == 5);
  for (const auto& pc : u.points) CHECK_FALSE(pc.regression);
  CHECK(*u.p_combined < u.level);
  CHECK(u.regression);
}

TEST_CASE("a tolerance check on a curve that never reaches the target FER", "[compare]") {
  const RunRecord ref =
      run_of({point(1, 10000, 1000), point(2, 10000, 100), point(3, 100000, 100)}, 1);
  CompareOptions o;
  o.tolerance = 0.1;
  // Above the target everywhere: a regression (exit 1), with the unit in the reason.
  const RunRecord stuck =
      run_of({point(1, 1000, 900), point(2, 1000, 500), point(3, 1000, 200)}, 2);
  const Comparison c = compare_runs(stuck, ref, o);
  CHECK(c.regression);
  CHECK_THAT(c.reasons[0], Catch::Contains("never reaches FER 0.01"));
  CHECK_THAT(c.reasons[0], Catch::Contains("dB"));
  REQUIRE(c.points.size() == 3);
  for (const auto& pc : c.points) CHECK_FALSE(pc.regression);  // rows agree with the verdict
  // Below it everywhere: ahead of the reference.
  const RunRecord ahead = run_of({point(1, 10000, 50), point(2, 10000, 5), point(3, 10000, 1)}, 2);
  CHECK_FALSE(compare_runs(ahead, ref, o).regression);
  const Comparison shifted = compare_runs(ref, ref, o);
  CHECK_THAT(shifted.reasons[0], Catch::Contains("+0.0000 dB behind"));
}
