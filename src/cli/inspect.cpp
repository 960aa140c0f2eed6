// tannery inspect CODE: size, rank, rate, degree distributions, girth, structure, distance.
#include <fmt/format.h>
#include <cmath>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/channel/link.hpp"
#include "tannery/code/analysis.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/sim/simulator.hpp"
#include "tannery/theory/capacity.hpp"

namespace tannery::cli {

namespace {

struct InspectOptions {
  CodeInput input;
  bool json = false;
  std::size_t max_dimension = 24;
  std::string dot;
  bool no_cycle = false;
  std::optional<Modulation> modulation, points;
  std::string puncture;
};

// What the code becomes on a link: sent positions, symbols, rates and the capacity limits at its
// information bits per symbol (Eb/N0, dB; null when the rate is outside what the modulation
// carries).
nlohmann::json link_summary(const InspectOptions& o, const Code& code) {
  ChannelSpec spec;
  spec.modulation = o.modulation.value_or(Modulation{});
  const Link link(spec, o.puncture.empty() ? PunctureMap::all_sent(code.n())
                                           : read_puncture_map(o.puncture, code.n()));
  const Encoder encoder(code);
  check_shortening(link, encoder);
  const std::size_t k = encoder.k();
  const Constellation& c = link.constellation();
  const double per_symbol = link.snr_rate(k);
  nlohmann::json limits = nlohmann::json::object();
  for (ChannelKind channel : {ChannelKind::awgn, ChannelKind::rayleigh}) {
    for (CapacityKind kind : {CapacityKind::bicm, CapacityKind::coded_modulation}) {
      const bool fits = per_symbol > 0 && per_symbol < c.bits();
      limits[std::string(name_of(channel))][std::string(name_of(kind))] =
          fits ? nlohmann::json(modulation_shannon_limit_ebn0_db(c, kind, channel, per_symbol))
               : nlohmann::json(nullptr);
    }
  }
  const std::size_t shortened = link.shortened();
  return {{"modulation", SettingText<Modulation>::format(spec.modulation)},
          {"bits_per_symbol", c.bits()},
          {"sent", link.sent()},
          {"punctured", code.n() - link.sent() - shortened},
          {"shortened", shortened},
          {"symbols", link.symbols()},
          {"effective_rate",
           static_cast<double>(k - std::min(k, shortened)) / static_cast<double>(link.sent())},
          {"information_bits_per_symbol", per_symbol},
          {"shannon_limits_ebn0_db", limits}};
}

std::string link_text(const nlohmann::json& j) {
  std::string s = fmt::format(
      "link           {} ({} bits per symbol): {} positions sent, {} punctured, {} shortened\n"
      "               {} symbols per frame, effective rate {:.6f}, {:.6f} information bits per "
      "symbol\n",
      j["modulation"].get<std::string>(), j["bits_per_symbol"].get<unsigned>(),
      j["sent"].get<std::size_t>(), j["punctured"].get<std::size_t>(),
      j["shortened"].get<std::size_t>(), j["symbols"].get<std::size_t>(),
      j["effective_rate"].get<double>(), j["information_bits_per_symbol"].get<double>());
  const auto& limits = j["shannon_limits_ebn0_db"];
  auto limit = [&](const char* channel, const char* kind) {
    const auto& v = limits[channel][kind];
    return v.is_null() ? std::string("none") : fmt::format("{:.3f} dB", v.get<double>());
  };
  s += fmt::format(
      "Eb/N0 limits   awgn: BICM {}, coded modulation {}; rayleigh (ergodic): BICM {}, coded "
      "modulation {}\n",
      limit("awgn", "bicm"), limit("awgn", "coded-modulation"), limit("rayleigh", "bicm"),
      limit("rayleigh", "coded-modulation"));
  return s;
}

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

void print_text(const InspectOptions& o, const CodeReport& r) {
  const double n = static_cast<double>(r.n);
  std::string s;
  s += fmt::format("code           {}\n", o.input.code);
  s += fmt::format("length n       {}\nchecks m       {}\n", r.n, r.m);
  s += fmt::format("rank           {}   ({} redundant rows)\n", r.rank, r.m - r.rank);
  s += fmt::format("dimension k    {}\n", r.k);
  s += r.encoder_dense_checks == 0
           ? std::string("encoder        peeling alone: linear time\n")
           : fmt::format(
                 "encoder        peeling, then {} check{} solved densely over {} free "
                 "bit{}\n",
                 r.encoder_dense_checks, r.encoder_dense_checks == 1 ? "" : "s",
                 r.encoder_free_bits, r.encoder_free_bits == 1 ? "" : "s");
  s += fmt::format("rate k/n       {:.6f}   design rate 1 - m/n = {:.6f}\n", r.rate(),
                   r.design_rate());
  s +=
      fmt::format("edges          {}   density {:.6g}\n", r.edges,
                  r.n && r.m ? static_cast<double>(r.edges) / (n * static_cast<double>(r.m)) : 0.0);
  s += "variable degrees (node perspective; edge perspective lambda_d)\n";
  s += degree_lines(r.degrees.variable, r.n, r.edges, "lambda");
  s += "check degrees (node perspective; edge perspective rho_d)\n";
  s += degree_lines(r.degrees.check, r.m, r.edges, "rho");
  if (r.cycles.girth) {
    s += fmt::format("girth          {}   ({} cycles of length {})\n", *r.cycles.girth,
                     r.cycles.count, *r.cycles.girth);
  } else {
    s += "girth          none (the Tanner graph is a forest)\n";
  }
  if (const auto& qc = r.quasi_cyclic) {
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
    s += fmt::format("min distance   not computed (k = {} > {}; enumeration is exhaustive)\n", r.k,
                     o.max_dimension);
  }
  fmt::print("{}", s);
}

void run(const InspectOptions& o) {
  if (o.points) {
    fmt::print("{}", Constellation::of(*o.points).table());
    return;
  }
  const Code code = o.input.load();
  const CodeReport r = inspect_code(code, o.max_dimension);
  if (!o.dot.empty()) write_dot(o, code);
  const bool link = o.modulation || !o.puncture.empty();
  if (o.json) {
    nlohmann::json j = nlohmann::json::parse(code_report_json(r, o.input.code));
    if (link) j["link"] = link_summary(o, code);
    fmt::print("{}\n", j.dump(2));
  } else {
    print_text(o, r);
    if (link) fmt::print("{}", link_text(link_summary(o, code)));
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
  add_setting_option(*sub, "--modulation", o->modulation,
                     "also report the code on this modulation: symbols per frame, information "
                     "bits per symbol, BICM and coded-modulation Eb/N0 limits (AWGN, Rayleigh)");
  sub->add_option("--puncture", o->puncture,
                  "also report the code with this puncture map: positions sent, effective rate");
  add_setting_option(*sub, "--points", o->points,
                     "print a modulation's label-to-point table (label bits, in-phase, "
                     "quadrature; unit average energy) and nothing else");
  sub->callback([o] { run(*o); });
}

}  // namespace tannery::cli
