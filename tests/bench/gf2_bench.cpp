// Rank analysis and encoding of long codes: a 32 400 x 64 800 matrix with row weights 7..30
// (random information part plus a dual-diagonal parity part, an invented code of the shape
// long broadcast codes use) and a random (3,6)-regular code of the same size.
#include <benchmark/benchmark.h>

#include "bench_support.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/code/gf2.hpp"

using namespace tannery;

namespace {

Code staircase_code(std::size_t m, std::size_t n, std::uint64_t seed) {
  SplitMix rng(seed);
  const std::size_t k = n - m;
  std::vector<std::vector<std::uint32_t>> checks(m);
  for (std::size_t r = 0; r < m; ++r) {
    const std::size_t weight = 5 + rng.below(24);  // info weight 5..28, plus 2 parity bits
    while (checks[r].size() < weight) {
      const auto v = static_cast<std::uint32_t>(rng.below(k));
      if (std::find(checks[r].begin(), checks[r].end(), v) == checks[r].end())
        checks[r].push_back(v);
    }
    checks[r].push_back(static_cast<std::uint32_t>(k + r));
    if (r > 0) checks[r].push_back(static_cast<std::uint32_t>(k + r - 1));
  }
  return Code::from_checks(n, checks);
}

void report(benchmark::State& state, const Code& code) {
  std::size_t rank = 0;
  for (auto _ : state) {
    Encoder enc(code);
    rank = enc.rank();
    benchmark::DoNotOptimize(rank);
  }
  state.counters["rank"] = static_cast<double>(rank);
  state.counters["edges"] = static_cast<double>(code.edges());
  state.counters["peak_MiB"] = bench::peak_rss_mib();
}

void BM_rank_staircase_32400x64800(benchmark::State& state) {
  const Code code = staircase_code(32400, 64800, 1);
  report(state, code);
}
void BM_rank_regular36_32400x64800(benchmark::State& state) {
  const Code code = construct_regular(64800, 3, 6, 1);
  report(state, code);
}
void BM_encode_regular36_64800(benchmark::State& state) {
  const Code code = construct_regular(64800, 3, 6, 1);
  const Encoder enc(code);
  std::vector<std::uint8_t> info(enc.k(), 1), word(code.n());
  for (auto _ : state) {
    enc.encode(info, word);
    benchmark::DoNotOptimize(word.data());
  }
  state.counters["frames/s"] =
      benchmark::Counter(static_cast<double>(state.iterations()), benchmark::Counter::kIsRate);
}
// 64 frames at once, bit-sliced (the simulator's encoder).
void BM_encode_lanes_regular36_64800(benchmark::State& state) {
  const Code code = construct_regular(64800, 3, 6, 1);
  const Encoder enc(code);
  std::vector<std::uint64_t> info(enc.k()), word(code.n());
  for (std::size_t i = 0; i < info.size(); ++i) info[i] = 0x9E3779B97F4A7C15ull * (i + 1);
  for (auto _ : state) {
    enc.encode_lanes(info, word);
    benchmark::DoNotOptimize(word.data());
  }
  state.counters["frames/s"] =
      benchmark::Counter(static_cast<double>(state.iterations() * 64), benchmark::Counter::kIsRate);
}

}  // namespace

BENCHMARK(BM_rank_staircase_32400x64800)->Unit(benchmark::kMillisecond)->Iterations(3);
BENCHMARK(BM_rank_regular36_32400x64800)->Unit(benchmark::kMillisecond)->Iterations(3);
BENCHMARK(BM_encode_regular36_64800)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_encode_lanes_regular36_64800)->Unit(benchmark::kMicrosecond);
