// What tannery simulate prints and writes: the live progress line, the heading, the outputs
// (results JSON, CSV, plot) published as a set, the closing summary and a replayed frame.
#pragma once

#include <string>

#include "tannery/report/results.hpp"

namespace tannery::cli {

// One line on stderr, rewritten in place (a terminal only), one per point.
class ProgressLine {
 public:
  // ranks: processes of an MPI job (1: this process alone), named when more than one.
  ProgressLine(bool enabled, const SimulationConfig& config, unsigned ranks = 1)
      : enabled_(enabled),
        config_(config),
        heading_(parameter_heading(config.channel)),
        ranks_(ranks) {}
  ~ProgressLine() { end_line(); }
  ProgressLine(const ProgressLine&) = delete;
  ProgressLine& operator=(const ProgressLine&) = delete;

  void update(const Progress& p);
  void end_line();

 private:
  bool enabled_;
  const SimulationConfig& config_;
  std::string heading_;
  unsigned ranks_;
  std::size_t point_ = SIZE_MAX;
  bool open_ = false;
};

// The code, decoder and channel line printed before a run.
void print_heading(const RunRecord& record);
// The results JSON (json_path), CSV and plot, each when its path is not empty: all are written
// in full before the first is renamed into place, so a kill leaves the old set or the new one
// (but for the instant between renames). A plot that cannot be rendered does not hold back the
// rest (its error is thrown after).
void write_outputs(const RunRecord& record, const std::string& json_path,
                   const std::string& csv_path, const std::string& plot_path);
// The table, the throughput (with the lane utilization of batched decoders, when they ran) and
// why the sweep ended.
void print_summary(const RunRecord& record, double seconds, LaneUse lanes,
                   const std::string& resume_path);
// A replayed frame: how it decoded; its channel LLRs written to llr_path when not empty.
void print_replay(const Simulator& sim, std::size_t point, std::uint64_t frame,
                  const std::string& llr_path);

}  // namespace tannery::cli
