// tannery simulate: error rates of a code and decoder over a channel across a sweep.
#include <fmt/format.h>
#include <unistd.h>
#include <chrono>
#include <cstdlib>
#include <functional>
#include <memory>
#include <optional>
#include <thread>

#include "commands.hpp"
#include "simulate_output.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/parse.hpp"
#include "tannery/report/results.hpp"
#include "tannery/report/scenario.hpp"
#include "tannery/report/shards.hpp"
#ifdef TANNERY_HAVE_MPI
#include "tannery/base/sha256.hpp"
#include "tannery/sim/mpi_run.hpp"
#endif

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
  std::optional<double> checkpoint_seconds;
  std::string shard;
  std::optional<std::uint64_t> shard_frames, shard_errors;
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

// Everything a run needs, read and checked before any work starts.
struct Prepared {
  SimulateOptions o;
  RunRecord previous;
  std::optional<ShardRecord> previous_shard;  // --resume of a shard file
  SimulationConfig config;
  std::unique_ptr<Code> code;
  std::unique_ptr<Simulator> sim;
  RunRecord record;
};

Prepared prepare(SimulateOptions o, const CLI::App& sub, unsigned default_threads) {
  Prepared p;
  SimulationConfig& config = p.config;
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
    const std::string text = read_text_file(o.resume);
    if (is_shard_json(text)) {
      p.previous_shard = parse_shard_json(text, o.resume);
      p.previous = p.previous_shard->run;
    } else {
      p.previous = parse_results_json(text, o.resume);
    }
    config = p.previous.config;
    CodeInput recorded_input = o.input;
    recorded_input.code = p.previous.code.path;
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
  if (!o.shard.empty() || (!o.resume.empty() && p.previous_shard)) {
    // A shard writes its shard file only: results, CSV and plots come from tannery merge.
    if ((sub.get_option("--plot")->count() > 0 && !o.plot.empty()) || !o.csv.empty())
      throw Error(
          "a shard writes only its shard file: merge the shards (tannery merge) for the "
          "results, CSV and plot");
    o.plot.clear();
    if (o.output == "tannery-run.json" && !o.shard.empty()) {
      const auto slash = o.shard.find('/');
      o.output = "tannery-shard-" + o.shard.substr(0, slash) +
                 (slash == std::string::npos ? "" : "-of-" + o.shard.substr(slash + 1)) + ".json";
    }
  }
  check_plot_path(o.plot);
  check_paths({{"--code", o.input.code}, {"--scenario", o.scenario}},
              {{"--output", o.output},
               {"--csv", o.csv},
               {"--plot", o.plot},
               {"--failures", o.save_failures ? o.failures : ""},
               {"--replay-llr", o.replay_llr}});
  if (o.checkpoint_seconds && *o.checkpoint_seconds > 0 && o.output.empty())
    throw Error("--checkpoint-seconds needs a results file (--output)");
  config.threads = o.threads ? o.threads : default_threads;  // 0: the simulator takes every core
  config.keep_failures = o.save_failures;

  p.code = std::make_unique<Code>(o.input.load());
  p.sim = std::make_unique<Simulator>(*p.code, config);
  p.record = new_run_record(o.input.code, *p.code, *p.sim);
  if (!o.resume.empty()) p.record.code.source = p.previous.code.source;
  if (!o.resume.empty() && p.record.code.matrix_sha256 != p.previous.code.matrix_sha256) {
    throw Error(fmt::format("resume: {} no longer holds the matrix the run used (SHA-256 differs)",
                            o.input.code));
  }
  p.o = std::move(o);
  return p;
}

// Rewrites the results file with the in-order totals so far, at most every `interval` seconds
// and at once when a stop is asked for (a launcher may kill the job a second later): what a
// resumed run continues from if this one dies.
class Checkpoint {
 public:
  Checkpoint(const RunRecord& base, std::string path, double interval)
      : base_(base), path_(std::move(path)), interval_(interval) {}

  void update(const Progress& p) {
    if (path_.empty() || interval_ <= 0) return;
    const auto now = std::chrono::steady_clock::now();
    const bool stopping = g_interrupted.load() && !saved_on_stop_;
    if (!stopping && std::chrono::duration<double>(now - last_).count() < interval_) return;
    last_ = now;
    saved_on_stop_ = saved_on_stop_ || stopping;
    RunRecord r = base_;
    r.points.assign(p.earlier.begin(), p.earlier.end());
    r.points.push_back(p.totals);
    r.points.back().complete = false;
    r.points.back().stop_reason = "checkpoint";
    r.points.back().seconds = p.seconds;
    r.interrupted = true;
    try {
      write_file_atomically(path_, results_json(r));
    } catch (const Error& e) {
      if (!warned_) fmt::print(stderr, "tannery: warning: checkpoint not written: {}\n", e.what());
      warned_ = true;
    }
  }

