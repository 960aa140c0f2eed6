// tannery threshold: decoding threshold of an ensemble by density evolution.
#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <ranges>
#include <sstream>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/density_evolution.hpp"

namespace tannery::cli {

namespace {

struct ThresholdOptions {
  CodeInput input;
  std::string regular;
  std::string lambda, rho;
  bool node_perspective = false;
  std::string channel = "awgn";
  std::string method = "discretized";
  DecoderOptions decoder;
  bool json = false;
};

Ensemble ensemble_of(const ThresholdOptions& o) {
  const int given = !o.regular.empty() + !o.lambda.empty() + (o.input.code.empty() ? 0 : 1);
  if (given != 1) throw Error("give exactly one of --code, --regular DV,DC or --lambda/--rho");
  if (!o.regular.empty()) {
    const auto comma = o.regular.find(',');
    try {
      return Ensemble::regular(std::stoul(o.regular.substr(0, comma)),
                               std::stoul(o.regular.substr(comma + 1)));
    } catch (const std::invalid_argument&) {
      throw Error(fmt::format("--regular expects DV,DC, got '{}'", o.regular));
    }
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

void run(const ThresholdOptions& o) {
  const Ensemble e = ensemble_of(o);
  e.validate();
  const DecoderSettings d = o.decoder.settings();
  ThresholdResult r;
  const ChannelKind kind = *parse_channel(o.channel);
  if (kind == ChannelKind::bec) {
    if (d.algorithm != Algorithm::sum_product)
      throw Error(
          "on the BEC every message-passing decoder is the peeling decoder; use --algorithm "
          "sum-product");
    r.threshold = bec_threshold(e);
    r.rate = e.design_rate();
    r.limit = 1 - r.rate;
    r.method = "exact density evolution (BEC)";
    r.accuracy = 1e-6;
  } else if (kind == ChannelKind::bsc) {
    r = bsc_threshold(e, d);
  } else {
    r = awgn_threshold(
        e, d, o.method == "gaussian" ? ThresholdMethod::gaussian : ThresholdMethod::discretized);
  }
  const char* unit =
      kind == ChannelKind::awgn ? "sigma" : (kind == ChannelKind::bsc ? "p" : "epsilon");
  if (o.json) {
    nlohmann::json j = {{"channel", o.channel},     {"algorithm", algorithm_name(d.algorithm)},
                        {"threshold", r.threshold}, {"parameter", unit},
                        {"rate", r.rate},           {"limit", r.limit},
                        {"method", r.method},       {"accuracy", r.accuracy}};
    if (kind == ChannelKind::awgn) {
      j["ebn0_db"] = r.ebn0_db;
      j["gap_db"] = r.gap_db;
    } else {
      j["ebn0_db"] = nullptr;
      j["gap_db"] = nullptr;
    }
    fmt::print("{}\n", j.dump(2));
    return;
  }
  fmt::print("ensemble: design rate {:.6f}; lambda {}; rho {}\n", r.rate,
             fmt::join(e.lambda | std::views::transform([](auto p) {
                         return fmt::format("{}:{:.6g}", p.first, p.second);
                       }),
                       ","),
             fmt::join(e.rho | std::views::transform([](auto p) {
                         return fmt::format("{}:{:.6g}", p.first, p.second);
                       }),
                       ","));
  fmt::print("decoder {} on {}; {}\n", describe(d).substr(0, describe(d).find(',')), o.channel,
             r.method);
  fmt::print("threshold {} = {:.5f} (accuracy about {:g})\n", unit, r.threshold, r.accuracy);
  if (kind == ChannelKind::awgn) {
    fmt::print(
        "          Eb/N0 = {:.4f} dB; Shannon limit at this rate {:.4f} dB (sigma {:.5f}); gap "
        "{:.4f} dB\n",
        r.ebn0_db, r.ebn0_db - r.gap_db, r.limit, r.gap_db);
  } else {
    fmt::print("capacity limit at this rate: {} = {:.5f}\n", unit, r.limit);
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
      "  tannery threshold --code qc-rate-half-z54 --method gaussian");
  o->input.add_to(*sub, false, "");
  sub->get_option("--code")->required(false);
  sub->add_option("--regular", o->regular, "regular ensemble DV,DC (variable and check degrees)");
  sub->add_option("--lambda", o->lambda,
                  "variable degrees DEGREE:COEFF,... (edge perspective unless --node-perspective)");
  sub->add_option("--rho", o->rho, "check degrees DEGREE:COEFF,...");
  sub->add_flag("--node-perspective", o->node_perspective,
                "--lambda/--rho give fractions of nodes, not of edges");
  sub->add_option("--channel", o->channel,
                  "awgn (threshold as sigma and Eb/N0), bsc (p) or bec (epsilon)")
      ->check(CLI::IsMember({"awgn", "bsc", "bec"}))
      ->capture_default_str();
  sub->add_option(
         "--method", o->method,
         "awgn: discretized (density evolution on an LLR grid) or gaussian (fast approximation)")
      ->check(CLI::IsMember({"discretized", "gaussian"}))
      ->capture_default_str();
  sub->add_flag("--json", o->json, "print one JSON object (threshold, ebn0_db, rate, gap_db, ...)");
  o->decoder.add_to(*sub);
  sub->callback([o, sub] {
    refuse_implementation_options(*sub);
    run(*o);
  });
}

}  // namespace tannery::cli
