// Decoder throughput per kernel on the shipped codes: edge-updates/s = frames x iterations x
// edges / seconds, on one core, at a waterfall operating point with a fixed 10 iterations (no
// early stop, so every kernel does the same work). Also the machine's peak vector rates.
#include <benchmark/benchmark.h>

#include <immintrin.h>
#include <cmath>

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
};

void run(benchmark::State& state, const Case& c) {
  const Code code = test::shipped(c.code);
  DecoderSettings s;
  s.algorithm = c.algorithm;
  s.schedule = Schedule::layered;
  s.iterations = kIterations;
  s.early_stop = false;
  s.kernel = c.kernel;
  if (c.quantize[0]) s.quantization = parse_quantization(c.quantize);
  const std::size_t frames = c.kernel == Kernel::simd ? 256 : 16;
  // Consistent Gaussian LLRs near the waterfall of rate-1/2 codes (Eb/N0 about 1.5 dB).
  test::Gaussian g(1);
  std::vector<double> llr(code.n() * frames);
  for (auto& x : llr) x = 2.8 + std::sqrt(5.6) * g();
  std::vector<std::uint8_t> hard(llr.size());
  std::vector<FrameOutcome> out(frames);
  auto decoder = make_decoder(code, s);
  for (auto _ : state) {
    decoder->decode(llr, hard, {}, out);
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

// Peak rates of this core: independent chains of 256-bit integer adds and float FMAs (AVX2;
// the development machine has no AVX-512). ops counts lane operations per second.
__attribute__((target("avx2,fma"))) void BM_peak_avx2_int8_add(benchmark::State& state) {
  __m256i acc[8];
  for (int i = 0; i < 8; ++i) acc[i] = _mm256_set1_epi8(static_cast<char>(i));
  const __m256i one = _mm256_set1_epi8(1);
  for (auto _ : state) {
    for (int r = 0; r < 1000; ++r) {
      for (int i = 0; i < 8; ++i) acc[i] = _mm256_adds_epi8(acc[i], one);
    }
    benchmark::DoNotOptimize(acc);
  }
  state.counters["lane_ops_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations()) * 1000 * 8 * 32, benchmark::Counter::kIsRate);
}
BENCHMARK(BM_peak_avx2_int8_add);

__attribute__((target("avx2,fma"))) void BM_peak_avx2_f32_fma(benchmark::State& state) {
  __m256 acc[10];
  for (int i = 0; i < 10; ++i) acc[i] = _mm256_set1_ps(static_cast<float>(i));
  const __m256 a = _mm256_set1_ps(0.999f), b = _mm256_set1_ps(0.001f);
  for (auto _ : state) {
    for (int r = 0; r < 1000; ++r) {
      for (int i = 0; i < 10; ++i) acc[i] = _mm256_fmadd_ps(acc[i], a, b);
    }
    benchmark::DoNotOptimize(acc);
  }
  state.counters["lane_ops_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations()) * 1000 * 10 * 8, benchmark::Counter::kIsRate);
}
BENCHMARK(BM_peak_avx2_f32_fma);

}  // namespace