 private:
  const RunRecord& base_;
  std::string path_;
  double interval_;
  std::chrono::steady_clock::time_point last_ = std::chrono::steady_clock::now();
  bool saved_on_stop_ = false, warned_ = false;
};

// The run on this process, alone or as rank 0 of an MPI job (remote then deals chunks to the
// other ranks): progress, checkpoints, the outputs and the summary.
void run_sweep(Prepared& p, RemoteChunks* remote, unsigned ranks, double checkpoint_seconds,
               const std::function<void()>& after_summary = {}) {
  const SimulateOptions& o = p.o;
  Simulator& sim = *p.sim;
  RunRecord& record = p.record;
  if (!o.quiet) print_heading(record);
  const auto start = std::chrono::steady_clock::now();
  {
    ProgressLine line(!o.quiet && isatty(STDERR_FILENO), sim.config(), ranks);
    Checkpoint checkpoint(record, o.output, checkpoint_seconds);
    record.points = sim.run(
        p.previous.points,
        [&](const Progress& progress) {
          line.update(progress);
          checkpoint.update(progress);
        },
        &g_interrupted, remote);
  }
  const double wall =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  record.interrupted = !record.points.empty() && !record.points.back().complete;
  write_outputs(record, o.output, o.csv, o.plot);
  if (!o.quiet) print_summary(record, wall, sim.lane_use(), o.output);
  if (after_summary) after_summary();
  if (!o.quiet) {
    for (const auto* f : {&o.output, &o.csv, &o.plot}) {
      if (!f->empty()) fmt::print("wrote {}\n", *f);
    }
  }
  if (o.save_failures > 0) {
    const FailureCapture kept = failure_capture(sim.kept_frames(), p.config.sweep);
    write_file_atomically(o.failures, kept.llr_bytes);
    write_file_atomically(o.failures + ".txt", kept.index);
    if (!o.quiet) {
      fmt::print(
          "saved {} failing frames' channel LLRs to {} (float32, n = {} per frame; index in "
          "{}.txt)\n",
          sim.kept_frames().size(), o.failures, p.code->n(), o.failures);
    }
  }
}

// --replay POINT:FRAME.
void replay(const Prepared& p) {
  const std::string& text = p.o.replay;
  const auto colon = text.find(':');
  const auto point = parse_count(std::string_view(text).substr(0, colon));
  const auto frame = parse_count(
      colon == std::string::npos ? std::string_view() : std::string_view(text).substr(colon + 1));
  if (!point || !frame)
    throw Error(fmt::format("--replay expects POINT:FRAME (indices from 0), got '{}'", text));
  print_replay(*p.sim, *point, *frame, p.o.replay_llr);
}

// The shard --shard I/N asks for (or the resumed shard file holds), with its budget.
std::optional<ShardPlan> shard_plan(const Prepared& p) {
  const SimulateOptions& o = p.o;
  std::optional<ShardPlan> plan;
  if (p.previous_shard) plan = p.previous_shard->plan;
  if (!o.shard.empty()) {
    const auto slash = o.shard.find('/');
    const auto index = parse_count(std::string_view(o.shard).substr(0, slash));
    const auto count = slash == std::string::npos
                           ? std::nullopt
                           : parse_count(std::string_view(o.shard).substr(slash + 1));
    if (!index || !count || *count == 0 || *index >= *count || *count > 1'000'000)
      throw Error(fmt::format(
          "--shard expects I/N with 0 <= I < N <= 1000000 (shard I of N), got '{}'", o.shard));
    const ShardPlan asked = default_shard_plan(p.config.stop, static_cast<std::uint32_t>(*index),
                                               static_cast<std::uint32_t>(*count));
    if (plan && (plan->index != asked.index || plan->count != asked.count))
      throw Error(fmt::format("--shard {} differs from the resumed shard {}/{}", o.shard,
                              plan->index, plan->count));
    if (!plan) plan = asked;
  } else if (!plan && (o.shard_frames || o.shard_errors)) {
    throw Error("--shard-frames and --shard-errors need --shard I/N (or a shard file to resume)");
  }
  if (!plan) return plan;
  if (o.shard_frames) plan->frames = *o.shard_frames;
  if (o.shard_errors) plan->frame_errors = *o.shard_errors;
  if (plan->frames == 0 || plan->frame_errors == 0)
    throw Error("--shard-frames and --shard-errors must be at least 1");
  if (o.save_failures > 0)
    throw Error(
        "--save-failures does not work with shards: after merging, --replay POINT:FRAME "
        "regenerates any failed frame the results list");
  if (o.checkpoint_seconds.value_or(0) > 0)
    throw Error(
        "--checkpoint-seconds does not work with shards (a stopped shard saves its file "
        "on SIGINT/SIGTERM, and --resume continues it)");
  return plan;
}

