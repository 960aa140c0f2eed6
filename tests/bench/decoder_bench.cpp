// Decoder throughput per kernel on the shipped codes: edge-updates/s = frames x iterations x
// edges / seconds, on one core, at a waterfall operating point with a fixed 10 iterations (no
// early stop, so every kernel does the same work). Also the machine's peak vector rates.
#include <benchmark/benchmark.h>

#include <immintrin.h>
#include <cmath>
#include <limits>

#include "decode/simd_control.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/decode/decoder.hpp"
#include "tannery/io/matrix_io.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

constexpr int kIterations = 10;

struct Case {
  const char* code;
  Algorithm algorithm;
  Kernel kernel;
  const char* quantize;
  bool per_edge = false;  // layered min-sum check state one message per edge even when large
};

// A long code whose messages do not fit in the core's caches: (3,6)-regular, n = 64 800.
const Code& long_code() {
  static const Code code = construct_regular(64800, 3, 6, 1);
  return code;
}

void run(benchmark::State& state, const Case& c) {
  const Code code =
      std::string(c.code) == "regular-3-6-n64800" ? long_code() : test::shipped(c.code);
  DecoderSettings s;
  s.algorithm = c.algorithm;
  s.schedule = Schedule::layered;
  s.iterations = kIterations;
  s.early_stop = false;
  s.kernel = c.kernel;
  if (c.quantize[0]) s.quantization = parse_quantization(c.quantize);
  if (c.per_edge) compress_simd_checks_above(std::numeric_limits<std::size_t>::max());
  auto decoder = make_decoder(code, s);
  compress_simd_checks_above();
  // The batched kernels get four groups of lanes() frames in lane layout, as the simulator
  // feeds them (each lane refilled from the next group when its frame is done; the same LLRs in
  // every group); the time includes loading (checking and converting) the LLRs to channel
  // values and recording the decisions. The scalar references decode 16 frames in frame layout.
  LaneDecoder* batched = decoder->lane_decoder();
  const std::size_t lanes = batched ? batched->lanes() : 0, frames = lanes ? 4 * lanes : 16;
  // Consistent Gaussian LLRs near the waterfall of rate-1/2 codes (Eb/N0 about 1.5 dB).
  test::Gaussian g(1);
  std::vector<double> llr(code.n() * (lanes ? lanes : frames));
  for (auto& x : llr) x = 2.8 + std::sqrt(5.6) * g();
  std::vector<std::uint8_t> hard(code.n() * frames);
  std::vector<FrameOutcome> out(frames);
  std::size_t decided = 0;
  LaneResults results;
  for (auto _ : state) {
    if (batched) {
      batched->begin(frames);
      for (std::size_t group = 0; group < 4; ++group) batched->load(group, llr);
      batched->decode(results);
      decided += results.hard[0];
    } else {
      decoder->decode(llr, hard, {}, out);
    }
    benchmark::DoNotOptimize(decided);
    benchmark::DoNotOptimize(hard.data());
  }
  const double updates = static_cast<double>(state.iterations()) * static_cast<double>(frames) *
                         kIterations * static_cast<double>(code.edges());
  state.counters["edge_updates_per_s"] = benchmark::Counter(updates, benchmark::Counter::kIsRate);
  state.counters["coded_Mbit_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations()) * static_cast<double>(frames * code.n()) / 1e6,
      benchmark::Counter::kIsRate);
  state.SetLabel(active_simd_target());
}

#define TANNERY_DECODER_BENCH(name, ...) \
  void name(benchmark::State& state) {   \
    run(state, Case{__VA_ARGS__});       \
  }                                      \
  BENCHMARK(name)->Unit(benchmark::kMillisecond)->MinTime(0.5)

TANNERY_DECODER_BENCH(BM_reference_min_sum_qc648, "qc-rate-half-z54.qc", Algorithm::min_sum,
                      Kernel::reference, "");
TANNERY_DECODER_BENCH(BM_reference_sum_product_qc648, "qc-rate-half-z54.qc", Algorithm::sum_product,
                      Kernel::reference, "");
TANNERY_DECODER_BENCH(BM_simd_f32_min_sum_qc648, "qc-rate-half-z54.qc", Algorithm::min_sum,
                      Kernel::simd, "");
TANNERY_DECODER_BENCH(BM_simd_f32_nms_qc648, "qc-rate-half-z54.qc", Algorithm::normalized_min_sum,
                      Kernel::simd, "");
TANNERY_DECODER_BENCH(BM_simd_f32_sum_product_qc648, "qc-rate-half-z54.qc", Algorithm::sum_product,
                      Kernel::simd, "");
TANNERY_DECODER_BENCH(BM_simd_i16_nms_qc648, "qc-rate-half-z54.qc", Algorithm::normalized_min_sum,
                      Kernel::simd, "6.2:6:12");
TANNERY_DECODER_BENCH(BM_simd_i8_nms_qc648, "qc-rate-half-z54.qc", Algorithm::normalized_min_sum,
                      Kernel::simd, "6.2");
