#include <catch2/catch.hpp>
#include <cmath>

#include "tannery/code/analysis.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/decode/decoder.hpp"
#include "tannery/error.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

using Run = test::Decoded;
Run run(const Code& code, const DecoderSettings& s, const std::vector<double>& llr) {
  return test::decode_all(code, s, llr);
}

DecoderSettings settings(Algorithm a, Schedule sch = Schedule::flooding, int iterations = 50,
                         bool early = true) {
  DecoderSettings s;
  s.kernel = Kernel::reference;  // these tests define the reference decoders
  s.algorithm = a;
  s.schedule = sch;
  s.iterations = iterations;
  s.early_stop = early;
  return s;
}

// Random Tanner graph that is a tree: each new check joins one existing variable to 1-3 new ones.
Code random_tree(std::size_t checks, std::uint64_t seed) {
  SplitMix rng(seed);
  std::vector<std::vector<std::uint32_t>> rows;
  std::uint32_t n = 1;
  for (std::size_t c = 0; c < checks; ++c) {
    std::vector<std::uint32_t> row{static_cast<std::uint32_t>(rng.below(n))};
    const std::size_t fresh = 1 + rng.below(3);
    for (std::size_t i = 0; i < fresh; ++i) row.push_back(n++);
    rows.push_back(row);
  }
  return Code::from_checks(n, rows);
}

// Exact bitwise MAP LLRs by enumerating every codeword: log sum_{c_i=0} w(c) - log sum_{c_i=1}
// w(c), with w(c) = exp(-sum_{c_j = 1} L_j) (the likelihood up to a constant).
std::vector<double> exact_marginals(const Code& code, const std::vector<double>& llr) {
  const Encoder enc(code);
  std::vector<std::uint8_t> info(enc.k()), word(code.n());
  std::vector<double> log0(code.n(), -INFINITY), log1(code.n(), -INFINITY);
  auto add = [](double& acc, double x) {
    const double hi = std::max(acc, x), lo = std::min(acc, x);
    acc = hi + std::log1p(std::exp(lo - hi));
  };
  for (std::uint64_t u = 0; u < (std::uint64_t{1} << enc.k()); ++u) {
    for (std::size_t j = 0; j < enc.k(); ++j) info[j] = (u >> j) & 1u;
    enc.encode(info, word);
    double metric = 0;
    for (std::size_t i = 0; i < code.n(); ++i) metric -= word[i] ? llr[i] : 0.0;
    for (std::size_t i = 0; i < code.n(); ++i) add(word[i] ? log1[i] : log0[i], metric);
  }
  std::vector<double> out(code.n());
  for (std::size_t i = 0; i < code.n(); ++i) out[i] = log0[i] - log1[i];
  return out;
}

std::vector<double> random_llrs(std::size_t count, std::uint64_t seed, double mean = 1.0,
                                double spread = 2.0) {
  return test::gaussian_llrs(count, seed, mean, spread);
}

}  // namespace

TEST_CASE("on a tree, sum-product posteriors are the exact MAP marginals", "[decode]") {
  // Kschischang, Frey, Loeliger, "Factor graphs and the sum-product algorithm", IEEE Trans. IT
  // 2001: on a cycle-free factor graph the sum-product algorithm computes the exact marginals once
  // messages have crossed the graph (iterations >= its diameter).
  for (std::uint64_t seed = 1; seed <= 8; ++seed) {
    const Code tree = random_tree(6, seed);
    REQUIRE_FALSE(cycle_census(tree).girth.has_value());
    REQUIRE(Encoder(tree).k() <= 20);
    const auto llr = random_llrs(tree.n(), seed * 31);
    const auto exact = exact_marginals(tree, llr);
    for (auto schedule : {Schedule::flooding, Schedule::layered}) {
      const Run r =
          run(tree,
              settings(Algorithm::sum_product, schedule, 2 * static_cast<int>(tree.m()) + 2, false),
              llr);
      INFO("seed " << seed << " schedule " << name_of(schedule));
      for (std::size_t i = 0; i < tree.n(); ++i)
        CHECK(r.posterior[i] == Approx(exact[i]).margin(1e-9));
    }
  }
}

TEST_CASE("repetition code: the posterior is the sum of the channel LLRs", "[decode]") {
  // Textbook: for a repetition code the bitwise MAP LLR of every bit is the sum of all channel
  // LLRs.
  const Code code = construct_repetition(5);
  const std::vector<double> llr{0.5, -1.25, 2.0, 0.75, -0.3};
  const double sum = 0.5 - 1.25 + 2.0 + 0.75 - 0.3;
  for (auto schedule : {Schedule::flooding, Schedule::layered}) {
    const Run r = run(code, settings(Algorithm::sum_product, schedule, 10, false), llr);
    for (double p : r.posterior) CHECK(p == Approx(sum).margin(1e-12));
  }
}

