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
  std::string channel = "awgn";
  std::string sweep;
  std::string snr = "ebn0";
  bool design_rate = false;
  double snr_offset = 0;
  std::optional<double> assumed_p;
  std::uint64_t frame_errors = 100;
  std::uint64_t max_frames = 100'000;
  double max_seconds = 0;
  double stop_below = 0;
  std::uint64_t seed = 1;
  unsigned threads = 0;
  std::uint32_t chunk = 0;  // automatic
  double confidence = 0.95;
  std::string output = "tannery-run.json";
  std::string csv;
  std::string plot = "tannery-run.svg";
  std::string resume;
  bool all_zero = false;
  bool quiet = false;
  std::string replay;
  std::string replay_llr;
  std::size_t save_failures = 0;
  std::string failures = "tannery-failures.f32";
  std::string scenario;
};

// Fills every option the command line did not give from the scenario file.
void apply_scenario(const Scenario& sc, SimulateOptions& o, const CLI::App& sub) {
  auto given = [&](const char* name) { return sub.get_option(name)->count() > 0; };
  const SimulationConfig& c = sc.config;
  if (!given("--code")) o.input.code = sc.code;
  if (!given("--algorithm")) o.decoder.algorithm = algorithm_name(c.decoder.algorithm);
  if (!given("--schedule")) o.decoder.schedule = schedule_name(c.decoder.schedule);
  if (!given("--iterations")) o.decoder.iterations = c.decoder.iterations;
  if (!given("--no-early-stop")) o.decoder.no_early_stop = !c.decoder.early_stop;
  if (!given("--alpha")) o.decoder.alpha = c.decoder.alpha;
  if (!given("--beta")) o.decoder.beta = c.decoder.beta;
  if (!given("--flip-threshold")) o.decoder.flip_threshold = c.decoder.flip_threshold;
  if (!given("--kernel")) o.decoder.kernel = kernel_name(c.decoder.kernel);
  if (!given("--quantize") && c.decoder.quantization)
    o.decoder.quantize = quantization_spec(*c.decoder.quantization);
  if (!given("--channel")) o.channel = channel_name(c.channel.kind);
  if (!given("--sweep")) {
    o.sweep.clear();
    for (double v : c.sweep) o.sweep += fmt::format("{}{}", o.sweep.empty() ? "" : ",", v);
  }
  if (!given("--snr")) o.snr = c.channel.measure == SnrMeasure::esn0 ? "esn0" : "ebn0";
  if (!given("--design-rate")) o.design_rate = c.channel.design_rate;
  if (!given("--snr-offset")) o.snr_offset = c.channel.snr_offset_db;
  if (!given("--assumed-p")) o.assumed_p = c.channel.assumed_crossover;
  if (!given("--frame-errors")) o.frame_errors = c.stop.frame_errors;
  if (!given("--max-frames")) o.max_frames = c.stop.max_frames;
  if (!given("--max-seconds")) o.max_seconds = c.stop.max_seconds;
  if (!given("--stop-below")) o.stop_below = c.stop.stop_below_fer;
  if (!given("--seed")) o.seed = c.seed;
  if (!given("--chunk")) o.chunk = c.chunk_frames;
  if (!given("--all-zero")) o.all_zero = c.all_zero;
  if (!given("--confidence")) o.confidence = c.confidence;
}

// Default sweeps: the waterfall of the shipped rate-1/2 codes, and ranges around the
// capacity limits of rate 1/2 for the BSC and BEC.
std::string default_sweep(ChannelKind kind) {
  switch (kind) {
    case ChannelKind::awgn:
      return "1:0.25:1.75";
    case ChannelKind::bsc:
      return "0.08:-0.01:0.04";
    case ChannelKind::bec:
      return "0.46:-0.02:0.36";
  }
  return "";
}

