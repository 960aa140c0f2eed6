#include <catch2/catch.hpp>
#include <cmath>

#include "decode/simd_control.hpp"
#include "tannery/decode/decoder.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

using Out = test::Decoded;
Out decode(const Code& code, const DecoderSettings& s, const std::vector<double>& llr) {
  return test::decode_all(code, s, llr);
}

std::vector<double> noisy(const Code& code, std::size_t frames, std::uint64_t seed, double mean,
                          double spread) {
  return test::gaussian_llrs(code.n() * frames, seed, mean, spread);
}

}  // namespace

TEST_CASE(
    "fixed-point SIMD kernels match the scalar fixed-point reference bit for bit on every target",
    "[simd]") {
  test::TargetGuard guard;
  const std::vector<std::string> targets = simd_targets();
  REQUIRE(!targets.empty());
  INFO("targets: " << targets.size());
  // Check degrees 7-8; 0-13 (random); 8; 12-28 (random, dense: degrees past 16 take the
  // kernels' generic path, the others their per-degree code).
  const std::vector<Code> codes = {
      test::shipped("qc-rate-half-z54.qc"), test::random_code(40, 90, 0.07, 3),
      test::shipped("hamming-15-11.tanner"), test::random_code(12, 110, 0.18, 4)};
  std::size_t past_16 = 0;
  for (std::size_t c = 0; c < codes.back().m(); ++c) past_16 += codes.back().check_degree(c) > 16;
  REQUIRE((past_16 > 0 && past_16 < codes.back().m()));  // both paths
  const std::vector<std::string> specs = {"6.2", "5.1:5:7", "8.3:8:8", "6.2:6:12", "4.1:4:16"};
  const Algorithm algorithms[] = {Algorithm::min_sum, Algorithm::normalized_min_sum,
                                  Algorithm::offset_min_sum};
  std::uint64_t seed = 1;
  std::size_t undecided = 0, failed = 0;  // frames with undecided bits, frames not converged
  for (const Code& code : codes) {
    for (const auto& spec : specs) {
      for (Algorithm a : algorithms) {
        for (bool early : {true, false}) {
          DecoderSettings s;
          s.kernel = Kernel::reference;
          s.algorithm = a;
          s.schedule = Schedule::layered;
          s.iterations = 12;
          s.early_stop = early;
          // alpha 5/8 takes the general eighths rule, 3/4 its one-shift case.
          s.alpha = seed % 2 ? 0.625 : 0.75;
          s.beta = 0.5;
          s.quantization = parse_quantization(spec);
          // Frames not a multiple of any lane count and more than the widest batch (lanes are
          // refilled), LLRs from clean to hopeless, with infinities.
          auto llr = noisy(code, 150, ++seed, 1.0, 2.5);
          llr[5] = INFINITY;
          llr[code.n() + 3] = -INFINITY;
          const Out reference = decode(code, s, llr);
          s.kernel = Kernel::simd;
          for (const auto& target : targets) {
            force_simd_target(target);
            // Check state kept per edge (these small codes by default) and compressed.
            for (std::size_t above : {kCompressAboveBytes, std::size_t{0}}) {
              compress_simd_checks_above(above);
              const Out simd = decode(code, s, llr);
              INFO("target " << target << " spec " << spec << " algorithm " << name_of(a)
                             << " early " << early << " compressed " << (above == 0));
              REQUIRE(simd.hard == reference.hard);
              REQUIRE(simd.posterior == reference.posterior);
              for (std::size_t f = 0; f < simd.outcome.size(); ++f) {
                REQUIRE(simd.outcome[f].iterations == reference.outcome[f].iterations);
                REQUIRE(simd.outcome[f].syndrome_weight == reference.outcome[f].syndrome_weight);
                REQUIRE(simd.outcome[f].undecided == reference.outcome[f].undecided);
                REQUIRE(simd.outcome[f].converged == reference.outcome[f].converged);
                undecided += simd.outcome[f].undecided > 0;
                failed += !simd.outcome[f].converged;
              }
            }
            compress_simd_checks_above();
          }
          force_simd_target("");
        }
      }
    }
  }
  // The outcomes of frames that ran to the limit were compared, also with undecided bits.
  CHECK(undecided > 0);
  CHECK(failed > 0);
}

