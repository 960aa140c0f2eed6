// The simulator's frame pipeline outside the decoder, on one core: Gaussian noise (Philox and
// Box-Muller) for a group of 64 frames in lane layout and for one frame, the channel LLRs of a
// group and its 6.2 fixed-point channel values made straight from the Gaussians (AWGN, Eb/N0
// 1.75 dB at rate 1/2), information bits for a group, and bit-sliced encoding of 64 frames, on
// the shipped (3,6)-regular code (n = 2016).
#include <benchmark/benchmark.h>

#include "tannery/code/gf2.hpp"
#include "tannery/sim/random.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

constexpr std::size_t kLanes = 64;

void BM_group_gaussians(benchmark::State& state) {
  const std::size_t n = 2016;
  std::vector<double> out(n * kLanes);
  std::uint64_t first = 0;
  for (auto _ : state) {
    group_gaussians(FrameGroup{1, 0, first, kLanes}, out);
    first += kLanes;
    benchmark::DoNotOptimize(out.data());
  }
  state.counters["samples_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations() * n * kLanes), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_group_gaussians);

void BM_frame_gaussians(benchmark::State& state) {
  std::vector<double> out(2016);
  std::uint64_t frame = 0;
  for (auto _ : state) {
    frame_gaussians(FrameId{1, 0, frame++}, out);
    benchmark::DoNotOptimize(out.data());
  }
  state.counters["samples_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations() * out.size()), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_frame_gaussians);

const ChannelPoint kChannel = ChannelPoint::awgn(0.8175, 0.8175);  // Eb/N0 1.75 dB at rate 1/2

void BM_group_channel_llrs(benchmark::State& state) {
  const std::size_t n = 2016;
  const std::vector<std::uint64_t> codeword(n, 0x5555555555555555ull);
  std::vector<double> out(n * kLanes);
  std::uint64_t first = 0;
  for (auto _ : state) {
    group_channel_llrs(FrameGroup{1, 0, first, kLanes}, kChannel, codeword, out);
    first += kLanes;
    benchmark::DoNotOptimize(out.data());
  }
  state.counters["samples_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations() * n * kLanes), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_group_channel_llrs);

void BM_group_channel_values_int8(benchmark::State& state) {
  const std::size_t n = 2016;
  const std::vector<std::uint64_t> codeword(n, 0x5555555555555555ull);
  std::vector<std::int8_t> values(n * kLanes);
  const FixedPointGroup out{4, 31, values, {}};  // 6.2: round(4 LLR), saturated at +-31
  std::uint64_t first = 0;
  for (auto _ : state) {
    group_channel_values(FrameGroup{1, 0, first, kLanes}, kChannel, codeword, out);
    first += kLanes;
    benchmark::DoNotOptimize(values.data());
  }
  state.counters["samples_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations() * n * kLanes), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_group_channel_values_int8);

void BM_group_bits_and_encoding(benchmark::State& state) {
  const Code code = test::shipped("regular-3-6-n2016.tanner");
  const Encoder encoder(code);
  std::vector<std::uint64_t> info(encoder.k()), word(code.n());
  std::uint64_t first = 0;
  for (auto _ : state) {
    group_bits(FrameGroup{1, 0, first, kLanes}, info);
    encoder.encode_lanes(info, word);
    first += kLanes;
    benchmark::DoNotOptimize(word.data());
  }
  state.counters["frames_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations() * kLanes), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_group_bits_and_encoding);

}  // namespace
