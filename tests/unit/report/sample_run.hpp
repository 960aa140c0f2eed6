// A small recorded run (one AWGN point of a fixed-point offset-min-sum decoder) for the report
// tests.
#pragma once

#include "tannery/report/results.hpp"

namespace tannery::test {

inline RunRecord sample_run() {
  RunRecord r;
  r.tool_version = "0.1.0";
  r.created = "2026-12-02T00:00:00Z";
  r.code = CodeRecord{"demo", "codes/demo.tanner", "aa", "bb", 8, 4, 4, 16};
  r.config.sweep = {1.0, 2.0};
  r.config.decoder.algorithm = Algorithm::offset_min_sum;
  r.config.decoder.beta = 0.25;
  r.config.decoder.kernel = Kernel::simd;
  r.config.decoder.quantization = parse_quantization("6.2");
  r.config.channel.snr_offset_db = 0.5;
  r.rate_for_snr = 0.5;
  r.threads_used = 2;
  r.config.chunk_frames = 64;
  PointResult p;
  p.parameter = 1.0;
  p.frames = 640;
  p.frame_errors = 12;
  p.bit_errors = 20;
  p.bits = 2560;
  p.coded_bits = 5120;
  p.coded_bit_errors = 44;
  p.iteration_histogram = {0, 600, 28, 12};
  p.iterations = 600 + 56 + 36;
  p.bit_error_squares = 50;
  p.failed_frames = {3, 99};
  p.failure_classes[StructureClass{2, 4}] = FailureClassCount{5, {{1, 6}, {0, 3}, {2, 7}}, 2};
  p.failure_classes[StructureClass{3, 0}] = FailureClassCount{1, {{0, 1, 5}}};
  p.larger_failures = 6;
  p.chunks = 20;
  p.complete = true;
  p.stop_reason = "frame errors";
  p.seconds = 1.5;
  r.points.push_back(p);
  return r;
}

}  // namespace tannery::test