TEST_CASE("single parity-check code: the posterior is L_i plus the boxplus of the others",
          "[decode]") {
  // Closed form (Hagenauer's tanh rule): L_i + 2 atanh(prod_{j != i} tanh(L_j / 2)).
  const Code code = construct_single_parity(6);
  const std::vector<double> llr{1.5, -0.7, 2.2, 0.4, -3.0, 0.9};
  const Run r = run(code, settings(Algorithm::sum_product, Schedule::flooding, 1, false), llr);
  for (std::size_t i = 0; i < 6; ++i) {
    double product = 1;
    for (std::size_t j = 0; j < 6; ++j) {
      if (j != i) product *= std::tanh(llr[j] / 2);
    }
    CHECK(r.posterior[i] == Approx(llr[i] + 2 * std::atanh(product)).margin(1e-12));
  }
}

TEST_CASE("min-sum equals sum-product on degree-2 checks, alpha = 1 and beta = 0 equal min-sum",
          "[decode]") {
  // Common practice: with two inputs the boxplus of one other message is that message itself.
  const Code ring = Code::from_checks(5, {{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 0}});
  const auto llr = random_llrs(5 * 4, 7);
  for (auto schedule : {Schedule::flooding, Schedule::layered}) {
    const Run sp = run(ring, settings(Algorithm::sum_product, schedule, 7, false), llr);
    const Run ms = run(ring, settings(Algorithm::min_sum, schedule, 7, false), llr);
    for (std::size_t i = 0; i < llr.size(); ++i)
      CHECK(ms.posterior[i] == Approx(sp.posterior[i]).margin(1e-12));
  }
  const Code code = test::shipped("regular-3-6-n2016.tanner");
  const auto noisy = random_llrs(code.n() * 3, 8, 1.2, 2.0);
  for (auto schedule : {Schedule::flooding, Schedule::layered}) {
    const Run ms = run(code, settings(Algorithm::min_sum, schedule, 20), noisy);
    DecoderSettings nms = settings(Algorithm::normalized_min_sum, schedule, 20);
    nms.alpha = 1.0;
    DecoderSettings oms = settings(Algorithm::offset_min_sum, schedule, 20);
    oms.beta = 0.0;
    const Run a = run(code, nms, noisy), b = run(code, oms, noisy);
    CHECK(a.posterior == ms.posterior);  // bit-identical
    CHECK(b.posterior == ms.posterior);
    CHECK(a.hard == ms.hard);
  }
}

TEST_CASE("exhaustive ML on Hamming (7,4) over the BSC", "[decode]") {
  // Textbook (Lin & Costello): a d_min = 3 code corrects every single error; a weight-2 error
  // pattern is never decoded to the sent codeword (the nearest codeword is another one).
  const Code code = construct_hamming(3);
  const Encoder enc(code);
  std::vector<std::uint8_t> info(4), word(7);
  for (unsigned u = 0; u < 16; ++u) {
    for (int j = 0; j < 4; ++j) info[static_cast<std::size_t>(j)] = (u >> j) & 1u;
    enc.encode(info, word);
    auto llr_of = [&](std::uint32_t flips) {
      std::vector<double> llr(7);
      for (std::size_t i = 0; i < 7; ++i) llr[i] = ((word[i] ^ ((flips >> i) & 1u)) ? -1.0 : 1.0);
      return llr;
    };
    for (std::uint32_t flips = 0; flips < 128; ++flips) {
      const int weight = std::popcount(flips);
      if (weight > 2) continue;
      const Run r = run(code, settings(Algorithm::ml), llr_of(flips));
      INFO("codeword " << u << " error pattern " << flips);
      CHECK(r.outcome[0].converged);
      if (weight <= 1)
        CHECK(r.hard == word);
      else
        CHECK(r.hard != word);
    }
  }
}

TEST_CASE("ML posteriors are max-log LLRs and agree with the hard decision", "[decode]") {
  const Code code = construct_hamming(3);
  const auto llr = random_llrs(7 * 20, 3, 0.5, 2.0);
  const Run r = run(code, settings(Algorithm::ml), llr);
  for (std::size_t i = 0; i < llr.size(); ++i) CHECK((r.posterior[i] < 0) == (r.hard[i] == 1));
}

