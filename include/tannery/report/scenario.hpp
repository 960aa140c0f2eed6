// Scenario files (TOML): a named simulation — code, channel, decoder, sweep, stop rules, seed.
//
//   name = "qc-sum-product"
//   description = "..."
//   code = "qc-rate-half-z54"        # shipped name or path (relative to the scenario file)
//   [decoder]  algorithm, schedule, iterations, early_stop, alpha, beta, flip_threshold,
//              kernel = "auto"|"reference"|"simd", quantize = "6.2"
//   [channel]  kind = "awgn"|"rayleigh"|"bsc"|"bec", sweep = "1:0.5:3" or [1.0, 1.5],
//              snr = "ebn0"|"esn0", design_rate, snr_offset_db, assumed_crossover, fading_block,
//              ignore_fading, modulation = "16qam" or a constellation file, demapper,
//              interleaver = "random:7", puncture = "map.txt" (files relative to the scenario)
//   [stop]     frame_errors, max_frames, max_seconds, stop_below_fer
//   [run]      seed, chunk_frames, all_zero, confidence
// Every key but code and channel.sweep is optional; unknown keys are errors.
#pragma once

#include <string>
#include <string_view>

#include "tannery/sim/simulator.hpp"

namespace tannery {

struct Scenario {
  std::string name;
  std::string description;
  std::string code;
  SimulationConfig config;
};

// Throws Error naming the file, line and column of a problem.
Scenario read_scenario(const std::string& path);
// The same from the file's text; path names it in errors and anchors a relative code path.
Scenario parse_scenario(std::string_view text, const std::string& path);

}  // namespace tannery
