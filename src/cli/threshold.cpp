// tannery threshold: decoding threshold of an ensemble by density evolution.
#include <fmt/format.h>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <sstream>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/error.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/density_evolution.hpp"
#include "tannery/theory/protograph.hpp"

namespace tannery::cli {

namespace {

struct ThresholdOptions {
  CodeInput input;
  std::string regular;
  std::string lambda, rho;
  std::string base;
  bool node_perspective = false;
  ChannelKind channel = ChannelKind::awgn;
  ThresholdMethod method = ThresholdMethod::discretized;
  DecoderOptions decoder;
  std::optional<double> at;
  bool json = false;
};

Ensemble ensemble_of(const ThresholdOptions& o) {
  if (!o.regular.empty() + !o.lambda.empty() + !o.input.code.empty() + !o.base.empty() != 1)
    throw Error("give exactly one of --code, --regular DV,DC, --lambda/--rho or --base FILE");
  if (!o.regular.empty()) {
    const auto [dv, dc] = parse_degree_pair(o.regular, "--regular");
    return Ensemble::regular(dv, dc);
  }
  if (!o.lambda.empty()) {
    if (o.rho.empty()) throw Error("--lambda needs --rho");
    const auto l = parse_degree_map(o.lambda, "--lambda"), r = parse_degree_map(o.rho, "--rho");
    return o.node_perspective ? Ensemble::from_node_fractions(l, r) : Ensemble{l, r};
  }
  return Ensemble::from_code(degree_profile(o.input.load()));
}

// Decoder options that describe an implementation, not the ensemble's asymptotic decoder: density
// evolution here follows unquantized messages, a flooding schedule and unbounded iterations, so
// these are refused rather than printed as if applied.
void refuse_implementation_options(const CLI::App& sub) {
  for (const char* name : {"--quantize", "--schedule", "--iterations", "--kernel",
                           "--no-early-stop", "--simd-target", "--flip-threshold"}) {
    if (sub.get_option(name)->count() > 0) {
      throw Error(fmt::format(
          "threshold does not take {}: density evolution here models the unquantized decoder "
          "(flooding, unlimited iterations, infinite length); drop the option",
          name));
    }
  }
}

const char* unit_of(ChannelKind kind) {
  return kind == ChannelKind::awgn ? "sigma" : (kind == ChannelKind::bsc ? "p" : "epsilon");
}

// The figures every threshold prints under its heading: the threshold (or the stall), the limit
// and the gap.
void print_threshold(const ThresholdResult& r, ChannelKind kind) {
  const char* unit = unit_of(kind);
  const std::string criterion =
      r.target > 0 ? fmt::format("; error probability below {:g}", r.target) : std::string();
  if (r.stalled) {
    // Never a plain threshold: the error probability stops at a floor after the waterfall.
    const std::string where =
        kind == ChannelKind::awgn ? fmt::format(" (Eb/N0 = {:.4f} dB)", r.waterfall_ebn0_db) : "";
    fmt::print(
        "density evolution STALLS: from {} = {:.5f}{} the error probability falls only to a floor "
        "({:.3g} there, lower on better channels), not to zero\n",
        unit, r.waterfall, where, r.floor);
    fmt::print("it falls below {:g} from {} = {:.5f} (accuracy about {:g}):\n", r.target, unit,
               r.threshold, r.accuracy);
  } else {
    fmt::print("threshold {} = {:.5f} (accuracy about {:g}{})\n", unit, r.threshold, r.accuracy,
               criterion);
  }
  if (kind == ChannelKind::awgn) {
    fmt::print(
        "          Eb/N0 = {:.4f} dB; Shannon limit at this rate {:.4f} dB (sigma {:.5f}); gap "
        "{:.4f} dB\n",
        r.ebn0_db, r.ebn0_db - r.gap_db, r.limit, r.gap_db);
  } else {
    fmt::print("capacity limit at this rate: {} = {:.5f}\n", unit, r.limit);
  }
}

nlohmann::json threshold_json(const ThresholdResult& r, ChannelKind kind,
                              std::string_view algorithm) {
  nlohmann::json j = {{"channel", name_of(kind)}, {"algorithm", algorithm},
                      {"threshold", r.threshold}, {"parameter", unit_of(kind)},
                      {"rate", r.rate},           {"limit", r.limit},
                      {"method", r.method},       {"accuracy", r.accuracy}};
  if (kind == ChannelKind::awgn) {
    j["ebn0_db"] = r.ebn0_db;
    j["gap_db"] = r.gap_db;
  } else {
    j["ebn0_db"] = nullptr;
    j["gap_db"] = nullptr;
  }
  j["target_error_probability"] = r.target;
  j["stalled"] = r.stalled;
  if (r.stalled) {
    j["stall"] = {{"waterfall", r.waterfall},
                  {"floor", r.floor},
                  {"waterfall_ebn0_db",
                   kind == ChannelKind::awgn ? nlohmann::json(r.waterfall_ebn0_db) : nullptr}};
  }
  return j;
}

void run_protograph(const ThresholdOptions& o, const CLI::App& sub) {
  for (const char* name : {"--algorithm", "--alpha", "--beta", "--at"}) {
    if (sub.get_option(name)->count() > 0) {
      throw Error(
          fmt::format("threshold --base models sum-product decoding and finds the threshold "
                      "only; drop {}",
                      name));
    }
  }
  if (o.channel != ChannelKind::awgn && o.channel != ChannelKind::bec)
    throw Error("threshold --base: --channel awgn or bec");
  const Protograph p = parse_protograph(read_text_file(o.base, 1 << 24), o.base);
  p.validate();
  const ThresholdResult r = protograph_threshold(
      p, o.channel, sub.get_option("--method")->count() ? o.method : ThresholdMethod::exit);
  // Protographs with the encodable parity part: the bound on their liftings' minimum distance.
  std::optional<std::size_t> bound;
  if (protograph_design_violation(p, true).empty()) bound = encodable_weight_bound(p);
  if (o.json) {
    nlohmann::json j = threshold_json(r, o.channel, "sum-product");
    j["protograph"] = {{"rows", p.rows},
                       {"columns", p.cols},
                       {"edges", p.edges()},
                       {"punctured", p.punctured.size()},
                       {"encodable_weight_bound", bound ? nlohmann::json(*bound) : nullptr}};
    fmt::print("{}\n", j.dump(2));
    return;
  }
  std::string punctured;
  for (std::size_t c : p.punctured)
    punctured += fmt::format("{}{}", punctured.empty() ? "" : ", ", c + 1);
  fmt::print("protograph {} x {}, {} edges{}; design rate {:.6f}\n", p.rows, p.cols, p.edges(),
             punctured.empty() ? std::string() : fmt::format(", punctured column {}", punctured),
             r.rate);
  fmt::print("decoder sum-product on {}; {}\n", name_of(o.channel), r.method);
  print_threshold(r, o.channel);
  if (bound) {
    fmt::print(
        "encodable parity part: in any lifting by construct lift --encodable, one information "
        "bit makes a codeword of weight <= {} (the minimum distance's bound at every length)\n",
        *bound);
  }
}

void run(const ThresholdOptions& o) {
  const Ensemble e = ensemble_of(o);
  e.validate();
  const DecoderSettings d = o.decoder.settings();
  const ChannelKind kind = o.channel;
  const ThresholdResult r = threshold(e, d, kind, o.method);
  // --at: where density evolution ends at one channel point (Eb/N0 in dB for AWGN at the design
  // rate, p for the BSC).
  std::optional<double> error_at;
  if (o.at) {
    if (kind == ChannelKind::bec) throw Error("--at applies to awgn and bsc");
    const double value =
        kind == ChannelKind::awgn ? awgn_sigma(*o.at, SnrMeasure::ebn0, r.rate) : *o.at;
    error_at = density_evolution_error(e, d, kind, value);
  }
  if (o.json) {
    nlohmann::json j = threshold_json(r, kind, name_of(d.algorithm));
    if (error_at) j["at"] = {{"parameter", *o.at}, {"error_probability", *error_at}};
    fmt::print("{}\n", j.dump(2));
    return;
  }
  const auto degrees = [](const std::map<std::size_t, double>& fractions) {
    std::string out;
    for (auto [degree, fraction] : fractions)
      out += fmt::format("{}{}:{:.6g}", out.empty() ? "" : ",", degree, fraction);
    return out;
  };
  fmt::print("ensemble: design rate {:.6f}; lambda {}; rho {}\n", r.rate, degrees(e.lambda),
             degrees(e.rho));
  const std::string decoder = describe(d);
  fmt::print("decoder {} on {}; {}\n", decoder.substr(0, decoder.find(" (")), name_of(o.channel),
             r.method);
  print_threshold(r, kind);
  if (error_at) {
    fmt::print("at {} = {:g}{} density evolution ends at error probability {:.4g}\n",
               kind == ChannelKind::awgn ? "Eb/N0" : "p", *o.at,
               kind == ChannelKind::awgn ? " dB" : "", *error_at);
  }
}

}  // namespace

void add_threshold(CLI::App& app) {
  auto o = std::make_shared<ThresholdOptions>();
  auto* sub = app.add_subcommand("threshold",
                                 "Decoding threshold of an LDPC ensemble by density evolution");
  sub->footer(
      "Examples:\n"
      "  tannery threshold --regular 3,6                      # BIAWGN sum-product, discretized "
      "DE\n"
      "  tannery threshold --regular 3,6 --channel bec --json\n"
      "  tannery threshold --lambda 2:0.3,3:0.7 --rho 6:1 --algorithm normalized-min-sum --alpha "
      "0.8\n"
      "  tannery threshold --code qc-rate-half-z54 --method gaussian\n"
      "  tannery threshold --code qc-rate-half-z54 --algorithm normalized-min-sum --at 2\n"
      "  tannery threshold --base design.proto                # protograph EXIT analysis\n"
      "A min-sum ensemble whose error probability stops at a floor after the waterfall is reported "
      "as a stall (the floor and where it falls below the target), never as a plain threshold.");
  o->input.add_to(*sub, false, "");
  sub->get_option("--code")->required(false);
  sub->add_option("--regular", o->regular, "regular ensemble DV,DC (variable and check degrees)");
  sub->add_option("--lambda", o->lambda,
                  "variable degrees DEGREE:COEFF,... (edge perspective unless --node-perspective)");
  sub->add_option("--rho", o->rho, "check degrees DEGREE:COEFF,...");
  sub->add_option("--base", o->base,
                  "protograph file: a table of edge multiplicities, a row per check type, and "
                  "optionally a line 'punctured C ...' (columns from 1); sum-product, awgn or bec");
  sub->add_flag("--node-perspective", o->node_perspective,
                "--lambda/--rho give fractions of nodes, not of edges");
  add_named_option(*sub, "--channel", o->channel,
                   "awgn (threshold as sigma and Eb/N0), bsc (p) or bec (epsilon)");
  add_named_option(
      *sub, "--method", o->method,
      "awgn: discretized (density evolution on an LLR grid), gaussian (fast approximation) or, "
      "for --base, exit (protograph EXIT analysis, its default)");
  sub->add_option("--at", o->at,
                  "also report where density evolution ends at this point: Eb/N0 in dB at the "
                  "design rate (awgn) or p (bsc); the error probability of the messages");
  sub->add_flag("--json", o->json, "print one JSON object (threshold, ebn0_db, rate, gap_db, ...)");
  o->decoder.add_to(*sub);
  sub->callback([o, sub] {
    refuse_implementation_options(*sub);
    if (o->base.empty())
      run(*o);
    else
      run_protograph(*o, *sub);
  });
}

}  // namespace tannery::cli