TEST_CASE(
    "layered and flooding agree at high SNR, layered needs far fewer iterations in the waterfall",
    "[decode]") {
  // Hocevar, "A reduced complexity decoder architecture via layered decoding of LDPC codes",
  // SiPS 2004: layered decoding converges in about half the iterations (common practice).
  const Code code = test::shipped("regular-3-6-n2016.tanner");
  const Encoder enc(code);
  SplitMix bits(5);
  test::Gaussian noise(6);
  auto batch = [&](double ebn0_db, std::size_t frames) {
    const double sigma = std::sqrt(1.0 / (2 * 0.5 * std::pow(10.0, ebn0_db / 10)));
    std::vector<double> llr;
    std::vector<std::uint8_t> info(enc.k()), word(code.n()), sent;
    for (std::size_t f = 0; f < frames; ++f) {
      for (auto& b : info) b = bits.next() & 1u;
      enc.encode(info, word);
      const auto l = test::awgn_llrs(word, sigma, noise);
      llr.insert(llr.end(), l.begin(), l.end());
      sent.insert(sent.end(), word.begin(), word.end());
    }
    return std::pair{llr, sent};
  };
  const auto [easy, easy_sent] = batch(3.5, 20);
  const Run f = run(code, settings(Algorithm::sum_product, Schedule::flooding), easy);
  const Run l = run(code, settings(Algorithm::sum_product, Schedule::layered), easy);
  CHECK(f.hard == easy_sent);
  CHECK(l.hard == easy_sent);

  const auto [hard_llr, hard_sent] = batch(1.5, 60);
  const Run f2 = run(code, settings(Algorithm::sum_product, Schedule::flooding), hard_llr);
  const Run l2 = run(code, settings(Algorithm::sum_product, Schedule::layered), hard_llr);
  double fi = 0, li = 0;
  for (std::size_t i = 0; i < f2.outcome.size(); ++i)
    fi += f2.outcome[i].iterations, li += l2.outcome[i].iterations;
  INFO("mean iterations flooding " << fi / 60 << " layered " << li / 60);
  CHECK(li < 0.7 * fi);
  CHECK(li > 0.3 * fi);
}

TEST_CASE("bit flipping corrects every single error on a girth-6 (3,6) code", "[decode]") {
  // Gallager's algorithm B with dv = 3, threshold 2: the three checks of the wrong bit outvote
  // its channel value, while any other bit sees at most one complaint (no 4-cycles).
  const Code code = test::shipped("regular-3-6-n2016.tanner");
  std::vector<double> llr(code.n() * code.n(), 1.0);
  for (std::size_t v = 0; v < code.n(); ++v) llr[v * code.n() + v] = -1.0;
  const Run r = run(code, settings(Algorithm::bit_flip, Schedule::flooding, 5), llr);
  for (std::size_t f = 0; f < code.n(); ++f) {
    INFO("error at " << f);
    REQUIRE(r.outcome[f].converged);
    REQUIRE(r.outcome[f].iterations == 1);
  }
  for (auto b : r.hard) REQUIRE(b == 0);
}

TEST_CASE("NaN inputs are rejected naming the frame and position", "[decode]") {
  const Code code = construct_hamming(3);
  std::vector<double> llr(14, 1.0);
  llr[9] = NAN;
  std::vector<std::uint8_t> hard(14);
  std::vector<FrameOutcome> out(2);
  auto dec = make_decoder(code, settings(Algorithm::sum_product));
  CHECK_THROWS_WITH(dec->decode(llr, hard, {}, out, 100),
                    Catch::Contains("frame 101, position 2: channel LLR is NaN"));
}

TEST_CASE("infinite and huge inputs never produce NaN or Inf", "[decode]") {
  // ±Inf are legal certainties (erasure channel); 1e30 must not overflow any rule.
  const Code code = test::shipped("qc-rate-half-z54.qc");
  std::vector<double> llr(code.n());
  for (std::size_t i = 0; i < code.n(); ++i) {
    const double x[] = {INFINITY, -INFINITY, 1e30, -1e30, 0.0, 1e-300, 3.0};
    llr[i] = x[i % 7];
  }
  for (auto a : {Algorithm::sum_product, Algorithm::min_sum, Algorithm::normalized_min_sum,
                 Algorithm::offset_min_sum, Algorithm::bit_flip}) {
    for (auto schedule : {Schedule::flooding, Schedule::layered}) {
      if (a == Algorithm::bit_flip && schedule == Schedule::layered) continue;
      const Run r = run(code, settings(a, schedule, 20, false), llr);
      for (double p : r.posterior) REQUIRE(std::isfinite(p));
    }
  }
}

