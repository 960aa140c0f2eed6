// A whole simulation against its decoder kernel, side by side, on one core: for each case the
// simulator (early stop, BPSK over AWGN, one thread: noise, encoding, decoding, error counting)
// and the bare kernel (the same decoder with early stop off at the simulation's mean iteration
// count, rounded, on Gaussian LLRs of the same point, four groups of lanes per call as in
// decoder_bench). edge_updates_per_s = frames x iterations x edges / seconds in both; the ratio
// of the two is the share of the kernel's rate a simulation keeps. The simulation cases also
// report the lane utilization (busy lane-iterations / all), the mean iterations and the FER.
#include <benchmark/benchmark.h>
#include <fmt/format.h>

#include <cmath>
#include <map>
#include <string>

#include "tannery/code/construct.hpp"
#include "tannery/decode/decoder.hpp"
#include "tannery/sim/simulator.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

struct Case {
  const char* code;  // a shipped code, or "regular-3-6-n64800" (constructed, seed 1)
  Algorithm algorithm;
  const char* quantize;  // empty: float32
  double ebn0;           // dB
  std::uint64_t frames;  // per simulation (a few chunks; about a second)
  bool early_stop = true;
};

const Code& code_of(const Case& c) {
  static std::map<std::string, Code> codes;
  auto it = codes.find(c.code);
  if (it == codes.end()) {
    Code code = std::string(c.code) == "regular-3-6-n64800" ? construct_regular(64800, 3, 6, 1)
                                                            : test::shipped(c.code);
    it = codes.emplace(c.code, std::move(code)).first;
  }
  return it->second;
}

SimulationConfig config_of(const Case& c) {
  SimulationConfig s;
  s.decoder.algorithm = c.algorithm;
  s.decoder.schedule = Schedule::layered;
  s.decoder.kernel = Kernel::simd;
  s.decoder.early_stop = c.early_stop;
  if (c.quantize[0]) s.decoder.quantization = parse_quantization(c.quantize);
  s.sweep = {c.ebn0};
  s.stop.max_frames = c.frames;
  s.stop.frame_errors = c.frames;  // never the reason to stop
  s.threads = 1;
  s.seed = 1;
  return s;
}

// The simulation's mean iterations (one run, remembered for the kernel case).
double mean_iterations(const Case& c) {
  static std::map<std::string, double> means;
  const std::string key =
      fmt::format("{} {} {} {}", c.code, static_cast<int>(c.algorithm), c.quantize, c.ebn0);
  auto it = means.find(key);
  if (it == means.end()) {
    Simulator sim(code_of(c), config_of(c));
    const PointResult p = sim.run({}, {}, nullptr).at(0);
    it =
        means.emplace(key, static_cast<double>(p.iterations) / static_cast<double>(p.frames)).first;
  }
  return it->second;
}

void simulation(benchmark::State& state, const Case& c) {
  const Code& code = code_of(c);
  const SimulationConfig config = config_of(c);
  double frames = 0, iterations = 0, errors = 0;
  LaneUse use;
  for (auto _ : state) {
    Simulator sim(code, config);
    const PointResult p = sim.run({}, {}, nullptr).at(0);
    frames += static_cast<double>(p.frames);
    iterations += static_cast<double>(p.iterations);
    errors += static_cast<double>(p.frame_errors);
    use.busy += sim.lane_use().busy;
    use.total += sim.lane_use().total;
  }
  state.counters["edge_updates_per_s"] = benchmark::Counter(
      iterations * static_cast<double>(code.edges()), benchmark::Counter::kIsRate);
  state.counters["frames_per_s"] = benchmark::Counter(frames, benchmark::Counter::kIsRate);
  state.counters["mean_iterations"] = iterations / frames;
  state.counters["lanes_busy"] = static_cast<double>(use.busy) / static_cast<double>(use.total);
  state.counters["fer"] = errors / frames;
  state.SetLabel(active_simd_target());
}

void kernel(benchmark::State& state, const Case& c) {
  const Code& code = code_of(c);
  DecoderSettings s = config_of(c).decoder;
  s.early_stop = false;
  s.iterations = std::max(1, static_cast<int>(std::lround(mean_iterations(c))));
  auto decoder = make_decoder(code, s);
  LaneDecoder* lanes = decoder->lane_decoder();
  const std::size_t width = lanes->lanes(), groups = 4;
  // BPSK over AWGN at the case's Eb/N0, the all-zero codeword: LLR ~ N(mu, 2 mu), mu = 4 R Eb/N0.
  const double rate = static_cast<double>(code.n() - code.m()) / static_cast<double>(code.n());
  const double mu = 4 * rate * std::pow(10.0, c.ebn0 / 10);
  test::Gaussian g(1);
  std::vector<double> llr(code.n() * width);
  for (double& x : llr) x = mu + std::sqrt(2 * mu) * g();
  LaneResults results;
  std::uint64_t decided = 0;
  for (auto _ : state) {
    lanes->begin(groups * width);
    for (std::size_t k = 0; k < groups; ++k) lanes->load(k, llr);
    lanes->decode(results);
    decided += results.hard[0];
    benchmark::DoNotOptimize(decided);
  }
  state.counters["edge_updates_per_s"] = benchmark::Counter(
      static_cast<double>(state.iterations()) * static_cast<double>(groups * width) * s.iterations *
          static_cast<double>(code.edges()),
      benchmark::Counter::kIsRate);
  state.counters["iterations"] = s.iterations;
  state.SetLabel(active_simd_target());
}

