// tannery floor search|estimate: the small structures behind a code's error floor, and the floor's
// frame error rate by importance sampling.
#include <fmt/format.h>
#include <unistd.h>

#include <cstdio>
#include <numeric>

#include "commands.hpp"
#include "simulate_output.hpp"
#include "stage_line.hpp"
#include "tannery/error.hpp"
#include "tannery/floor/estimate.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/parse.hpp"
#include "tannery/report/structures.hpp"

namespace tannery::cli {

namespace {

struct SearchCommand {
  CodeInput input;
  DecoderOptions decoder;
  FloorSearchSettings settings;
  std::string amplitudes;
  std::vector<std::string> failures;
  std::string output;
  bool json = false, quiet = false;
};

void add_search_options(CLI::App& sub, SearchCommand& o) {
  sub.add_option("--amplitudes", o.amplitudes,
                 "impulse amplitudes, in signal units, increasing: the smallest that breaks the "
                 "decoder is found by bisection (default "
                 "2,3,4,5,6,7,8,10,12,14,16,20,24,32; the impulse bits' LLR is background * (1 - "
                 "A))");
  sub.add_option("--background", o.settings.background,
                 "channel LLR of the all-zero word's bits (2 = noiseless BPSK at sigma 1)")
      ->capture_default_str()
      ->check(CLI::Range(1e-3, 1e3));
  sub.add_option("--impulses", o.settings.impulse_order,
                 "1: single impulses; 2: also pairs of bits sharing a check; 0: pairs when n <= "
                 "4096")
      ->capture_default_str()
      ->check(CLI::Range(0, 2));
  sub.add_option("--local-steps", o.settings.search_steps,
                 "local-search steps from each trapping-set seed (0: none)")
      ->capture_default_str()
      ->check(CLI::Range(0, 100));
  sub.add_option("--beam", o.settings.search_beam, "sets the local search keeps per step")
      ->capture_default_str()
      ->check(CLI::Range(1, 10000));
  sub.add_option("--max-size", o.settings.max_size,
                 "largest structure classified (bits); larger failures are only counted")
      ->capture_default_str()
      ->check(CLI::Range(1, 1000));
  sub.add_option("--failures", o.failures,
                 "results files of simulations of this code: their failures' bit sets seed the "
                 "trapping-set search");
  sub.add_option("--seed", o.settings.seed, "seed of the background dither")->capture_default_str();
  sub.add_option("--threads", o.settings.threads, "threads (0 = one per core)")
      ->capture_default_str()
      ->check(kNonNegative);
}

FloorSearchResult run_search(const SearchCommand& o, const std::shared_ptr<const Code>& code,
                             FloorSearchSettings& s, bool progress_shown) {
  s.decoder = o.decoder.settings();
  if (!o.amplitudes.empty()) s.amplitudes = parse_sweep(o.amplitudes);
  const std::string sha = matrix_sha256(*code);
  for (const std::string& file : o.failures) {
    const RunRecord run = parse_results_json(read_text_file(file), file);
    if (run.code.matrix_sha256 != sha)
      throw Error(fmt::format("{}: simulates another code (matrix SHA-256 differs)", file));
    for (const auto& p : run.points) {
      for (const auto& [cls, count] : p.failure_classes) {
        for (const auto& set : count.examples) s.seeds.push_back(set);
      }
    }
  }
  StageLine line(progress_shown);
  FloorSearchResult r =
      floor_search(code, s, [&](std::uint64_t done, std::uint64_t total, const char* stage) {
        line.show(fmt::format("{} {}/{}", stage, done, total));
      });
  line.finish();
  return r;
}

std::string search_heading(const std::string& source, const Code& code,
                           const FloorSearchSettings& s, const FloorSearchResult& r) {
  return fmt::format(
      "code {}: n = {}, m = {}{}\ndecoder {}\n{} impulses ({}), {} decodes in {:.1f} s; {} never "
      "broke the decoder, {} failed on more than {} bits\n",
      source, code.n(), code.m(),
      r.lifting
          ? fmt::format("; quasi-cyclic, Z = {}: counts include every cyclic shift", r.lifting)
          : std::string(),
      describe(s.decoder), r.impulses, r.impulse_order == 2 ? "single and pairs" : "single",
      r.decodes, r.seconds, r.unbroken, r.larger_failures, s.max_size);
}

void search(const SearchCommand& o) {
  check_paths({{"CODE", o.input.code}}, {{"--output", o.output}});
  auto code = std::make_shared<const Code>(o.input.load());
  FloorSearchSettings s = o.settings;
  OutputFile out(o.output, false);
  const FloorSearchResult r = run_search(o, code, s, !o.quiet && isatty(STDERR_FILENO));
  const std::string json = structures_json(new_structures_record(o.input.code, *code, s, r));
  if (o.json) {
    fmt::print("{}", json);
  } else if (!o.quiet) {
    fmt::print("{}{}", search_heading(o.input.code, *code, s, r), structures_text(r));
  }
  if (out.enabled()) {
    out.write(json);
    out.commit();
    if (!o.json && !o.quiet) fmt::print("wrote {}\n", o.output);
  }
}

struct EstimateCommand {
  SearchCommand search;  // used when no --structures file is given
  std::string structures, sweep;
  FloorEstimateSettings settings;
  std::optional<double> shift;
  double confidence = 0.95;
  std::string output = "tannery-floor.json", csv, plot;
  bool quiet = false;
};

std::string estimate_table(const RunRecord& run, const std::vector<FloorEstimatePoint>& points,
                           double min_ess) {
  const int level = static_cast<int>(std::lround(run.config.confidence * 100));
  std::string out =
      fmt::format("{:>9} {:>11} {:>23} {:>10} {:>9} {:>8}  {}\n", "Eb/N0 dB", "FER",
                  fmt::format("{}% interval", level), "frames", "hits", "ESS", "verdict");
  for (const auto& fp : points) {
    const PointResult& p = fp.point;
    const ImportanceEstimate& e = *p.importance;
    const PointStats s = point_stats(p, run.config.confidence);
    std::uint64_t hits = 0;
    for (const auto& se : e.structures) hits += se.hits;
    out += fmt::format("{:>9.4g} {:>11.3e} [{:9.3e}, {:9.3e}] {:>10} {:>9} {:>8.1f}  {}\n",
                       p.parameter, e.fer, s.fer.low, s.fer.high, p.frames, hits, e.ess,
                       e.reliable  ? "lower estimate"
                       : e.fer > 0 ? fmt::format("UNRELIABLE (ESS below {:g})", min_ess)
                       : hits > 0  ? "UNRELIABLE (weights below double precision)"
                                   : "UNRELIABLE (no failure on a listed structure)");
    for (const auto& se : e.structures) {
      out += fmt::format(
          "{:>9} {:>11.3e}   ({}, {}) x{}, mean shift {:.3f}, {} hits of {}, ESS {:.1f}\n", "",
          se.fer, se.cls.a, se.cls.b, se.multiplicity,
          std::accumulate(se.shifts.begin(), se.shifts.end(), 0.0) /
              static_cast<double>(std::max<std::size_t>(se.shifts.size(), 1)),
          se.hits, se.frames, se.ess);
    }
    const auto breaking = std::count_if(fp.biases.begin(), fp.biases.end(),
                                        [](const StructureBias& b) { return b.shift.has_value(); });
    out += fmt::format("{:>9} {} of {} candidate structures break the decoder without noise\n", "",
                       breaking, fp.biases.size());
  }
  return out;
}

void estimate(EstimateCommand& o) {
  check_plot_path(o.plot);
  check_paths({{"CODE", o.search.input.code}, {"--structures", o.structures}},
              {{"--output", o.output}, {"--csv", o.csv}, {"--plot", o.plot}});
  if (o.sweep.empty()) throw Error("floor estimate needs --sweep (Eb/N0 values in dB)");
  FloorEstimateSettings s = o.settings;
  s.sweep = parse_sweep(o.sweep);
  s.shift = o.shift;
  s.decoder = o.search.decoder.settings();
  s.threads = o.search.settings.threads;
  s.seed = o.search.settings.seed;
  for (const auto* path : {&o.output, &o.csv, &o.plot}) {
    if (!path->empty()) OutputFile::check_creatable(*path);
  }
  auto code = std::make_shared<const Code>(o.search.input.load());
  const bool shown = !o.quiet && isatty(STDERR_FILENO);
  std::vector<FoundStructure> list;
  if (!o.structures.empty()) {
    list = parse_structures_json(read_text_file(o.structures), o.structures, *code).result.all();
  } else {
    FloorSearchSettings ss = o.search.settings;
    const FloorSearchResult r = run_search(o.search, code, ss, shown);
    if (!o.quiet) fmt::print("{}", search_heading(o.search.input.code, *code, ss, r));
    list = r.all();
    if (list.empty())
      throw Error(
          "floor estimate: the search found no structure to bias toward; try --impulses 2 "
          "or more --amplitudes");
  }
  if (!o.quiet) {
    fmt::print(
        "importance sampling: {} candidate structures, up to {} per point, {} biased frames "
        "each; decoder {}; seed {}\n",
        list.size(), s.max_structures, s.frames, describe(resolve_kernel(s.decoder, *code)),
        s.seed);
    std::fflush(stdout);
  }
  StageLine line(shown);
  const auto points = floor_estimate(
      code, list, s, [&](std::size_t point, std::uint64_t done, std::uint64_t total) {
        line.show(fmt::format("Eb/N0 {:g} dB: {}/{} biased frames", s.sweep[point], done, total));
      });
  line.finish();
  const RunRecord run = estimate_run_record(o.search.input.code, *code, s, o.confidence, points);
  write_outputs(run, o.output, o.csv, o.plot);
  if (!o.quiet) {
    fmt::print("\n{}", estimate_table(run, points, s.min_ess));
    fmt::print(
        "a lower estimate: only failures on the structures listed are counted (README, \"Error "
        "floors\")\n");
    for (const auto* f : {&o.output, &o.csv, &o.plot}) {
      if (!f->empty()) fmt::print("wrote {}\n", *f);
    }
  }
}

}  // namespace

void add_floor(CLI::App& app) {
  auto* floor = app.add_subcommand(
      "floor",
      "Error floors: the small structures that make a code fail, and its FER far below "
      "what plain simulation reaches");
  floor->require_subcommand(1);

  auto so = std::make_shared<SearchCommand>();
  auto* search_sub = floor->add_subcommand(
      "search", "Find low-weight codewords (error impulses) and trapping sets of a code");
  search_sub->footer(
      "Example:\n  tannery floor search regular-3-6-n2016 -o n2016-structures.json\n"
      "Counts are of structures found: lower bounds, and the smallest codeword weight an upper "
      "bound on d_min.");
  so->input.add_to(*search_sub, true, "");
  add_search_options(*search_sub, *so);
  so->decoder.add_to(*search_sub);
  search_sub->add_option("-o,--output", so->output, "structures file to write (JSON)");
  search_sub->add_flag("--json", so->json, "print the structures file's JSON instead of the table");
  search_sub->add_flag("-q,--quiet", so->quiet, "print nothing but errors");
  search_sub->callback([so] { search(*so); });

  auto eo = std::make_shared<EstimateCommand>();
  auto* est = floor->add_subcommand(
      "estimate", "FER in the error floor by importance sampling toward the code's structures");
  est->footer(
      "Example:\n  tannery floor estimate my.qc --structures my-structures.json --sweep 5,6,7 "
      "--plot floor.svg\n"
      "Without --structures the search runs first (its options apply). The estimate counts only "
      "failures on the structures used: a lower estimate of the FER.");
  eo->search.input.add_to(*est, true, "");
  add_search_options(*est, eo->search);
  eo->search.decoder.add_to(*est);
  est->add_option("--sweep", eo->sweep, "Eb/N0 values in dB: LIST or START:STEP:STOP")->required();
  est->add_option("--structures", eo->structures, "structures file from floor search");
  est->add_option("--frames", eo->settings.frames, "biased frames per structure and point")
      ->capture_default_str()
      ->check(CLI::Range(2.0, 1e12));
  est->add_option("--candidates", eo->settings.candidates,
                  "structures whose noiseless breaking shift is looked for, smallest (a + b) first")
      ->capture_default_str()
      ->check(CLI::Range(1, 1000000));
  est->add_option("--per-point", eo->settings.max_structures,
                  "structures sampled per point (the most likely ones)")
      ->capture_default_str()
      ->check(CLI::Range(1, 100000));
  est->add_option("--shift", eo->shift,
                  "one noise mean shift for every structure, in signal amplitudes (0 = no bias), "
                  "instead of each structure's own")
      ->check(CLI::Range(0.0, 10.0));
  est->add_option("--min-ess", eo->settings.min_ess,
                  "effective sample size below which a point is marked unreliable")
      ->capture_default_str()
      ->check(CLI::Range(1.0, 1e9));
  est->add_option("--confidence", eo->confidence, "level of the intervals")
      ->capture_default_str()
      ->check(CLI::Range(0.5, 0.999999));
  est->add_option("-o,--output", eo->output, "results file (JSON)")->capture_default_str();
  est->add_option("--csv", eo->csv, "the points as CSV");
  est->add_option("--plot", eo->plot, "plot of the estimate (.svg, .png or .pdf)");
  est->add_flag("-q,--quiet", eo->quiet, "print nothing but errors");
  est->callback([eo] { estimate(*eo); });
}

}  // namespace tannery::cli
