#include "simulate_output.hpp"

#include <fmt/format.h>
#include <cstdio>
#include <exception>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"
#include "tannery/parse.hpp"
#include "tannery/report/plot.hpp"

namespace tannery::cli {

void ProgressLine::update(const Progress& p) {
  if (!enabled_) return;
  if (p.point != point_) end_line();
  const PointResult& t = p.totals;
  const double rate = p.seconds > 0 ? static_cast<double>(t.frames) / p.seconds : 0;
  const std::string eta =
      rate > 0 ? fmt::format("{:.0f} s", frames_to_go(t, config_.stop) / rate) : "?";
  fmt::print(
      stderr,
      "\r  {} {:<8.4g} frames {:>10}  errors {:>6}  FER {:9.3e}  {:>8.0f} frames/s{}  ETA {:<8}",
      heading_, config_.sweep[p.point], t.frames, t.frame_errors, t.fer(), rate,
      ranks_ > 1 ? fmt::format(" on {} ranks", ranks_) : std::string(), eta);
  std::fflush(stderr);
  point_ = p.point;
  open_ = true;
}

void ProgressLine::end_line() {
  if (enabled_ && open_) fmt::print(stderr, "\n");
  open_ = false;
}

void print_heading(const RunRecord& r) {
  const SimulationConfig& c = r.config;
  const ChannelSpec& ch = c.channel;
  const double rate = static_cast<double>(r.code.k) / static_cast<double>(r.code.n);
  fmt::print("code {}: n = {}, k = {}, rate {:.4f}{}{}\n", r.code.source, r.code.n, r.code.k, rate,
             ch.puncture.empty()
                 ? std::string()
                 : fmt::format(", effective rate {:.4f} after {}", r.effective_rate, ch.puncture),
             !snr_swept(ch.kind) ? std::string()
             : r.bits_per_symbol == 1
                 ? fmt::format(" (Eb/N0 uses R = {:.4f}, {} rate)", r.rate_for_snr,
                               ch.design_rate ? "design" : "true")
                 : fmt::format(" (Eb/N0 uses {:.4f} information bits per symbol, {} rate)",
                               r.rate_for_snr, ch.design_rate ? "design" : "true"));
  fmt::print("decoder {}; channel {}; seed {}, chunks of {} frames, {}{}{}\n", describe(c.decoder),
             describe(ch), c.seed, c.chunk_frames, count_of(r.threads_used, "thread"),
             r.ranks_used > 1 ? fmt::format(" on {} ranks", r.ranks_used) : std::string(),
             c.all_zero ? "; all-zero codeword" : "");
  std::fflush(stdout);
}

void write_outputs(const RunRecord& record, const std::string& json_path,
                   const std::string& csv_path, const std::string& plot_path) {
  OutputFile json(json_path, false), csv(csv_path, false),
      plot(record.points.empty() ? std::string() : plot_path, false);
  json.write(results_json(record));
  csv.write(results_csv(record));
  std::exception_ptr plot_failed;
  if (plot.enabled()) {
    try {
      fill_plot(plot_path, plot_svg({PlotRun{run_label(record), record}}, PlotOptions{}), plot);
    } catch (const Error&) {
      plot.abandon();
      plot_failed = std::current_exception();
    }
  }
  json.commit();
  csv.commit();
  plot.commit();
  if (plot_failed) std::rethrow_exception(plot_failed);
}

void print_summary(const RunRecord& record, double seconds, LaneUse lanes,
                   const std::string& resume_path) {
  fmt::print("\n{}{}", results_table(record), failure_anatomy_text(record));
  const Throughput t = throughput(record, seconds);
  fmt::print(
      "throughput: {:.0f} frames/s, {:.3f} coded Mbit/s, {:.3f} information Mbit/s, {:.3g} "
      "edge-updates/s ({:.3g} per thread, {}){}\n",
      t.frames_per_second, t.coded_bits_per_second / 1e6, t.info_bits_per_second / 1e6,
      t.edge_updates_per_second, t.edge_updates_per_thread,
      count_of(record.threads_used, "thread") +
          (record.ranks_used > 1 ? fmt::format(" on {} ranks", record.ranks_used) : ""),
      lanes.total > 0
          ? fmt::format(", SIMD lanes busy {:.1f}%",
                        100.0 * static_cast<double>(lanes.busy) / static_cast<double>(lanes.total))
          : "");
  if (record.interrupted) {
    fmt::print("interrupted: results so far saved; continue with --resume {}\n", resume_path);
  } else if (!record.points.empty() && record.points.size() < record.config.sweep.size()) {
    const PointResult& last = record.points.back();
    fmt::print("sweep stopped early: {}\n",
               last.frame_errors == 0 ? fmt::format("no frame error in {} frames", last.frames)
                                      : fmt::format("FER {:.3e} below --stop-below {}", last.fer(),
                                                    record.config.stop.stop_below_fer));
  }
}

void print_replay(const Simulator& sim, std::size_t point, std::uint64_t frame,
                  const std::string& llr_path) {
  const FrameData d = sim.replay(point, frame);
  fmt::print("replay of point {} ({} = {}), frame {}, seed {}:\n", point,
             parameter_heading(sim.config().channel), sim.config().sweep[point], frame,
             sim.config().seed);
  fmt::print(
      "  decoded {} after {} iterations, syndrome weight {}; {} coded and {} information bit "
      "errors\n",
      d.outcome.converged ? "to a codeword" : "without converging", d.outcome.iterations,
      d.outcome.syndrome_weight, d.coded_errors, d.info_errors);
  if (llr_path.empty()) return;
  std::string bytes;
  append_f32_le(bytes, std::vector<float>(d.llr.begin(), d.llr.end()));
  write_file_atomically(llr_path, bytes);
  fmt::print("  channel LLRs written to {} (float32 little-endian, n = {})\n", llr_path,
             d.llr.size());
}

}  // namespace tannery::cli