TANNERY_DECODER_BENCH(BM_simd_i8_oms_qc648, "qc-rate-half-z54.qc", Algorithm::offset_min_sum,
                      Kernel::simd, "6.2");
TANNERY_DECODER_BENCH(BM_reference_min_sum_reg2016, "regular-3-6-n2016.tanner", Algorithm::min_sum,
                      Kernel::reference, "");
TANNERY_DECODER_BENCH(BM_simd_f32_nms_reg2016, "regular-3-6-n2016.tanner",
                      Algorithm::normalized_min_sum, Kernel::simd, "");
TANNERY_DECODER_BENCH(BM_simd_f32_sum_product_reg2016, "regular-3-6-n2016.tanner",
                      Algorithm::sum_product, Kernel::simd, "");
TANNERY_DECODER_BENCH(BM_simd_i8_nms_reg2016, "regular-3-6-n2016.tanner",
                      Algorithm::normalized_min_sum, Kernel::simd, "6.2");
TANNERY_DECODER_BENCH(BM_simd_f32_nms_reg64800, "regular-3-6-n64800", Algorithm::normalized_min_sum,
                      Kernel::simd, "");
TANNERY_DECODER_BENCH(BM_simd_i8_nms_reg64800, "regular-3-6-n64800", Algorithm::normalized_min_sum,
                      Kernel::simd, "6.2");
// The same two with one message per edge (the form used where the messages fit in the caches).
TANNERY_DECODER_BENCH(BM_simd_f32_nms_reg64800_per_edge, "regular-3-6-n64800",
                      Algorithm::normalized_min_sum, Kernel::simd, "", true);
TANNERY_DECODER_BENCH(BM_simd_i8_nms_reg64800_per_edge, "regular-3-6-n64800",
                      Algorithm::normalized_min_sum, Kernel::simd, "6.2", true);

// Peak rates of this core: independent chains of 512-bit (AVX-512) and 256-bit (AVX2) saturating
// int8 adds and float32 FMAs; lane_ops_per_s counts lane operations per second. A benchmark
// whose instructions this CPU lacks is skipped.
template <class Vec, int kChains, int kLanes, class Op>
void peak(benchmark::State& state, bool supported, Vec start, Op op) {
  if (!supported) {
    state.SkipWithError("instruction set not supported by this CPU");
    return;
  }
  Vec acc[kChains];
  for (auto& a : acc) a = start;
  for (auto _ : state) {
    for (int r = 0; r < 1000; ++r) {
      for (auto& a : acc) a = op(a);
    }
    benchmark::DoNotOptimize(acc);
  }
  state.counters["lane_ops_per_s"] =
      benchmark::Counter(static_cast<double>(state.iterations()) * 1000 * kChains * kLanes,
                         benchmark::Counter::kIsRate);
}

__attribute__((target("avx512bw"))) void BM_peak_avx512_int8_add(benchmark::State& state) {
  const __m512i one = _mm512_set1_epi8(1);
  peak<__m512i, 8, 64>(
      state, __builtin_cpu_supports("avx512bw"),
      _mm512_set1_epi8(3), [&](__m512i a) __attribute__((target("avx512bw"))) {
        return _mm512_adds_epi8(a, one);
      });
}
BENCHMARK(BM_peak_avx512_int8_add);

__attribute__((target("avx512f"))) void BM_peak_avx512_f32_fma(benchmark::State& state) {
  const __m512 a = _mm512_set1_ps(0.999f), b = _mm512_set1_ps(0.001f);
  peak<__m512, 10, 16>(
      state, __builtin_cpu_supports("avx512f"),
      _mm512_set1_ps(1.0f), [&](__m512 x) __attribute__((target("avx512f"))) {
        return _mm512_fmadd_ps(x, a, b);
      });
}
BENCHMARK(BM_peak_avx512_f32_fma);

__attribute__((target("avx2"))) void BM_peak_avx2_int8_add(benchmark::State& state) {
  const __m256i one = _mm256_set1_epi8(1);
  peak<__m256i, 8, 32>(
      state, __builtin_cpu_supports("avx2"),
      _mm256_set1_epi8(3), [&](__m256i a) __attribute__((target("avx2"))) {
        return _mm256_adds_epi8(a, one);
      });
}
BENCHMARK(BM_peak_avx2_int8_add);

__attribute__((target("avx2,fma"))) void BM_peak_avx2_f32_fma(benchmark::State& state) {
  const __m256 a = _mm256_set1_ps(0.999f), b = _mm256_set1_ps(0.001f);
  peak<__m256, 10, 8>(
      state, __builtin_cpu_supports("fma"),
      _mm256_set1_ps(1.0f), [&](__m256 x) __attribute__((target("avx2,fma"))) {
        return _mm256_fmadd_ps(x, a, b);
      });
}
BENCHMARK(BM_peak_avx2_f32_fma);

}  // namespace