#define TANNERY_SIMULATION_BENCH(name, ...)                                             \
  void BM_sim_##name(benchmark::State& state) {                                         \
    simulation(state, Case{__VA_ARGS__});                                               \
  }                                                                                     \
  BENCHMARK(BM_sim_##name)->Unit(benchmark::kMillisecond)->UseRealTime()->MinTime(1.0); \
  void BM_kernel_##name(benchmark::State& state) {                                      \
    kernel(state, Case{__VA_ARGS__});                                                   \
  }                                                                                     \
  BENCHMARK(BM_kernel_##name)->Unit(benchmark::kMillisecond)->UseRealTime()->MinTime(0.5)

// The same simulation with every frame decoded to the iteration limit (early stop off), to hold
// against BM_sim_<name>: early stop must not be the slower one, also where nearly every frame
// fails.
#define TANNERY_FIXED_ITERATIONS_BENCH(name, ...)            \
  void BM_fixed_##name(benchmark::State& state) {            \
    simulation(state, Case{__VA_ARGS__, false});             \
  }                                                          \
  BENCHMARK(BM_fixed_##name)                                 \
      ->Unit(benchmark::kMillisecond)                        \
      ->UseRealTime()                                        \
      ->MinTime(1.0)

// A waterfall point and one further out (FER near 1e-4 on the shipped codes; on the length-64 800
// code past the waterfall, where these frame counts see no error) for int8 offset min-sum (6.2)
// and float32 normalized min-sum on both shipped rate-1/2 codes and a (3,6)-regular code of length
// 64 800; the FER is measured by the simulation cases.
TANNERY_SIMULATION_BENCH(i8_oms_qc648_2_5dB, "qc-rate-half-z54.qc", Algorithm::offset_min_sum,
                         "6.2", 2.5, 40960);
TANNERY_SIMULATION_BENCH(i8_oms_qc648_3_75dB, "qc-rate-half-z54.qc", Algorithm::offset_min_sum,
                         "6.2", 3.75, 81920);
TANNERY_SIMULATION_BENCH(f32_nms_qc648_2_5dB, "qc-rate-half-z54.qc", Algorithm::normalized_min_sum,
                         "", 2.5, 20480);
TANNERY_SIMULATION_BENCH(f32_nms_qc648_3_75dB, "qc-rate-half-z54.qc", Algorithm::normalized_min_sum,
                         "", 3.75, 40960);
TANNERY_SIMULATION_BENCH(i8_oms_reg2016_1_75dB, "regular-3-6-n2016.tanner",
                         Algorithm::offset_min_sum, "6.2", 1.75, 20480);
TANNERY_SIMULATION_BENCH(i8_oms_reg2016_2_25dB, "regular-3-6-n2016.tanner",
                         Algorithm::offset_min_sum, "6.2", 2.25, 40960);
TANNERY_SIMULATION_BENCH(f32_nms_reg2016_1_75dB, "regular-3-6-n2016.tanner",
                         Algorithm::normalized_min_sum, "", 1.75, 10240);
TANNERY_SIMULATION_BENCH(f32_nms_reg2016_2_25dB, "regular-3-6-n2016.tanner",
                         Algorithm::normalized_min_sum, "", 2.25, 20480);
TANNERY_SIMULATION_BENCH(i8_oms_reg64800_1_35dB, "regular-3-6-n64800", Algorithm::offset_min_sum,
                         "6.2", 1.35, 1024);
TANNERY_SIMULATION_BENCH(i8_oms_reg64800_1_5dB, "regular-3-6-n64800", Algorithm::offset_min_sum,
                         "6.2", 1.5, 1024);
TANNERY_SIMULATION_BENCH(f32_nms_reg64800_1_35dB, "regular-3-6-n64800",
                         Algorithm::normalized_min_sum, "", 1.35, 512);
TANNERY_SIMULATION_BENCH(f32_nms_reg64800_1_5dB, "regular-3-6-n64800",
                         Algorithm::normalized_min_sum, "", 1.5, 512);

// Early stop against fixed iterations where nearly every frame fails (FER about 0.9 at 1 dB) and
// at two waterfall points.
TANNERY_SIMULATION_BENCH(i8_oms_reg2016_1dB, "regular-3-6-n2016.tanner", Algorithm::offset_min_sum,
                         "6.2", 1.0, 10240);
TANNERY_FIXED_ITERATIONS_BENCH(i8_oms_reg2016_1dB, "regular-3-6-n2016.tanner",
                               Algorithm::offset_min_sum, "6.2", 1.0, 10240);
TANNERY_SIMULATION_BENCH(f32_nms_reg2016_1dB, "regular-3-6-n2016.tanner",
                         Algorithm::normalized_min_sum, "", 1.0, 4096);
TANNERY_FIXED_ITERATIONS_BENCH(f32_nms_reg2016_1dB, "regular-3-6-n2016.tanner",
                               Algorithm::normalized_min_sum, "", 1.0, 4096);
TANNERY_FIXED_ITERATIONS_BENCH(i8_oms_reg2016_1_75dB, "regular-3-6-n2016.tanner",
                               Algorithm::offset_min_sum, "6.2", 1.75, 20480);
TANNERY_FIXED_ITERATIONS_BENCH(i8_oms_reg64800_1_35dB, "regular-3-6-n64800",
                               Algorithm::offset_min_sum, "6.2", 1.35, 1024);

}  // namespace