CodeRecord code_record(const std::string& source, const Code& code, const Encoder& encoder) {
  CodeRecord r;
  r.source = source;
  r.path = resolve_code_path(source);
  r.sha256 = r.path == "-" ? std::string() : sha256_hex(read_text_file(r.path));
  std::ostringstream canonical;
  write_code(code, MatrixFormat::tannery, canonical);
  r.matrix_sha256 = sha256_hex(canonical.str());
  r.n = code.n();
  r.m = code.m();
  r.k = encoder.k();
  r.edges = code.edges();
  return r;
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

// The run the options describe (all but threads and the kept failures).
SimulationConfig config_of(const SimulateOptions& o) {
  SimulationConfig config;
  config.decoder = o.decoder.settings();
  config.channel.kind = *parse_channel(o.channel);
  config.channel.measure = o.snr == "esn0" ? SnrMeasure::esn0 : SnrMeasure::ebn0;
  config.channel.design_rate = o.design_rate;
  config.channel.snr_offset_db = o.snr_offset;
  config.channel.assumed_crossover = o.assumed_p;
  if (config.channel.kind != ChannelKind::awgn &&
      (o.snr_offset != 0 || o.design_rate || o.snr != "ebn0")) {
    throw Error("--snr, --design-rate and --snr-offset apply to --channel awgn only");
  }
  if (config.channel.kind != ChannelKind::bsc && o.assumed_p)
    throw Error("--assumed-p applies to --channel bsc only");
  config.sweep = parse_sweep(o.sweep.empty() ? default_sweep(config.channel.kind) : o.sweep);
  config.stop = StopRules{o.frame_errors, o.max_frames, o.max_seconds, o.stop_below};
  config.seed = o.seed;
  config.chunk_frames = o.chunk;
  config.all_zero = o.all_zero;
  config.confidence = o.confidence;
  return config;
}

// What a resumed run's command line would change in the recorded run, one item per setting.
std::vector<std::string> resume_conflicts(const SimulationConfig& recorded,
                                          const SimulationConfig& asked, const Code& recorded_code,
                                          const Code& asked_code) {
  std::vector<std::string> d;
  auto differ = [&](bool same, std::string what) {
    if (!same) d.push_back(std::move(what));
  };
  differ(recorded_code == asked_code, "the code");
  differ(recorded.decoder == asked.decoder,
         fmt::format("decoder: {} (recorded: {})", describe(asked.decoder),
                     describe(recorded.decoder)));
  differ(recorded.channel == asked.channel, "channel settings");
  differ(recorded.sweep == asked.sweep, "the sweep");
  differ(recorded.stop == asked.stop, "stop rules");
  differ(recorded.seed == asked.seed,
         fmt::format("seed {} (recorded: {})", asked.seed, recorded.seed));
  differ(
      recorded.chunk_frames == asked.chunk_frames,
      fmt::format("chunk of {} frames (recorded: {})", asked.chunk_frames, recorded.chunk_frames));
  differ(recorded.all_zero == asked.all_zero, "--all-zero");
  differ(recorded.confidence == asked.confidence,
         fmt::format("confidence {} (recorded: {})", asked.confidence, recorded.confidence));
  return d;
}

void run(SimulateOptions o, const CLI::App& sub) {
  RunRecord previous;
  SimulationConfig config;
  if (!o.scenario.empty() && !o.resume.empty())
    throw Error("--scenario and --resume exclude each other");
  if (!o.scenario.empty()) apply_scenario(read_scenario(o.scenario), o, sub);
  std::optional<Code> asked_code;
  if (!o.resume.empty()) {
    // The recorded run continues exactly; options on the command line may repeat its settings
    // but not change them (threads, outputs and --save-failures apply freely).
    previous = parse_results_json(read_text_file(o.resume), o.resume);
    config = previous.config;
    const std::string given_code = o.input.code;
    o.input.code = previous.code.path;
    Scenario recorded;
    recorded.code = previous.code.path;
    recorded.config = previous.config;
    apply_scenario(recorded, o, sub);
    SimulationConfig asked = config_of(o);
    if (asked.chunk_frames == 0) asked.chunk_frames = config.chunk_frames;
    if (sub.get_option("--code")->count() > 0) {
      CodeInput other = o.input;
      other.code = given_code;
      asked_code = other.load();
    }
    const Code recorded_code = o.input.load();
    asked.decoder = resolve_kernel(asked.decoder, recorded_code);
    const auto conflicts =
        resume_conflicts(config, asked, recorded_code, asked_code ? *asked_code : recorded_code);
    if (!conflicts.empty()) {
      std::string list;
      for (const auto& c : conflicts) list += (list.empty() ? "" : "; ") + c;
      throw Error(fmt::format(
          "--resume {}: the command line changes the recorded run ({}); a resumed run continues "
          "exactly as recorded: drop those options, or start a new run with --output",
          o.resume, list));
    }
    if (o.output == "tannery-run.json") o.output = o.resume;
  } else {
    config = config_of(o);
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
  record.code = code_record(o.input.code, code, sim.encoder());
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
               describe(sim.config().decoder), channel_name(config.channel.kind), config.seed,
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
  ch->add_option("--channel", o->channel,
                 "awgn (BPSK over AWGN), bsc (crossover p) or bec (erasure probability)")
      ->check(CLI::IsMember({"awgn", "bsc", "bec"}))
      ->capture_default_str();
  ch->add_option("--sweep", o->sweep,
                 "sweep values: list 1,1.5,2 or range START:STEP:STOP; Eb/N0 in dB (awgn), p "
                 "(bsc), epsilon (bec); "
                 "default awgn 1:0.25:1.75, bsc 0.08:-0.01:0.04, bec 0.46:-0.02:0.36");
  ch->add_option("--snr", o->snr, "awgn sweep measure: ebn0 (Eb/N0 in dB) or esn0 (Es/N0 in dB)")
      ->check(CLI::IsMember({"ebn0", "esn0"}))
      ->capture_default_str();
  ch->add_flag("--design-rate", o->design_rate,
               "Eb/N0 with the design rate 1 - m/n instead of the true rate k/n");
  ch->add_option("--snr-offset", o->snr_offset,
                 "decoder's noise estimate is off: LLRs computed for an SNR this many dB higher "
                 "(awgn mismatch)");
  ch->add_option("--assumed-p", o->assumed_p,
                 "bsc: LLR magnitude log((1-p)/p) from this p instead of the true one");
  ch->add_flag("--all-zero", o->all_zero,
               "send the all-zero codeword instead of random data: valid only for symmetric "
               "channels and decoders "
               "(all here are), and it skips encoding");
  auto* stop = sub->add_option_group("stop", "Stop rules");
  stop->add_option("--frame-errors", o->frame_errors,
                   "a point stops after at least this many frame errors")
      ->capture_default_str()
      ->check(kNonNegative);
  stop->add_option("--max-frames", o->max_frames,
                   "a point stops after this many frames; the sweep stops at a point "
                   "with no error in that many")
      ->capture_default_str()
      ->check(kNonNegative);
  stop->add_option("--max-seconds", o->max_seconds,
                   "a point stops after this many seconds (wall clock: the one rule that makes "
                   "counts machine-dependent)");
  stop->add_option("--stop-below", o->stop_below,
                   "the sweep stops after a point whose FER is below this");
  sub->add_option("--seed", o->seed, "seed of the Philox streams")->capture_default_str();
  sub->add_option("--threads", o->threads, "worker threads, 1 to 1024 (default: all cores)")
      ->check(CLI::Range(0.0, 1024.0));
  sub->add_option("--chunk", o->chunk,
                  "frames per chunk, the unit of work and of stop-rule evaluation (default: 64; "
                  "with --kernel simd up to 1024, by code length, so batches refill in a chunk)")
      ->check(CLI::Range(1, 1 << 20));
  sub->add_option("--confidence", o->confidence, "level of the FER and BER intervals")
      ->capture_default_str();
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
