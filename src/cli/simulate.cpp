// tannery simulate: error rates of a code and decoder over a channel across a sweep.
#include <fmt/format.h>
#include <unistd.h>
#include <chrono>
#include <cstdio>
#include <sstream>
#include <thread>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/parse.hpp"
#include "tannery/report/plot.hpp"
#include "tannery/report/results.hpp"
#include "tannery/report/scenario.hpp"
#include "tannery/report/sha256.hpp"
#include "tannery/version.hpp"

namespace tannery::cli {

namespace {

struct SimulateOptions {
  CodeInput input;
  DecoderOptions decoder;
  SettingsOptions<ChannelSpec> channel;
  SettingsOptions<StopRules> stop;
  SettingsOptions<SimulationConfig> run;
  std::string sweep;
  unsigned threads = 0;
  std::string output = "tannery-run.json";
  std::string csv;
  std::string plot = "tannery-run.svg";
  std::string resume;
  bool quiet = false;
  std::string replay;
  std::string replay_llr;
  std::size_t save_failures = 0;
  std::string failures = "tannery-failures.f32";
  std::string scenario;
};

// The run: base (the library's defaults, a scenario's or a recorded run's settings) with the
// options the command line gave.
SimulationConfig config_of(const SimulateOptions& o, SimulationConfig c) {
  c.decoder = o.decoder.settings(c.decoder);
  o.channel.overlay(c.channel);
  o.stop.overlay(c.stop);
  o.run.overlay(c);
  validate(c.channel);
  if (!o.sweep.empty()) {
    c.sweep = parse_sweep(o.sweep);
  } else if (c.sweep.empty()) {
    c.sweep = default_sweep(c.channel.kind);
  }
  return c;
}

class ProgressLine {
 public:
  ProgressLine(bool enabled, const SimulationConfig& config, std::string heading)
      : enabled_(enabled), config_(config), heading_(std::move(heading)) {}
  void update(const Progress& p) {
    if (!enabled_) return;
    const PointResult& t = p.totals;
    const double rate = p.seconds > 0 ? static_cast<double>(t.frames) / p.seconds : 0;
    // Frames still needed: to reach the error target at the current FER, capped by max frames.
    double remaining =
        static_cast<double>(config_.stop.max_frames - std::min(t.frames, config_.stop.max_frames));
    if (t.frame_errors > 0) {
      const double need = static_cast<double>(config_.stop.frame_errors -
                                              std::min(t.frame_errors, config_.stop.frame_errors));
      remaining = std::min(remaining, need / t.fer());
    }
    const std::string eta = rate > 0 ? fmt::format("{:.0f} s", remaining / rate) : "?";
    fmt::print(
        stderr,
        "\r  {} {:<8.4g} frames {:>10}  errors {:>6}  FER {:9.3e}  {:>8.0f} frames/s  ETA {:<8}",
        heading_, config_.sweep[p.point], t.frames, t.frame_errors, t.fer(), rate, eta);
    std::fflush(stderr);
    last_point_ = p.point;
    open_ = true;
  }
  void end_line() {
    if (enabled_ && open_) fmt::print(stderr, "\n");
    open_ = false;
  }
  std::size_t last_point() const { return last_point_; }