TEST_CASE("a decoder is reusable and batches equal single frames", "[decode]") {
  const Code code = test::shipped("qc-rate-half-z54.qc");
  const auto llr = random_llrs(code.n() * 4, 12, 1.0, 1.6);
  auto dec = make_decoder(code, settings(Algorithm::normalized_min_sum, Schedule::layered, 30));
  std::vector<std::uint8_t> hard(llr.size());
  std::vector<double> post(llr.size());
  std::vector<FrameOutcome> out(4);
  dec->decode(llr, hard, post, out);
  for (std::size_t f = 0; f < 4; ++f) {
    std::vector<std::uint8_t> h1(code.n());
    std::vector<double> p1(code.n());
    std::vector<FrameOutcome> o1(1);
    dec->decode(std::span(llr).subspan(f * code.n(), code.n()), h1, p1, o1);
    CHECK(
        std::equal(h1.begin(), h1.end(), hard.begin() + static_cast<std::ptrdiff_t>(f * code.n())));
    CHECK(
        std::equal(p1.begin(), p1.end(), post.begin() + static_cast<std::ptrdiff_t>(f * code.n())));
    CHECK(o1[0].iterations == out[f].iterations);
  }
}

TEST_CASE("a batched decoder counts its busy lane-iterations", "[decode]") {
  // Without early stop every frame takes the full iterations: with two frames per lane no lane
  // ever idles. With early stop and one slow frame, the others' lanes wait for it.
  const Code code = test::shipped("qc-rate-half-z54.qc");
  DecoderSettings s = settings(Algorithm::min_sum, Schedule::layered, 7, false);
  s.kernel = Kernel::simd;
  auto fixed = make_decoder(code, s);
  LaneDecoder* lanes = fixed->lane_decoder();
  REQUIRE(lanes != nullptr);
  const std::size_t width = lanes->lanes();
  std::vector<double> llr(code.n() * width, 4.0);
  LaneResults results;
  lanes->begin(2 * width);
  lanes->load(0, llr);
  lanes->load(1, llr);
  lanes->decode(results);
  CHECK(lanes->lane_use().busy == 2 * 7 * width);
  CHECK(lanes->lane_use().total == 2 * 7 * width);
  s.early_stop = true;
  auto early = make_decoder(code, s);
  lanes = early->lane_decoder();
  for (std::size_t v = 0; v < code.n(); ++v) llr[v * width] = v % 2 ? -0.5 : 0.5;  // lane 0: noisy
  lanes->begin(width);
  lanes->load(0, llr);
  lanes->decode(results);
  const int slow = results.outcome[0].iterations;
  REQUIRE(slow > 1);
  CHECK(results.outcome[1].iterations == 1);  // all +4: converged at once
  CHECK(lanes->lane_use().total == static_cast<std::uint64_t>(slow) * width);
  CHECK(lanes->lane_use().busy == static_cast<std::uint64_t>(slow) + (width - 1));
}

TEST_CASE("an empty batch decodes to nothing with every kernel", "[decode]") {
  const Code code = test::shipped("hamming-7-4.tanner");
  for (Kernel kernel : {Kernel::reference, Kernel::simd}) {
    DecoderSettings s = settings(Algorithm::min_sum, Schedule::layered, 10);
    s.kernel = kernel;
    auto dec = make_decoder(code, s);
    dec->decode({}, {}, {}, {});
    if (LaneDecoder* lanes = dec->lane_decoder()) {
      LaneResults results;
      lanes->begin(0);
      lanes->decode(results, true);
      CHECK(results.outcome.empty());
      CHECK(results.hard.empty());
      CHECK(results.posterior.empty());
      CHECK_THROWS_WITH(lanes->load(0, std::vector<double>(7 * lanes->lanes())),
                        Catch::Contains("does not fit a batch of 0 frames"));
    }
  }
}

TEST_CASE("impossible settings are refused with a clear message", "[decode]") {
  const Code big = test::shipped("regular-3-6-n2016.tanner");
  CHECK_THROWS_WITH(make_decoder(big, settings(Algorithm::ml)),
                    Catch::Contains("limited to k <= 24"));
  CHECK_THROWS_WITH(make_decoder(big, settings(Algorithm::bit_flip, Schedule::layered)),
                    Catch::Contains("no layered schedule"));
  DecoderSettings s;
  s.alpha = 1.5;
  CHECK_THROWS_WITH(make_decoder(big, s), Catch::Contains("alpha must be in (0, 1]"));
  s = DecoderSettings{};
  s.iterations = 0;
  CHECK_THROWS_WITH(make_decoder(big, s), Catch::Contains("iterations must be between"));
  CHECK(from_name<Algorithm>("normalized-min-sum") == Algorithm::normalized_min_sum);
  CHECK_FALSE(from_name<Algorithm>("belief").has_value());
}

