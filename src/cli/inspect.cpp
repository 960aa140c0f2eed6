// tannery inspect CODE: size, rank, rate, degree distributions, girth, structure, distance.
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "tannery/code/analysis.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery::cli {

namespace {

struct InspectOptions {
  CodeInput input;
  bool json = false;
  std::size_t max_dimension = 24;
  std::string dot;
  bool no_cycle = false;
};

// Writes the Tanner graph for Graphviz; a .svg name is rendered with `dot` when installed.
void write_dot(const InspectOptions& o, const Code& code) {
  if (code.n() + code.m() > 2000) {
    throw Error(fmt::format("--dot draws codes of at most 2000 nodes; this one has {}",
                            code.n() + code.m()));
  }
  const std::string text =
      tanner_dot(code, o.no_cycle ? std::vector<CycleNode>{} : shortest_cycle(code));
  if (!o.dot.ends_with(".svg")) return write_file_atomically(o.dot, text);
  OutputFile out(o.dot, false);
  const int status = run_converter({"dot", "-Tsvg"}, text, out);
  if (status == -1) {
    const std::string source = o.dot + ".dot";
    write_file_atomically(source, text);
    throw Error(fmt::format(
        "Graphviz 'dot' is not installed (apt-get install graphviz); wrote {} instead", source));
  }
  if (status != 0) throw Error(fmt::format("{}: Graphviz failed", o.dot));
  out.commit();
}

struct Report {
  Code code;
  Encoder encoder;
  DegreeProfile degrees;
  CycleCensus cycles;
  RowRedundancy redundancy;
  std::optional<std::vector<std::uint64_t>> enumerator;
  std::optional<std::size_t> distance;
};

nlohmann::json degree_json(const std::map<std::size_t, std::size_t>& counts) {
  nlohmann::json j = nlohmann::json::object();
  for (auto [d, c] : counts) j[std::to_string(d)] = c;
  return j;
}
nlohmann::json edge_fraction_json(const std::map<std::size_t, std::size_t>& counts,
                                  std::size_t edges) {
  nlohmann::json j = nlohmann::json::object();
  for (auto [d, c] : counts) {
    if (d > 0) j[std::to_string(d)] = static_cast<double>(d * c) / static_cast<double>(edges);
  }
  return j;
}

void print_json(const InspectOptions& o, const Report& r) {
  const Code& code = r.code;
  nlohmann::json j;
  j["source"] = o.input.code;
  j["n"] = code.n();
  j["m"] = code.m();
  j["rank"] = r.encoder.rank();
  j["k"] = r.encoder.k();
  j["rate"] = code.n() ? static_cast<double>(r.encoder.k()) / static_cast<double>(code.n()) : 0.0;
  j["design_rate"] =
      code.n() ? 1.0 - static_cast<double>(code.m()) / static_cast<double>(code.n()) : 0.0;
  j["edges"] = code.edges();
  j["density"] = code.n() && code.m()
                     ? static_cast<double>(code.edges()) / static_cast<double>(code.n() * code.m())
                     : 0.0;
  j["variable_degrees"] = degree_json(r.degrees.variable);
  j["check_degrees"] = degree_json(r.degrees.check);
  j["lambda"] = edge_fraction_json(r.degrees.variable, code.edges());
  j["rho"] = edge_fraction_json(r.degrees.check, code.edges());
  j["girth"] = r.cycles.girth ? nlohmann::json(*r.cycles.girth) : nlohmann::json(nullptr);
  j["shortest_cycles"] = r.cycles.girth ? nlohmann::json(r.cycles.count) : nlohmann::json(nullptr);
  j["redundant_rows"] = code.m() - r.encoder.rank();
  j["empty_rows"] = r.redundancy.empty;
  j["repeated_rows"] = nlohmann::json::array();
  for (auto [a, b] : r.redundancy.repeated) j["repeated_rows"].push_back({a, b});
  j["min_distance"] = r.distance ? nlohmann::json(*r.distance) : nlohmann::json(nullptr);
  j["weight_enumerator"] = r.enumerator ? nlohmann::json(*r.enumerator) : nlohmann::json(nullptr);
  if (const auto& qc = code.quasi_cyclic()) {
    j["quasi_cyclic"] = {
        {"block_rows", qc->block_rows}, {"block_cols", qc->block_cols}, {"lifting", qc->lifting}};
  } else {
    j["quasi_cyclic"] = nullptr;
  }
  // Where encode and decode put the information bits by default, all k of them; and whether
  // positions 0..k-1 could carry them instead (--systematic-first).
  j["info_positions"] = r.encoder.info_positions();
  bool first = true;
  try {
    (void)make_encoder(code, true);
  } catch (const Error&) {
    first = false;
  }
  j["systematic_first_possible"] = first;
  fmt::print("{}\n", j.dump(2));
}

std::string degree_lines(const std::map<std::size_t, std::size_t>& counts, std::size_t nodes,
                         std::size_t edges, const char* symbol) {
  std::string out;
  for (auto [d, c] : counts) {
    out += fmt::format("  {:>4}  {:>9} nodes  {:6.2f}% of nodes  {}_{} = {:.6f}\n", d, c,
                       nodes ? 100.0 * static_cast<double>(c) / static_cast<double>(nodes) : 0.0,
                       symbol, d,
                       edges ? static_cast<double>(d * c) / static_cast<double>(edges) : 0.0);
  }
  return out;
}

std::string polynomial(const std::vector<std::uint64_t>& a) {
  std::string out;
  for (std::size_t w = 0; w < a.size(); ++w) {
    if (a[w] == 0) continue;
    if (!out.empty()) out += " + ";
    if (w == 0)
      out += fmt::format("{}", a[w]);
    else
      out += fmt::format("{}{}", a[w] == 1 ? "" : fmt::format("{}", a[w]),
                         w == 1 ? "z" : fmt::format("z^{}", w));
  }
  return out;
}

void print_text(const InspectOptions& o, const Report& r) {
  const Code& code = r.code;
  const double n = static_cast<double>(code.n());
  std::string s;
  s += fmt::format("code           {}\n", o.input.code);
  s += fmt::format("length n       {}\nchecks m       {}\n", code.n(), code.m());
  s += fmt::format("rank           {}   ({} redundant rows)\n", r.encoder.rank(),
                   code.m() - r.encoder.rank());
  s += fmt::format("dimension k    {}\n", r.encoder.k());
  s += fmt::format("rate k/n       {:.6f}   design rate 1 - m/n = {:.6f}\n",
                   n > 0 ? static_cast<double>(r.encoder.k()) / n : 0.0,
                   n > 0 ? 1.0 - static_cast<double>(code.m()) / n : 0.0);
  s += fmt::format("edges          {}   density {:.6g}\n", code.edges(),
                   code.n() && code.m()
                       ? static_cast<double>(code.edges()) / (n * static_cast<double>(code.m()))
                       : 0.0);
  s += "variable degrees (node perspective; edge perspective lambda_d)\n";
  s += degree_lines(r.degrees.variable, code.n(), code.edges(), "lambda");
  s += "check degrees (node perspective; edge perspective rho_d)\n";
  s += degree_lines(r.degrees.check, code.m(), code.edges(), "rho");
  if (r.cycles.girth) {
    s += fmt::format("girth          {}   ({} cycles of length {})\n", *r.cycles.girth,
                     r.cycles.count, *r.cycles.girth);
  } else {
    s += "girth          none (the Tanner graph is a forest)\n";
  }
  if (const auto& qc = code.quasi_cyclic()) {
    s += fmt::format("quasi-cyclic   {} x {} base blocks, lifting size Z = {}\n", qc->block_rows,
                     qc->block_cols, qc->lifting);
  }
  // The text report names at most kListed rows of each kind (--json lists them all).
  constexpr std::size_t kListed = 20;
  const auto& empty = r.redundancy.empty;
  if (!empty.empty()) {
    const std::vector<std::size_t> head(
        empty.begin(),
        empty.begin() + static_cast<std::ptrdiff_t>(std::min(empty.size(), kListed)));
    s += fmt::format("empty rows     {}{}\n", fmt::join(head, " "),
                     empty.size() > kListed ? fmt::format(" ... ({} in all)", empty.size()) : "");
  }
  const auto& repeated = r.redundancy.repeated;
  for (std::size_t i = 0; i < repeated.size() && i < kListed; ++i)
    s += fmt::format("repeated row   {} repeats row {}\n", repeated[i].second, repeated[i].first);
  if (repeated.size() > kListed)
    s += fmt::format("repeated rows  {} in all (--json lists them)\n", repeated.size());
  if (r.enumerator) {
    s += r.distance ? fmt::format("min distance   {}\n", *r.distance)
                    : "min distance   none (k = 0)\n";
    s += fmt::format("weight enumerator  A(z) = {}\n", polynomial(*r.enumerator));
  } else {
    s += fmt::format("min distance   not computed (k = {} > {}; enumeration is exhaustive)\n",
                     r.encoder.k(), o.max_dimension);
  }
  fmt::print("{}", s);
}

void run(const InspectOptions& o) {
  Code code = o.input.load();
  Encoder encoder(code);
  Report r{std::move(code), std::move(encoder), {}, {}, {}, {}, {}};
  r.degrees = degree_profile(r.code);
  r.cycles = cycle_census(r.code);
  r.redundancy = row_redundancy(r.code);
  r.enumerator = weight_enumerator(r.code, r.encoder, o.max_dimension);
  if (r.enumerator) r.distance = minimum_distance(*r.enumerator);
  if (!o.dot.empty()) write_dot(o, r.code);
  if (o.json) {
    print_json(o, r);
  } else {
    print_text(o, r);
  }
}

}  // namespace

void add_inspect(CLI::App& app) {
  auto o = std::make_shared<InspectOptions>();
  auto* sub = app.add_subcommand(
      "inspect", "Structure of a code: rank, rate, degrees, girth, minimum distance");
  sub->footer(
      "Examples:\n  tannery inspect hamming-7-4\n  tannery inspect my-code.alist --json\n"
      "  tannery inspect hamming-7-4 --dot hamming.svg");
  o->input.add_to(*sub, true, kDefaultCode);
  sub->add_flag("--json", o->json, "print one JSON object instead of text");
  sub->add_option(
         "--max-dimension", o->max_dimension,
         "enumerate all 2^k codewords for the weight enumerator only when k is at most this (bits)")
      ->capture_default_str()
      ->check(CLI::Range(0, 30));
  sub->add_option("--dot", o->dot,
                  "write the Tanner graph for Graphviz (circles: variables, squares: checks; a "
                  "shortest cycle in red); a name ending in .svg is rendered with Graphviz");
  sub->add_flag("--no-cycle", o->no_cycle, "with --dot: do not highlight a shortest cycle");
  sub->callback([o] { run(*o); });
}

}  // namespace tannery::cli