TEST_CASE("float SIMD kernels agree with the double reference within tolerance on every target",
          "[simd]") {
  // Stated tolerance: float32 arithmetic and, for sum-product, messages capped at 60 ln 2 (41.6).
  // Decisions must be identical on frames both converge;
  // posteriors of min-sum agree to 1e-3 relative on frames that converge.
  test::TargetGuard guard;
  // The qc code (check degrees 7 and 8) and a dense random one (degrees 12-28: the kernels'
  // per-degree code and their generic path), each at LLRs where most frames converge.
  for (auto [code, mean] : {std::pair{test::shipped("qc-rate-half-z54.qc"), 3.0},
                            std::pair{test::random_code(12, 110, 0.18, 4), 9.0}})
    for (auto [a, schedule] : {std::pair{Algorithm::min_sum, Schedule::layered},
                               std::pair{Algorithm::normalized_min_sum, Schedule::layered},
                               std::pair{Algorithm::offset_min_sum, Schedule::layered},
                               std::pair{Algorithm::sum_product, Schedule::layered},
                               std::pair{Algorithm::min_sum, Schedule::flooding},
                               std::pair{Algorithm::normalized_min_sum, Schedule::flooding},
                               std::pair{Algorithm::sum_product, Schedule::flooding}}) {
      DecoderSettings s;
      s.kernel = Kernel::reference;
      s.algorithm = a;
      s.schedule = schedule;
      s.iterations = 30;
      // Consistent Gaussian LLRs (var = 2 mean); mean 3 is about 2 dB for the rate-1/2 code.
      const auto llr = noisy(code, 45, 99, mean, std::sqrt(2 * mean));
      const Out reference = decode(code, s, llr);
      s.kernel = Kernel::simd;
      for (const auto& target : simd_targets()) {
        force_simd_target(target);
        const Out simd = decode(code, s, llr);
        std::size_t both = 0;
        for (std::size_t f = 0; f < simd.outcome.size(); ++f) {
          if (!simd.outcome[f].converged || !reference.outcome[f].converged) continue;
          ++both;
          INFO("target " << target << " algorithm " << name_of(a) << " " << name_of(schedule)
                         << " frame " << f);
          for (std::size_t v = 0; v < code.n(); ++v) {
            REQUIRE(simd.hard[f * code.n() + v] == reference.hard[f * code.n() + v]);
          }
        }
        CHECK(both >= 25);  // the comparison is not vacuous: most of the 45 frames converge
        if (schedule == Schedule::layered && a != Algorithm::sum_product) {
          // Compressed check state: the same float operations, so the same bits.
          compress_simd_checks_above(0);
          const Out compressed = decode(code, s, llr);
          compress_simd_checks_above();
          INFO("target " << target << " algorithm " << name_of(a) << " compressed");
          REQUIRE(compressed.hard == simd.hard);
          REQUIRE(compressed.posterior == simd.posterior);
          for (std::size_t f = 0; f < simd.outcome.size(); ++f)
            REQUIRE(compressed.outcome[f].iterations == simd.outcome[f].iterations);
        }
      }
      force_simd_target("");
    }
}

TEST_CASE("float SIMD sum-product keeps its precision on strong inputs", "[simd]") {
  // One flooding iteration from channel LLRs 18 +- 4 (about 2 to 34): every check message is the
  // tanh rule on the channel values alone, between about 2 and 32, so the float32 kernel must
  // give the double reference's posteriors to float precision (5e-4 allows the polynomials'
  // errors summed over a variable's checks). A kernel that forms 1 - prod tanh by subtraction
  // loses every digit past |message| ~ 16 (float32's 2^-24) and fails this by whole units.
  test::TargetGuard guard;
  for (const Code& code :
       {test::shipped("qc-rate-half-z54.qc"), test::random_code(12, 110, 0.18, 4)}) {
    DecoderSettings s;
    s.kernel = Kernel::reference;
    s.algorithm = Algorithm::sum_product;
    s.schedule = Schedule::flooding;
    s.iterations = 1;
    s.early_stop = false;
    const auto llr = noisy(code, 20, 7, 18.0, 4.0);
    const Out reference = decode(code, s, llr);
    double largest = 0;
    for (std::size_t v = 0; v < llr.size(); ++v)
      largest = std::max(largest, reference.posterior[v] - llr[v]);
    CHECK(largest > 3 * 16.6);  // sums of messages past the old float32 limit occur
    s.kernel = Kernel::simd;
    for (const auto& target : simd_targets()) {
      force_simd_target(target);
      const Out simd = decode(code, s, llr);
      for (std::size_t v = 0; v < llr.size(); ++v) {
        INFO("target " << target << " position " << v << " channel " << llr[v]);
        REQUIRE(simd.posterior[v] == Approx(reference.posterior[v]).margin(5e-4).epsilon(2e-6));
      }
    }
    force_simd_target("");
  }
}

TEST_CASE("the quantize SPEC syntax", "[simd]") {
  const auto q = parse_quantization("5.1:5:7");
  REQUIRE(q);
  CHECK(q->channel_bits == 5);
  CHECK(q->fraction_bits == 1);
  CHECK(q->message_bits == 5);
  CHECK(q->posterior_bits == 7);
  CHECK(parse_quantization("6.2")->posterior_bits == 8);
  CHECK_FALSE(parse_quantization("6"));
  CHECK_FALSE(parse_quantization("6.2:5"));
  CHECK_FALSE(parse_quantization("a.b"));
  for (const char* bad : {"6.2:", "6.2::", "6.2:6:8:", "6.2:6:8:9", " 6.2", "6.2 ", "6..2", "6.2x"})
    CHECK_FALSE(parse_quantization(bad));
  CHECK(parse_quantization("6.2:6:12")->posterior_bits == 12);
  DecoderSettings s;
  s.algorithm = Algorithm::sum_product;
  s.schedule = Schedule::layered;
  s.quantization = parse_quantization("6.2");
  CHECK_THROWS_WITH(make_decoder(test::shipped("hamming-7-4.tanner"), s),
                    Catch::Contains("min-sum"));
  s.algorithm = Algorithm::min_sum;
  s.quantization = parse_quantization("6.2:6:20");
  CHECK_THROWS_WITH(make_decoder(test::shipped("hamming-7-4.tanner"), s),
                    Catch::Contains("impossible quantization"));
  s.quantization = parse_quantization("6.2");
  s.kernel = Kernel::simd;
  s.schedule = Schedule::flooding;
  CHECK_THROWS_WITH(make_decoder(test::shipped("hamming-7-4.tanner"), s),
                    Catch::Contains("layered"));
  CHECK_THROWS_WITH(force_simd_target("NOPE"), Catch::Contains("not available here"));
}
