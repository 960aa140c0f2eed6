// tannery construct KIND -o FILE: build a parity-check matrix.
#include <fmt/format.h>
#include <algorithm>
#include <sstream>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/code/analysis.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/theory/density_evolution.hpp"

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
  std::size_t lifting = 0;
  std::string variable_degrees;
};

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
  if (o.base.empty() || o.lifting == 0)
    throw Error("construct lift needs --base FILE and --lifting Z");
  const Protograph base = parse_protograph(read_text_file(o.base, 1 << 24), o.base);
  const std::size_t rows = base.rows, cols = base.cols;
  const std::vector<std::uint8_t>& table = base.cells;
  const std::size_t t = *std::max_element(table.begin(), table.end());
  if (t == 0) throw Error(fmt::format("{}: the base graph has no edge", o.base));
  if (o.lifting % t != 0) {
    throw Error(
        fmt::format("multiplicities up to {} need a lifting size divisible by {} (got Z = {})", t,
                    t, o.lifting));
  }
  const Lifting lift = lift_base_graph(
      rows * t, cols * t, split_multiplicities(rows, cols, table, t), o.lifting / t, o.seed);
  note = fmt::format(
      " (the shifts avoid every block {}; girth >= {} claimed){}",
      lift.girth_at_least == 8 ? "4- and 6-cycle" : "4-cycle", lift.girth_at_least,
      t > 1 ? fmt::format(
                  "; parallel edges split by copying the base {} times, circulants of size {}", t,
                  o.lifting / t)
            : std::string());
  return Code::from_quasi_cyclic(lift.base);
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
      "  tannery construct peg --length 1008 --rate 0.5 --variable-degrees 2:0.5,3:0.3,8:0.2 "
      "--seed 3 -o peg.alist");
  sub->add_option("KIND", o->kind,
                  "regular: random (dv,dc)-regular code without 4-cycles; lift: quasi-cyclic "
                  "lifting of a 0/1 "
                  "base graph; hamming, repetition, parity: classic codes")
      ->required()
      ->check(CLI::IsMember({"peg", "regular", "lift", "hamming", "repetition", "parity"}));
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
  sub->add_option("--lifting", o->lifting, "lifting size Z (circulant size) for lift")
      ->check(CLI::Range(1.0, static_cast<double>(1 << 20)));
  sub->callback([o] {
    std::string note;
    const Code code = build(*o, note);
    MatrixFormat format = output_format(o->to, o->output);
    if (o->kind == "lift" && o->to.empty() && o->output == "-") format = MatrixFormat::qc;
    write_code_file(code, format, o->output);
    if (o->output != "-") {
      const CycleCensus cycles = cycle_census(code);
      fmt::print(stderr, "wrote {} ({} format): n = {}, m = {}, edges = {}, girth = {}{}\n",
                 o->output, name_of(format), code.n(), code.m(), code.edges(),
                 cycles.girth ? fmt::format("{}", *cycles.girth) : std::string("none"), note);
    }
  });
}

}  // namespace tannery::cli