// One shard of a run: its chunks of every point, written as a shard file for tannery merge.
void run_shard(Prepared& p, const ShardPlan& plan) {
  const SimulateOptions& o = p.o;
  if (o.output.empty()) throw Error("a shard needs its file (--output)");
  ShardRecord shard;
  shard.run = p.record;
  shard.plan = plan;
  if (!o.quiet) {
    print_heading(p.record);
    fmt::print(
        "shard {}/{}: chunks c = {} (mod {}) of every point, until {} frames or {} frame "
        "errors per point\n",
        plan.index, plan.count, plan.index, plan.count, plan.frames, plan.frame_errors);
  }
  {
    ProgressLine line(!o.quiet && isatty(STDERR_FILENO), p.sim->config());
    shard.points = p.sim->run_shard(
        plan, p.previous_shard ? p.previous_shard->points : std::vector<ShardPoint>{},
        [&](const Progress& progress) { line.update(progress); }, &g_interrupted);
  }
  for (const ShardPoint& point : shard.points) shard.run.points.push_back(point.totals);
  shard.run.interrupted = !shard.run.points.empty() && !shard.run.points.back().complete;
  write_file_atomically(o.output, shard_json(shard));
  if (!o.quiet) {
    fmt::print("\nthis shard's own chunks (merge every shard for the run's results):\n{}",
               results_table(shard.run));
    if (shard.run.interrupted) fmt::print("interrupted: continue with --resume {}\n", o.output);
    fmt::print("wrote {}\n", o.output);
  }
  if (shard.run.interrupted) throw CheckFailed{130};
}

// Ranks the environment of an MPI launcher announces (Open MPI, or PMI of MPICH and Slurm);
// 0 when not started by one.
unsigned launcher_ranks() {
  for (const char* name : {"OMPI_COMM_WORLD_SIZE", "PMI_SIZE"}) {
    if (const char* v = std::getenv(name)) {
      if (const auto n = parse_count(v))
        return static_cast<unsigned>(std::max<std::uint64_t>(*n, 1));
    }
  }
  return std::getenv("PMIX_RANK") ? 1 : 0;
}

#ifdef TANNERY_HAVE_MPI
// A fingerprint of what a rank is about to run (settings, code matrix, tool version), so ranks
// that read other files or run another build are found before any work.
std::string run_fingerprint(const RunRecord& record) {
  RunRecord r = record;
  r.created.clear();
  r.threads_used = 1;
  r.code.source.clear();
  r.code.path.clear();
  r.config.threads = 0;
  r.config.keep_failures = 0;
  return sha256_hex(results_json(r));
}