TEST_CASE("a zero posterior is undecided, and a frame with one has not converged", "[decode]") {
  CHECK(decide(1e-300) == 0);
  CHECK(decide(-1e-300) == 1);
  CHECK(decide(0.0) == kUndecided);
  CHECK(decide(-0.0) == kUndecided);
  const Code code = test::shipped("repetition-5.tanner");
  std::vector<DecoderSettings> all;
  for (Algorithm a : {Algorithm::sum_product, Algorithm::min_sum, Algorithm::offset_min_sum}) {
    for (Schedule sch : {Schedule::flooding, Schedule::layered}) {
      for (Kernel k : {Kernel::reference, Kernel::simd}) {
        DecoderSettings s = settings(a, sch, 20);
        s.kernel = k;
        all.push_back(s);
      }
    }
    DecoderSettings q =
        settings(a == Algorithm::sum_product ? Algorithm::min_sum : a, Schedule::layered, 20);
    q.quantization = parse_quantization("6.2");
    for (Kernel k : {Kernel::reference, Kernel::simd}) {
      q.kernel = k;
      all.push_back(q);
    }
  }
  all.push_back(settings(Algorithm::ml));
  all.push_back(settings(Algorithm::bit_flip));
  for (const DecoderSettings& s : all) {
    INFO(describe(s));
    // Every bit erased: nothing can be decided (the all-zero guess would be "right" half the
    // time on random data and always with the all-zero codeword).
    const Run erased = run(code, s, std::vector<double>(5, 0.0));
    for (std::uint8_t h : erased.hard) CHECK(h == kUndecided);
    CHECK(erased.outcome[0].undecided == 5);
    CHECK_FALSE(erased.outcome[0].converged);
    // A tie on a BSC-like input: two votes for 0, two for 1 and one erasure. Decoders that add
    // the votes exactly leave every bit undecided; offset min-sum weighs them unequally (its
    // decision is its own) and bit-flipping breaks ties by the channel bit.
    const Run tie = run(code, s, {1.5, -1.5, 0.0, 1.5, -1.5});
    if (s.algorithm != Algorithm::bit_flip && s.algorithm != Algorithm::offset_min_sum) {
      for (std::uint8_t h : tie.hard) CHECK(h == kUndecided);
      CHECK_FALSE(tie.outcome[0].converged);
    }
    // One known bit resolves every erasure (bit-flipping excepted: it has no erasure rule).
    const Run one = run(code, s, {0.0, 0.0, -3.0, 0.0, 0.0});
    if (s.algorithm != Algorithm::bit_flip) {
      for (std::uint8_t h : one.hard) CHECK(h == 1);
      CHECK(one.outcome[0].converged);
      CHECK(one.outcome[0].undecided == 0);
    } else {
      CHECK(one.outcome[0].undecided == 4);
    }
  }
}

TEST_CASE("the automatic kernel is the SIMD kernel wherever one implements the settings",
          "[decode]") {
  const Code code = test::shipped("qc-rate-half-z54.qc");
  DecoderSettings s;
  CHECK(s.kernel == Kernel::automatic);
  CHECK(resolve_kernel(s, code).kernel == Kernel::simd);  // sum-product, flooding
  s.algorithm = Algorithm::offset_min_sum;
  s.quantization = parse_quantization("6.2");
  CHECK(resolve_kernel(s, code).kernel == Kernel::reference);  // fixed point: layered only
  s.schedule = Schedule::layered;
  CHECK(resolve_kernel(s, code).kernel == Kernel::simd);
  for (Algorithm a : {Algorithm::ml, Algorithm::bit_flip}) {
    DecoderSettings t;
    t.algorithm = a;
    CHECK(resolve_kernel(t, test::shipped("hamming-7-4.tanner")).kernel == Kernel::reference);
  }
  DecoderSettings r;
  r.kernel = Kernel::reference;
  CHECK(resolve_kernel(r, code).kernel == Kernel::reference);
  for (Kernel k : {Kernel::automatic, Kernel::reference, Kernel::simd})
    CHECK(from_name<Kernel>(name_of(k)) == k);
  CHECK_FALSE(from_name<Kernel>("fast"));
}