 private:
  bool enabled_;
  const SimulationConfig& config_;
  std::string heading_;
  std::size_t last_point_ = SIZE_MAX;
  bool open_ = false;
};

// The results JSON, CSV and plot of one run are published as a set: all three are written in
// full before the first is renamed into place, so a kill leaves the old set or the new one (but
// for the instant between renames). A plot that cannot be rendered does not hold back the rest.
void write_outputs(const SimulateOptions& o, const RunRecord& record) {
  OutputFile json(o.output, false), csv(o.csv, false),
      plot(record.points.empty() ? std::string() : o.plot, false);
  json.write(results_json(record));
  csv.write(results_csv(record));
  std::exception_ptr plot_failed;
  if (plot.enabled()) {
    try {
      fill_plot(o.plot, plot_svg({PlotRun{run_label(record), record}}, PlotOptions{}), plot);
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

void print_throughput(const RunRecord& record, double wall) {
  std::uint64_t frames = 0, iterations = 0;
  for (const auto& p : record.points) frames += p.frames, iterations += p.iterations;
  const double fps = wall > 0 ? static_cast<double>(frames) / wall : 0;
  const double edge_rate =
      wall > 0 ? static_cast<double>(iterations) * static_cast<double>(record.code.edges) / wall
               : 0;
  fmt::print(
      "throughput: {:.0f} frames/s, {:.3f} coded Mbit/s, {:.3f} information Mbit/s, {:.3g} "
      "edge-updates/s "
      "({:.3g} per thread, {})\n",
      fps, fps * static_cast<double>(record.code.n) / 1e6,
      fps * static_cast<double>(record.code.k) / 1e6, edge_rate, edge_rate / record.threads_used,
      count_of(record.threads_used, "thread"));
}

void replay(const SimulateOptions& o, const Code& code, const Simulator& sim) {
  const auto colon = o.replay.find(':');
  const auto point = parse_count(std::string_view(o.replay).substr(0, colon));
  const auto frame =
      parse_count(colon == std::string::npos ? std::string_view()
                                             : std::string_view(o.replay).substr(colon + 1));
  if (!point || !frame)
    throw Error(fmt::format("--replay expects POINT:FRAME (indices from 0), got '{}'", o.replay));
  const FrameData d = sim.replay(*point, *frame);
  std::size_t info_errors = 0, coded_errors = 0;
  for (std::size_t i = 0; i < code.n(); ++i) coded_errors += d.hard[i] != d.codeword[i];
  for (std::uint32_t p : sim.encoder().info_positions()) info_errors += d.hard[p] != d.codeword[p];
  fmt::print("replay of point {} ({} = {}), frame {}, seed {}:\n", *point,
             parameter_heading(sim.config().channel), sim.config().sweep[*point], *frame,
             sim.config().seed);
  fmt::print(
      "  decoded {} after {} iterations, syndrome weight {}; {} coded and {} information bit "
      "errors\n",
      d.outcome.converged ? "to a codeword" : "without converging", d.outcome.iterations,
      d.outcome.syndrome_weight, coded_errors, info_errors);
  if (!o.replay_llr.empty()) {
    std::vector<float> llr(d.llr.begin(), d.llr.end());
    std::string bytes;
    append_f32_le(bytes, llr);
    write_file_atomically(o.replay_llr, bytes);
    fmt::print("  channel LLRs written to {} (float32 little-endian, n = {})\n", o.replay_llr,
               code.n());
  }
}

void run(SimulateOptions o, const CLI::App& sub) {
  RunRecord previous;
  SimulationConfig config;
  if (!o.scenario.empty() && !o.resume.empty())
    throw Error("--scenario and --resume exclude each other");
  const bool code_given = sub.get_option("--code")->count() > 0;
  if (!o.scenario.empty()) {
    const Scenario scenario = read_scenario(o.scenario);
    if (!code_given) o.input.code = scenario.code;
    config = config_of(o, scenario.config);
  } else if (!o.resume.empty()) {
    // The recorded run continues exactly; options on the command line may repeat its settings
    // but not change them (threads, outputs and --save-failures apply freely).
    previous = parse_results_json(read_text_file(o.resume), o.resume);
    config = previous.config;
    CodeInput recorded_input = o.input;
    recorded_input.code = previous.code.path;
    const Code recorded_code = recorded_input.load();
    SimulationConfig asked = config_of(o, config);
    asked.decoder = resolve_kernel(asked.decoder, recorded_code);
    std::vector<std::string> conflicts = config_differences(config, asked);
    if (code_given && !(o.input.load() == recorded_code))
      conflicts.insert(conflicts.begin(), "the code");
    if (!conflicts.empty()) {
      std::string list;
      for (const auto& c : conflicts) list += (list.empty() ? "" : "; ") + c;
      throw Error(fmt::format(
          "--resume {}: the command line changes the recorded run ({}); a resumed run continues "
          "exactly as recorded: drop those options, or start a new run with --output",
          o.resume, list));
    }
    o.input = recorded_input;
    if (o.output == "tannery-run.json") o.output = o.resume;
  } else {
    config = config_of(o, SimulationConfig{});
  }
  check_plot_path(o.plot);
  check_paths({{"--code", o.input.code}, {"--scenario", o.scenario}},
              {{"--output", o.output},
               {"--csv", o.csv},
               {"--plot", o.plot},
               {"--failures", o.save_failures ? o.failures : ""},
               {"--replay-llr", o.replay_llr}});
  config.threads = o.threads ? o.threads : std::max(1u, std::thread::hardware_concurrency());
  config.keep_failures = o.save_failures;

  const Code code = o.input.load();
  Simulator sim(code, config);
  if (!o.replay.empty()) return replay(o, code, sim);

  RunRecord record;
  record.tool_version = std::string(version());
  record.created = utc_now();
  record.code = code_record(o.input.code, code, sim.encoder().k());
  if (!o.resume.empty()) record.code.source = previous.code.source;
  if (!o.resume.empty() && record.code.matrix_sha256 != previous.code.matrix_sha256) {
    throw Error(fmt::format("resume: {} no longer holds the matrix the run used (SHA-256 differs)",
                            o.input.code));
  }
  record.config = sim.config();
  record.rate_for_snr = sim.rate();
  record.threads_used = config.threads;

  const bool live = !o.quiet && isatty(STDERR_FILENO);
  if (!o.quiet) {
    fmt::print("code {}: n = {}, k = {}, rate {:.4f}{}\n", o.input.code, code.n(),
               sim.encoder().k(),
               static_cast<double>(sim.encoder().k()) / static_cast<double>(code.n()),
               config.channel.kind == ChannelKind::awgn
                   ? fmt::format(" (Eb/N0 uses R = {:.4f}, {} rate)", sim.rate(),
                                 config.channel.design_rate ? "design" : "true")
                   : std::string());
    fmt::print("decoder {}; channel {}; seed {}, chunks of {} frames, {}{}\n",
               describe(sim.config().decoder), name_of(config.channel.kind), config.seed,
               sim.config().chunk_frames, count_of(config.threads, "thread"),
               config.all_zero ? "; all-zero codeword" : "");
    std::fflush(stdout);
  }
  ProgressLine line(live, sim.config(), parameter_heading(config.channel));
  const auto start = std::chrono::steady_clock::now();
  std::vector<PointResult> points;
  auto on_progress = [&](const Progress& p) {
    if (p.point != line.last_point()) line.end_line();
    line.update(p);
  };
  try {
    points = sim.run(previous.points, on_progress, &g_interrupted);
  } catch (...) {
    line.end_line();
    throw;
  }
  line.end_line();
  const double wall =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  record.points = points;
  record.interrupted = !points.empty() && !points.back().complete;
  write_outputs(o, record);
  if (!o.quiet) {
    fmt::print("\n{}", results_table(record));
    print_throughput(record, wall);
    if (record.interrupted) {
      fmt::print("interrupted: results so far saved; continue with --resume {}\n", o.output);
    } else if (points.size() < config.sweep.size()) {
      const PointResult& last = points.back();
      fmt::print("sweep stopped early: {}\n",
                 last.frame_errors == 0 ? fmt::format("no frame error in {} frames", last.frames)
                                        : fmt::format("FER {:.3e} below --stop-below {}",
                                                      last.fer(), config.stop.stop_below_fer));
    }
    for (const auto* f : {&o.output, &o.csv, &o.plot}) {
      if (!f->empty()) fmt::print("wrote {}\n", *f);
    }
  }
  if (o.save_failures > 0) {
    std::string bytes,
        index = "# point parameter frame (one line per float32 frame in the capture)\n";
    for (const KeptFrame& f : sim.kept_frames()) {
      append_f32_le(bytes, f.llr);
      index += fmt::format("{} {} {}\n", f.point, config.sweep[f.point], f.frame);
    }
    write_file_atomically(o.failures, bytes);
    write_file_atomically(o.failures + ".txt", index);
    if (!o.quiet) {
      fmt::print(
          "saved {} failing frames' channel LLRs to {} (float32, n = {} per frame; index in "
          "{}.txt)\n",
          sim.kept_frames().size(), o.failures, code.n(), o.failures);
    }
  }
  if (record.interrupted) throw CheckFailed{130};
}

}  // namespace

void add_simulate(CLI::App& app) {
  auto o = std::make_shared<SimulateOptions>();
  auto* sub = app.add_subcommand("simulate",
                                 "Estimate bit and frame error rates across a sweep (Monte Carlo)");
  sub->footer(
      "Examples:\n"
      "  tannery simulate                                   # default: regular-3-6-n2016, "
      "sum-product, AWGN 1..1.75 dB\n"
      "  tannery simulate --code qc-rate-half-z54 --algorithm normalized-min-sum --schedule "
      "layered \\\n"
      "                   --sweep 1:0.5:3 --frame-errors 200 --output qc.json --plot qc.svg\n"
      "  tannery simulate --channel bsc --sweep 0.02,0.03,0.04 --algorithm bit-flip\n"
      "  tannery simulate --resume tannery-run.json          # continue an interrupted run\n"
      "  tannery simulate --scenario sims/qc-sum-product.toml --threads 2\n"
      "Counts are identical for any --threads: frames are pure functions of (seed, point, frame).");
  o->input.add_to(*sub, false, kDefaultCode);
  o->decoder.add_to(*sub);
  auto* ch = sub->add_option_group("channel", "Channel options");
  o->channel.add_to(*ch);
  ch->add_option("--sweep", o->sweep,
                 "sweep values: list 1,1.5,2 or range START:STEP:STOP; Eb/N0 in dB (awgn), p "
                 "(bsc), epsilon (bec); "
                 "default awgn 1:0.25:1.75, bsc 0.08:-0.01:0.04, bec 0.46:-0.02:0.36");
  o->stop.add_to(*sub->add_option_group("stop", "Stop rules"));
  o->run.add_to(*sub);
  sub->add_option("--threads", o->threads, "worker threads, 1 to 1024 (default: all cores)")
      ->check(CLI::Range(0.0, 1024.0));
  sub->add_option("-o,--output", o->output, "results file (JSON; '' for none)")
      ->capture_default_str();
  sub->add_option("--csv", o->csv, "also write the points as CSV");
  sub->add_option("--plot", o->plot,
                  "plot of FER and BER: .svg, or .png / .pdf rendered by rsvg-convert ('' for "
                  "none)")
      ->capture_default_str();
  sub->add_option("--resume", o->resume,
                  "continue the run recorded in this results file with its settings (options "
                  "that would change them are refused; threads and outputs apply)");
  sub->add_flag("--quiet", o->quiet, "print nothing but errors");
  sub->add_option("--replay", o->replay,
                  "decode one frame again, POINT:FRAME (indices from 0), and report it");
  sub->add_option("--replay-llr", o->replay_llr,
                  "with --replay: write that frame's channel LLRs (float32)");
  sub->add_option("--save-failures", o->save_failures,
                  "keep the channel LLRs of the first N failing frames per point")
      ->check(kNonNegative);
  sub->add_option("--failures", o->failures,
                  "capture file for --save-failures (float32, n per frame)")
      ->capture_default_str();
  sub->add_option("--scenario", o->scenario,
                  "run the simulation a scenario file (TOML) describes; options given here "
                  "override its fields");
  sub->callback([o, sub] {
    // At once, so a signal that arrives while the code loads still ends with results saved.
    install_interrupt_handler();
    run(*o, *sub);
  });
}

}  // namespace tannery::cli
