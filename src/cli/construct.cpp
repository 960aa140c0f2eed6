// tannery construct KIND -o FILE: build a parity-check matrix.
#include <fmt/format.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <sstream>

#include "commands.hpp"
#include "settings_options.hpp"
#include "stage_line.hpp"
#include "tannery/base/output_file.hpp"
#include "tannery/code/analysis.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/error.hpp"
#include "tannery/floor/search.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/parse.hpp"
#include "tannery/theory/density_evolution.hpp"
#include "tannery/theory/protograph.hpp"

namespace tannery::cli {

namespace {

struct ConstructOptions {
  std::string kind;
  std::string output;
  std::string to;
  std::uint64_t seed = 1;
  std::size_t length = 0;
  std::size_t variable_degree = 3;
  std::size_t check_degree = 0;
  double rate = 0.5;
  std::string base;
  std::string lifting;
  int passes = 20, restarts = 4;
  bool encodable = false;
  bool trapping_sets = false;
  std::string puncture_output;
  std::string variable_degrees;
  // protograph search
  ProtographSearchSettings search;
  std::string start;
  bool quiet = false;
};

// The command line that repeats a search exactly (the rounds fixed).
std::string search_command(const ConstructOptions& o, std::size_t rounds) {
  const ProtographSearchSettings& s = o.search;
  std::string line = "tannery construct protograph";
  if (o.start.empty()) {
    line += fmt::format(" --rate {} --rows {}", o.rate, s.rows);
    if (s.punctured) line += fmt::format(" --punctured {}", s.punctured);
  } else {
    line += fmt::format(" --start {}", o.start);
  }
  line += fmt::format(" --max-multiplicity {}", s.max_multiplicity);
  if (s.encodable) line += " --encodable";
  if (s.max_variable_degree)
    line += fmt::format(" --max-variable-degree {}", s.max_variable_degree);
  if (s.min_weight) line += fmt::format(" --min-weight {}", s.min_weight);
  return line +
         fmt::format(" --steps {} --rounds {} --seed {} -o {}", s.steps, rounds, s.seed, o.output);
}

void run_protograph_search(ConstructOptions o) {
  o.search.rate = o.rate;
  if (!o.start.empty())
    o.search.start = parse_protograph(read_text_file(o.start, 1 << 24), o.start);
  StageLine line(!o.quiet && isatty(STDERR_FILENO));
  const auto started = std::chrono::steady_clock::now();
  const ProtographSearchResult r =
      search_protograph(o.search, [&](std::size_t rounds, std::size_t evaluations, double best) {
        line.show(
            fmt::format("{} rounds, {} candidates, best {:.4f} dB", rounds, evaluations, best));
      });
  line.finish();
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  const ThresholdResult& t = r.threshold;
  const std::string summary = fmt::format(
      "# {} x {} protograph, design rate {:.6g}: protograph EXIT threshold Eb/N0 = {:.4f} dB "
      "(sigma {:.5f}), Shannon limit {:.4f} dB, gap {:.4f} dB{}\n# made by: {}\n",
      r.best.rows, r.best.cols, t.rate, t.ebn0_db, t.threshold, t.ebn0_db - t.gap_db, t.gap_db,
      o.search.encodable
          ? fmt::format("; encodable weight bound {}", encodable_weight_bound(r.best))
          : std::string(),
      search_command(o, r.rounds));
  const std::string text = summary + protograph_text(r.best);
  write_file_atomically(o.output, text);
  if (o.output == "-") return;
  fmt::print("{}", text);
  fmt::print("search: {} rounds of {} steps, {} candidates in {:.1f} s; best from round {}\n",
             r.rounds, o.search.steps, r.evaluations, seconds, r.best_round + 1);
  if (r.start_threshold) {
    fmt::print("start {} had {:.4f} dB (gap {:.4f} dB): {:.4f} dB better\n", o.start,
               r.start_threshold->ebn0_db, r.start_threshold->gap_db,
               r.start_threshold->ebn0_db - t.ebn0_db);
  }
  fmt::print(stderr, "wrote {}\n", o.output);
}

// --trapping-sets: the candidate the floor search prefers becomes the lifting; the note says
// what it found, and what the candidate with the fewest cycles had.
std::string choose_by_trapping_sets(Lifting& lift) {
  const LiftingChoice choice = choose_lifting_by_floor(lift);
  auto text = [](const FloorScore& s) {
    std::string out = s.codeword ? fmt::format("codewords from weight {}", s.codeword)
                                 : std::string("no codeword found");
    if (s.smallest.a != UINT32_MAX)
      out += fmt::format(", smallest absorbing set ({}, {}) x {}", s.smallest.a, s.smallest.b,
                         s.count);
    return out;
  };
  return fmt::format(
      "; floor search over {} candidate liftings chose number {}: {} (the one with fewest "
      "cycles: {})",
      choice.scores.size(), choice.chosen + 1, text(choice.scores[choice.chosen]),
      text(choice.scores[0]));
}

Code build(const ConstructOptions& o, std::string& note) {
  auto need_length = [&] {
    if (o.length == 0) throw Error(fmt::format("construct {} needs --length", o.kind));
    return o.length;
  };
  if (o.kind == "regular") {
    std::size_t dc = o.check_degree;
    if (dc == 0) {
      const double exact = static_cast<double>(o.variable_degree) / (1.0 - o.rate);
      dc = static_cast<std::size_t>(std::llround(exact));
      if (o.rate <= 0 || o.rate >= 1 || std::abs(exact - static_cast<double>(dc)) > 1e-9) {
        throw Error(fmt::format(
            "rate {} with variable degree {} gives no integer check degree; pass --check-degree",
            o.rate, o.variable_degree));
      }
    }
    return construct_regular(need_length(), o.variable_degree, dc, o.seed);
  }
  if (o.kind == "peg") {
    const std::size_t n = need_length();
    if (!(o.rate > 0 && o.rate < 1)) throw Error("--rate must be in (0, 1)");
    const auto m = static_cast<std::size_t>(std::llround(static_cast<double>(n) * (1 - o.rate)));
    const std::vector<std::size_t> degrees =
        o.variable_degrees.empty()
            ? std::vector<std::size_t>(n, o.variable_degree)
            : degree_sequence(parse_degree_map(o.variable_degrees, "--variable-degrees"), n);
    return construct_peg(degrees, m, o.seed);
  }
  if (o.kind == "hamming") {
    const std::size_t n = need_length();
    std::size_t r = 0;
    while ((std::size_t{1} << r) - 1 < n) ++r;
    if ((std::size_t{1} << r) - 1 != n)
      throw Error(fmt::format("Hamming length must be 2^r - 1, got {}", n));
    return construct_hamming(r);
  }
  if (o.kind == "repetition") return construct_repetition(need_length());
  if (o.kind == "parity") return construct_single_parity(need_length());
  // lift
  if (o.base.empty() || o.lifting.empty())
    throw Error("construct lift needs --base FILE and --lifting Z (or Z1,Z2,... in steps)");
  std::vector<std::size_t> steps;
  std::stringstream items(o.lifting);
  for (std::string item; std::getline(items, item, ',');) {
    const auto z = parse_count(item);
    if (!z || *z < 2 || *z > (1u << 20))
      throw Error(fmt::format("--lifting: '{}' is not a lifting size 2..{}", item, 1u << 20));
    steps.push_back(static_cast<std::size_t>(*z));
  }
  const Protograph base = parse_protograph(read_text_file(o.base, 1 << 24), o.base);
  const std::size_t t = *std::max_element(base.cells.begin(), base.cells.end());
  if (t == 0) throw Error(fmt::format("{}: the base graph has no edge", o.base));
  if (steps[0] % t != 0) {
    throw Error(
        fmt::format("multiplicities up to {} need a first lifting size divisible by {} (got {})", t,
                    t, steps[0]));
  }
  std::vector<ParitySystem> systems;
  if (o.encodable) {
    const std::string why = protograph_design_violation(base, true);
    if (!why.empty()) throw Error(fmt::format("{}: --encodable: {}", o.base, why));
    ParitySystem s;
    for (std::size_t k = 0; k < base.rows; ++k) {
      s.rows.push_back(k);
      s.cols.push_back(base.cols - base.rows + k);
    }
    systems = expand_parity_systems({s}, t);
  }
  steps[0] /= t;  // the split into t copies is the first factor's part
  std::size_t rows = base.rows * t, cols = base.cols * t;
  std::vector<std::uint8_t> pattern = split_multiplicities(base.rows, base.cols, base.cells, t);
  LiftOptions options;
  options.passes = o.passes;
  options.restarts = o.restarts;
  Lifting lift;
  for (std::size_t k = 0; k < steps.size(); ++k) {
    const bool last = k + 1 == steps.size();
    LiftOptions step = o.encodable ? parity_lift_options(systems, cols, last) : options;
    step.passes = options.passes;
    step.restarts = options.restarts;
    step.require_no_four_cycles = last;
    if (last && o.trapping_sets) step.candidates = static_cast<std::size_t>(o.restarts) + 1;
    lift = lift_base_graph(rows, cols, pattern, steps[k], o.seed + k, step);
    if (last) break;
    const Code stage = Code::from_quasi_cyclic(lift.base);
    pattern.assign(stage.m() * stage.n(), 0);
    for (std::size_t c = 0; c < stage.m(); ++c)
      for (std::uint32_t v : stage.check_variables(c)) pattern[c * stage.n() + v] = 1;
    rows = stage.m();
    cols = stage.n();
    if (o.encodable) systems = expand_parity_systems(systems, steps[k]);
  }
  const std::string chosen = o.trapping_sets ? choose_by_trapping_sets(lift) : std::string();
  note = fmt::format(
      "; block cycle conditions closed (4/6/8): {}/{}/{}{}{}{}", lift.closed[0], lift.closed[1],
      lift.closed[2],
      t > 1 ? fmt::format("; parallel edges split by copying the base {} times", t) : std::string(),
      o.encodable
          ? fmt::format("; d_min <= {} (encodable weight bound)", encodable_weight_bound(base))
          : std::string(),
      chosen);
  Code code = Code::from_quasi_cyclic(lift.base);
  if (!o.puncture_output.empty()) {
    if (base.punctured.empty())
      throw Error(fmt::format("--puncture-output: {} punctures no column", o.base));
    const std::size_t per_column = code.n() / base.cols;
    std::string text =
        fmt::format("# punctured columns of {} lifted by {}\npunctured", o.base, o.lifting);
    for (std::size_t j : base.punctured)
      text += fmt::format(" {}-{}", j * per_column, (j + 1) * per_column - 1);
    write_file_atomically(o.puncture_output, text + "\n");
  }
  return code;
}

}  // namespace

void add_construct(CLI::App& app) {
  auto o = std::make_shared<ConstructOptions>();
  auto* sub =
      app.add_subcommand("construct", "Build a parity-check matrix (deterministic for a seed)");
  sub->footer(
      "Examples:\n"
      "  tannery construct regular --length 2016 --variable-degree 3 --check-degree 6 --seed 7 -o "
      "my.tanner\n"
      "  tannery construct lift --base pattern.dense --lifting 54 -o my.qc\n"
      "  tannery construct hamming --length 15 -o h15.tanner\n"
      "  tannery construct protograph --rate 0.5 --rows 3 --punctured 1 --budget 60 -o "
      "design.proto\n"
      "  tannery construct peg --length 1008 --rate 0.5 --variable-degrees 2:0.5,3:0.3,8:0.2 "
      "--seed 3 -o peg.alist");
  sub->add_option("KIND", o->kind,
                  "regular: random (dv,dc)-regular code without 4-cycles; peg: progressive edge "
                  "growth; lift: quasi-cyclic lifting of a base graph; protograph: search for a "
                  "protograph of low threshold (writes the base table); hamming, repetition, "
                  "parity: classic codes")
      ->required()
      ->check(CLI::IsMember(
          {"peg", "regular", "lift", "protograph", "hamming", "repetition", "parity"}));
  sub->add_option("-o,--output", o->output, "output file ('-' = stdout)")->required();
  sub->add_option("--to", o->to, "output format (default: from the extension)")
      ->check(names_of<MatrixFormat>());
  sub->add_option("--seed", o->seed, "seed of the construction")->capture_default_str();
  // Bounded before anything is built: a negative or huge count would wrap or never finish.
  sub->add_option("--length", o->length, "code length n (bits)")
      ->check(CLI::Range(1.0, static_cast<double>(kMaxCodeDimension)));
  sub->add_option("--variable-degree", o->variable_degree, "variable-node degree dv (regular)")
      ->check(CLI::Range(1.0, 1000.0))
      ->capture_default_str();
  sub->add_option("--variable-degrees", o->variable_degrees,
                  "peg: irregular variable degrees as node fractions DEGREE:FRACTION,... (e.g. "
                  "2:0.5,3:0.3,8:0.2)");
  sub->add_option("--check-degree", o->check_degree,
                  "check-node degree dc (regular; default from --rate)")
      ->check(CLI::Range(2.0, 1000.0));
  sub->add_option("--rate", o->rate,
                  "design rate 1 - dv/dc (regular, when --check-degree is not given)")
      ->capture_default_str();
  sub->add_option("--base", o->base,
                  "base graph to lift: a table of 0/1 or edge multiplicities, a row per line");
  sub->add_option("--lifting", o->lifting,
                  "lifting size Z (circulant size) for lift, or Z1,Z2,... to lift in steps (the "
                  "code's length is the base's times their product; circulants of the last size)");
  sub->add_option("--passes", o->passes,
                  "lift: coordinate-descent passes over the shifts (0: the greedy pass alone)")
      ->capture_default_str()
      ->check(CLI::Range(0, 1000));
  sub->add_option("--restarts", o->restarts, "lift: random starts besides the greedy one")
      ->capture_default_str()
      ->check(CLI::Range(0, 1000));
  sub->add_flag("--encodable", o->encodable,
                "protograph: fix the last M columns to an encodable parity part (a weight-3 "
                "column, then a dual diagonal; M >= 4); lift: lift that part so that peeling "
                "encodes the code in linear time");
  sub->add_flag("--trapping-sets", o->trapping_sets,
                "lift: run the floor search (single impulses) on each start's result and keep the "
                "one with the largest smallest codeword, then absorbing set");
  sub->add_option("--puncture-output", o->puncture_output,
                  "lift: write the punctured positions of the lifted code (a puncture map for "
                  "simulate) for the base's punctured columns");
  auto* design = sub->add_option_group("protograph search");
  design->add_option("--rows", o->search.rows, "check types M of the protograph")
      ->capture_default_str()
      ->check(CLI::Range(1, 64));
  design
      ->add_option("--max-multiplicity", o->search.max_multiplicity,
                   "largest base entry T (parallel edges)")
      ->capture_default_str()
      ->check(CLI::Range(1, 16));
  design
      ->add_option("--punctured", o->search.punctured,
                   "punctured variable types (the first columns); columns N = (M - R P) / (1 - R)")
      ->capture_default_str()
      ->check(CLI::Range(0, 64));
  design
      ->add_option("--max-variable-degree", o->search.max_variable_degree,
                   "largest column degree allowed (0: no bound); low bounds suit short codes, "
                   "whose cycles high degrees crowd")
      ->capture_default_str()
      ->check(CLI::Range(0, 1000));
  design
      ->add_option("--min-weight", o->search.min_weight,
                   "with --encodable: smallest bound allowed on the weight of the codewords one "
                   "information bit makes in any lifting (0: no bound); long codes need it large")
      ->capture_default_str()
      ->check(CLI::Range(0, 100000));
  design
      ->add_option("--budget", o->search.budget_seconds,
                   "seconds: rounds start until this much time has passed (ignored with --rounds)")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 1e6));
  design
      ->add_option("--rounds", o->search.rounds,
                   "annealing rounds, fixed (the result then depends only on the seed)")
      ->check(CLI::Range(1, 1000000));
  design->add_option("--steps", o->search.steps, "candidates evaluated per round")
      ->capture_default_str()
      ->check(CLI::Range(1, 1000000));
  design->add_option("--start", o->start,
                     "start every round from this protograph (its shape replaces --rate, --rows, "
                     "--punctured)");
  design->add_option("--threads", o->search.threads, "threads (0 = one per core)")
      ->capture_default_str();
  design->add_flag("-q,--quiet", o->quiet, "no progress line");
  sub->callback([o] {
    o->search.seed = o->seed;
    o->search.encodable = o->encodable;
    if (o->kind == "protograph") return run_protograph_search(*o);
    std::string note;
    const Code code = build(*o, note);
    MatrixFormat format = output_format(o->to, o->output);
    if (o->kind == "lift" && o->to.empty() && o->output == "-") format = MatrixFormat::qc;
    write_code_file(code, format, o->output);
    if (o->output != "-") {
      const CycleCensus cycles = cycle_census(code);
      fmt::print(stderr, "wrote {} ({} format): n = {}, m = {}, edges = {}, girth = {}{}\n",
                 o->output, name_of(format), code.n(), code.m(), code.edges(),
                 cycles.girth
                     ? fmt::format("{} ({} cycles of that length)", *cycles.girth, cycles.count)
                     : std::string("none"),
                 note);
    }
  });
}

}  // namespace tannery::cli
