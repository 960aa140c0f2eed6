// Results files: one JSON document per run (schema "tannery-results", version 1) holding
// everything needed to reproduce it, plus a CSV view of the points and the text table.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "tannery/base/stats.hpp"
#include "tannery/sim/simulator.hpp"

namespace tannery {

inline constexpr int kResultsVersion = 1;

struct CodeRecord {
  std::string source;         // as given (path or shipped name)
  std::string path;           // resolved file
  std::string sha256;         // of the file's bytes
  std::string matrix_sha256;  // of the matrix in tannery format (independent of the file format)
  std::size_t n = 0, m = 0, k = 0, edges = 0;
};

// SHA-256 of the code's matrix written in tannery's own format (the same for any file format).
std::string matrix_sha256(const Code& code);
// The provenance of a code: where it came from (source as given, resolved path, the file's
// SHA-256), the SHA-256 of its matrix in tannery's own format (the same for any file format)
// and its dimensions; k from the encoder.
CodeRecord code_record(const std::string& source, const Code& code, std::size_t k);

// What asked changes in recorded, one item per setting: "seed 5 (recorded: 1)".
std::vector<std::string> config_differences(const SimulationConfig& recorded,
                                            const SimulationConfig& asked);

struct RunRecord {
  std::string tool_version;
  std::string created;  // UTC, ISO 8601
  CodeRecord code;
  SimulationConfig config;
  double rate_for_snr = 0;    // information bits per symbol in the Eb/N0 conversion
  double effective_rate = 0;  // information bits per sent code bit (puncturing, shortening)
  std::size_t sent_bits = 0;  // code bits sent per frame (0: a file from before it was recorded)
  unsigned bits_per_symbol = 1;
  unsigned threads_used = 0;  // over all ranks of an MPI job
  unsigned ranks_used = 1;    // processes of an MPI job
  bool interrupted = false;
  std::vector<PointResult> points;
};

struct PointStats {
  Interval fer, ber;
};
PointStats point_stats(const PointResult& p, double confidence);

// A new run's record before its points: this build's version, the time now, the code's
// provenance (source as given), the simulator's settings, rate for Eb/N0 and threads.
RunRecord new_run_record(const std::string& source, const Code& code, const Simulator& sim);

// Throughput of a run's points over `seconds` of wall time (0 when seconds is not positive).
struct Throughput {
  double frames_per_second = 0, coded_bits_per_second = 0, info_bits_per_second = 0;
  double edge_updates_per_second = 0, edge_updates_per_thread = 0;
};
Throughput throughput(const RunRecord& run, double seconds);

// Kept failing frames as a capture `tannery decode` reads (float32 LLRs, n per frame) and its
// index, one line "point parameter frame" per frame.
struct FailureCapture {
  std::string llr_bytes, index;
};
FailureCapture failure_capture(const std::vector<KeptFrame>& kept,
                               const std::vector<double>& sweep);

// "ebn0_db", "esn0_db", "p" or "epsilon".
std::string parameter_key(const ChannelSpec& channel);
// Column heading: "Eb/N0 dB", "Es/N0 dB", "p", "epsilon".
std::string parameter_heading(const ChannelSpec& channel);

std::string results_json(const RunRecord& run);
// Parses a results file; throws Error naming the source and the problem.
RunRecord parse_results_json(std::string_view text, const std::string& source);
std::string results_csv(const RunRecord& run);
// The aligned table printed after a run.
std::string results_table(const RunRecord& run);

// The failure anatomy printed under the table: per point with failures, its `top` most frequent
// (a, b) classes (codewords marked) and the failures too large to classify; empty when no
// point failed.
std::string failure_anatomy_text(const RunRecord& run, std::size_t top = 4);

// Current UTC time as 2026-12-02T10:00:00Z.
std::string utc_now();

}  // namespace tannery
