// tannery simulate: error rates of a code and decoder over a channel across a sweep.
#include <fmt/format.h>
#include <unistd.h>
#include <chrono>

#include "commands.hpp"
#include "simulate_output.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/parse.hpp"
#include "tannery/report/results.hpp"
#include "tannery/report/scenario.hpp"

namespace tannery::cli {

namespace {

struct SimulateOptions {
  CodeInput input;
  DecoderOptions decoder;
  SettingsOptions<ChannelSpec> channel;
  std::optional<ChannelModel> channel_model;
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
  if (o.channel_model) std::tie(c.channel.kind, c.channel.fading_block) = *o.channel_model;
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
  config.threads = o.threads;  // 0: the simulator takes every core
  config.keep_failures = o.save_failures;

  const Code code = o.input.load();
  Simulator sim(code, config);
  if (!o.replay.empty()) {
    const auto colon = o.replay.find(':');
    const auto point = parse_count(std::string_view(o.replay).substr(0, colon));
    const auto frame =
        parse_count(colon == std::string::npos ? std::string_view()
                                               : std::string_view(o.replay).substr(colon + 1));
    if (!point || !frame)
      throw Error(fmt::format("--replay expects POINT:FRAME (indices from 0), got '{}'", o.replay));
    return print_replay(sim, *point, *frame, o.replay_llr);
  }

  RunRecord record = new_run_record(o.input.code, code, sim);
  if (!o.resume.empty()) record.code.source = previous.code.source;
  if (!o.resume.empty() && record.code.matrix_sha256 != previous.code.matrix_sha256) {
    throw Error(fmt::format("resume: {} no longer holds the matrix the run used (SHA-256 differs)",
                            o.input.code));
  }
  if (!o.quiet) print_heading(record);
  const auto start = std::chrono::steady_clock::now();
  {
    ProgressLine line(!o.quiet && isatty(STDERR_FILENO), sim.config());
    record.points = sim.run(
        previous.points, [&](const Progress& p) { line.update(p); }, &g_interrupted);
  }
  const double wall =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  record.interrupted = !record.points.empty() && !record.points.back().complete;
  write_outputs(record, o.output, o.csv, o.plot);
  if (!o.quiet) {
    print_summary(record, wall, o.output);
    for (const auto* f : {&o.output, &o.csv, &o.plot}) {
      if (!f->empty()) fmt::print("wrote {}\n", *f);
    }
  }
  if (o.save_failures > 0) {
    const FailureCapture kept = failure_capture(sim.kept_frames(), config.sweep);
    write_file_atomically(o.failures, kept.llr_bytes);
    write_file_atomically(o.failures + ".txt", kept.index);
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
  auto* ch = sub->add_option_group("channel", "Link options");
  add_channel_option(*ch, o->channel_model,
                     "awgn, rayleigh:fast (a fading amplitude per symbol), rayleigh:block:B (one "
                     "per B symbols), bsc (crossover p) or bec (erasure probability)")
      ->default_str("awgn");
  o->channel.add_to(*ch);
  ch->add_option("--sweep", o->sweep,
                 "sweep values: list 1,1.5,2 or range START:STEP:STOP; Eb/N0 in dB (awgn, "
                 "rayleigh), p (bsc), epsilon (bec); default awgn 1:0.25:1.75, rayleigh 3:0.5:5, "
                 "bsc 0.08:-0.01:0.04, bec 0.46:-0.02:0.36");
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
