// tannery compare CURRENT.json REFERENCE.json: is the current run worse than the reference?
#include <fmt/format.h>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/report/compare.hpp"

namespace tannery::cli {

namespace {

struct CompareCommand {
  std::string current, reference;
  CompareOptions options;
  std::optional<double> tolerance;
  bool json = false;
};

}  // namespace

void add_compare(CLI::App& app) {
  auto o = std::make_shared<CompareCommand>();
  auto* sub = app.add_subcommand(
      "compare", "Test whether a run's error rates are worse than a reference curve");
  sub->footer(
      "Exit status: 0 no regression, 1 regression found, 2 error.\n"
      "Examples:\n"
      "  tannery compare new.json sims/qc-sum-product.json\n"
      "  tannery compare new.json old.json --tolerance-db 0.1 --at-fer 1e-2 --json");
  sub->add_option("CURRENT", o->current, "results file of the run under test")->required();
  sub->add_option("REFERENCE", o->reference, "results file of the reference curve")->required();
  sub->add_option("--confidence", o->options.confidence,
                  "confidence of the one-sided tests (whole comparison)")
      ->check(CLI::Range(0.5, 0.999999))
      ->capture_default_str();
  add_named_option(*sub, "--mode", o->options.mode,
                   "automatic, exact (counts must match), paired (McNemar on the same frames) or "
                   "unpaired (Fisher exact)");
  sub->add_option("--tolerance-db", o->tolerance,
                  "allow the current curve to reach --at-fer this far behind the reference (sweep "
                  "units: dB for "
                  "AWGN); the verdict is then this check alone");
  sub->add_option("--at-fer", o->options.at_fer, "FER at which --tolerance-db is measured")
      ->capture_default_str();
  sub->add_flag("--json", o->json, "print the comparison as JSON");
  sub->callback([o] {
    const RunRecord current = parse_results_json(read_text_file(o->current), o->current);
    const RunRecord reference = parse_results_json(read_text_file(o->reference), o->reference);
    CompareOptions options = o->options;
    options.tolerance = o->tolerance;
    const Comparison c = compare_runs(current, reference, options);
    fmt::print("{}", o->json ? comparison_json(c, options)
                             : comparison_text(c, current.config.channel, options));
    if (c.regression) throw CheckFailed{1};
  });
}

}  // namespace tannery::cli
