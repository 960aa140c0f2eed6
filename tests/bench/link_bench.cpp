// Links on one core: a 64-QAM frame through the link (noise, modulation, exact or max-log
// demapping) on the shipped (3,6)-regular code (n = 2016, 336 symbols), and whole simulations
// with the int8 layered decoder, BPSK against 64-QAM at operating points of equal FER: about
// 1e-2 (BPSK 1.75 dB, 64-QAM 7.0 dB) and about 1e-5 (BPSK 2.5 dB, 64-QAM 9.0 dB).
#include <benchmark/benchmark.h>

#include "tannery/sim/simulator.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

void BM_link_frame_64qam(benchmark::State& state) {
  ChannelSpec spec;
  spec.modulation = parse_text<Modulation>("64qam");
  spec.demapper = state.range(0) ? Demapper::exact : Demapper::max_log;
  const Link link(spec, PunctureMap::all_sent(2016));
  const ChannelPoint point = channel_point(spec, 9.0, link.snr_rate(1008));
  const std::vector<std::uint8_t> codeword(2016, 0);
  std::vector<double> llr(2016);
  LinkBuffers buffers;
  std::uint64_t frame = 0;
  for (auto _ : state) {
    frame_llrs(FrameId{1, 0, frame++}, point, link, codeword, llr, buffers);
    benchmark::DoNotOptimize(llr.data());
  }
  state.SetLabel(state.range(0) ? "exact" : "max-log");
  state.counters["frames_per_s"] =
      benchmark::Counter(static_cast<double>(state.iterations()), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_link_frame_64qam)->Arg(1)->Arg(0);

// range(0): 0 BPSK, 1 64-QAM; range(1): 0 at FER ~1e-2, 1 at FER ~1e-5.
void BM_simulate_int8(benchmark::State& state) {
  const Code code = test::shipped("regular-3-6-n2016.tanner");
  const bool qam = state.range(0) != 0, high = state.range(1) != 0;
  SimulationConfig c;
  c.decoder.algorithm = Algorithm::normalized_min_sum;
  c.decoder.schedule = Schedule::layered;
  c.decoder.quantization = parse_quantization("6.2");
  c.decoder.kernel = Kernel::simd;
  if (qam) c.channel.modulation = parse_text<Modulation>("64qam");
  c.sweep = {qam ? (high ? 9.0 : 7.0) : (high ? 2.5 : 1.75)};
  c.stop.max_frames = 8192;
  c.stop.frame_errors = 1'000'000;
  c.threads = 1;
  Simulator sim(code, c);
  std::uint64_t frames = 0;
  for (auto _ : state) {
    const auto points = sim.run({}, {}, nullptr);
    frames += points[0].frames;
    benchmark::DoNotOptimize(points.data());
  }
  state.SetLabel(std::string(qam ? "64qam" : "bpsk") + (high ? " FER~1e-5" : " FER~1e-2"));
  state.counters["frames_per_s"] =
      benchmark::Counter(static_cast<double>(frames), benchmark::Counter::kIsRate);
}
BENCHMARK(BM_simulate_int8)
    ->Args({0, 0})
    ->Args({1, 0})
    ->Args({0, 1})
    ->Args({1, 1})
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime();

}  // namespace