// The run as one rank of an MPI job.
void run_mpi(const SimulateOptions& o, const CLI::App& sub) {
  mpi::Session session;
  install_interrupt_handler();  // after MPI's own setup
  const int rank = session.rank();
  const unsigned threads =
      std::max(1u, std::thread::hardware_concurrency() /
                       static_cast<unsigned>(std::max(session.ranks_on_this_machine(), 1)));
  std::optional<Prepared> p;
  std::exception_ptr failed;
  try {
    if (!o.shard.empty())
      throw Error(
          "--shard is for independent jobs without MPI; under mpirun the ranks share one run");
    p.emplace(prepare(o, sub, threads));
    if (p->previous_shard)
      throw Error(fmt::format("--resume {}: a shard continues without MPI", o.resume));
  } catch (...) {
    failed = std::current_exception();
  }
  const auto statuses = session.agree(!failed, p ? run_fingerprint(p->record) : std::string());
  // What this rank must say about the setup ('' when nothing); each message is printed before
  // a barrier, since mpirun ends the whole job as soon as one rank exits with an error.
  auto error_of = [&] {
    try {
      std::rethrow_exception(failed);
    } catch (const std::exception& e) {
      return std::string(e.what());
    }
  };
  std::string message;
  bool stop = false;
  if (!statuses[0].ok) {  // every rank likely failed alike: rank 0 alone says why
    stop = true;
    if (rank == 0) message = error_of();
  }
  for (std::size_t r = 1; r < statuses.size() && !stop; ++r) {
    if (!statuses[r].ok) {
      stop = true;
      if (static_cast<std::size_t>(rank) == r)
        message = fmt::format("rank {} ({}): {}", rank, session.host(), error_of());
      if (rank == 0)
        message = fmt::format("rank {} could not start the run (its error is printed too)", r);
    } else if (statuses[r].fingerprint != statuses[0].fingerprint) {
      stop = true;
      if (rank == 0) {
        message = fmt::format(
            "rank {} would run other settings, another code or another build than rank 0: every "
            "rank must read the same files (same paths, same contents) with the same tannery",
            r);
      }
    }
  }
  if (stop) {
    if (!message.empty()) fmt::print(stderr, "tannery: error: {}\n", message);
    std::fflush(stderr);
    session.barrier();
    throw CheckFailed{2};
  }
  // Past setup, an error on one rank ends every rank.
  try {
    if (!o.replay.empty()) {
      if (rank == 0) replay(*p);
      return;
    }
    p->record.threads_used = static_cast<unsigned>(session.sum(p->config.threads));
    p->record.ranks_used = static_cast<unsigned>(session.size());
    if (rank != 0) {
      mpi::serve(session, *p->sim, p->sim->config().threads, &g_interrupted);
      if (g_interrupted) throw CheckFailed{130};
      return;
    }
    mpi::Coordinator coordinator(session, &g_interrupted);
    // The other ranks are released once the sweep is over; rank 0's figures go under the
    // summary.
    run_sweep(*p, session.size() > 1 ? &coordinator : nullptr,
              static_cast<unsigned>(session.size()), o.checkpoint_seconds.value_or(300), [&] {
                coordinator.finish();
                if (o.quiet) return;
                const mpi::CoordinatorFigures& f = coordinator.figures();
                fmt::print(
                    "ranks: {} ({}); rank 0 took {} chunks from the others in {} "
                    "messages, {:.2f} us of its time per chunk\n",
                    session.size(), count_of(p->record.threads_used, "thread"), f.remote_chunks,
                    f.messages, f.microseconds_per_chunk());
              });
    coordinator.finish();
  } catch (const CheckFailed&) {
    throw;
  } catch (const std::exception& e) {
    fmt::print(stderr, "tannery: error: rank {}: {}\n", rank, e.what());
    std::fflush(stderr);
    session.abort(2);
  }
  if (p->record.interrupted) throw CheckFailed{130};
}
#endif

void run(const SimulateOptions& o, const CLI::App& sub) {
  if (launcher_ranks() > 0) {
#ifdef TANNERY_HAVE_MPI
    return run_mpi(o, sub);
#else
    if (launcher_ranks() > 1) {
      throw Error(
          "started by an MPI launcher, but this tannery was built without MPI: every process would "
          "run the whole simulation; rebuild with libopenmpi-dev installed (TANNERY_MPI)");
    }
#endif
  }
  Prepared p = prepare(o, sub, 0);
  if (!o.replay.empty()) return replay(p);
  if (const auto plan = shard_plan(p)) return run_shard(p, *plan);
  run_sweep(p, nullptr, 1, o.checkpoint_seconds.value_or(0));
  if (p.record.interrupted) throw CheckFailed{130};
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
      "  mpirun -np 8 tannery simulate --scenario sims/qc-sum-product.toml   # one run, 8 ranks\n"
      "  tannery simulate --scenario sims/qc-sum-product.toml --shard 3/16   # job array task 3\n"
      "Counts are identical for any --threads and any number of MPI ranks, and merged shards "
      "equal\n"
      "a single run: frames are pure functions of (seed, point, frame).");
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
  sub->add_option("--checkpoint-seconds", o->checkpoint_seconds,
                  "rewrite the results file with the totals so far at most every T seconds, for "
                  "--resume after a crash (default: 300 under mpirun, 0 = never otherwise)")
      ->check(kNonNegative);
  auto* shards = sub->add_option_group("shards", "Independent jobs (job arrays, no MPI)");
  shards->add_option("--shard", o->shard,
                     "compute only chunks c = I (mod N) of each point and write a shard file "
                     "(default tannery-shard-I-of-N.json) for tannery merge, I/N with 0 <= I < N");
  shards
      ->add_option("--shard-frames", o->shard_frames,
                   "a shard's frames per point (default: max frames / N)")
      ->check(kNonNegative);
  shards
      ->add_option("--shard-errors", o->shard_errors,
                   "a shard's frame errors per point before it moves on (default: E/N + "
                   "2 sqrt(E/N) + 2 for the run's frame-error target E)")
      ->check(kNonNegative);
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
