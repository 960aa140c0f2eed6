// tannery plot RESULT.json... -o FILE.svg
#include <fmt/format.h>
#include <unistd.h>
#include <cmath>
#include <cstdio>
#include <filesystem>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/report/plot.hpp"

namespace tannery::cli {

namespace {

struct PlotCommand {
  std::vector<std::string> inputs;
  std::vector<std::string> labels;
  std::string output;
  std::string metric = "both";
  bool no_references = false;
  bool normal_approximation = false;
  bool failure_classes = false;
  std::optional<double> threshold;
  std::optional<double> at_fer;
  std::string title;
};

// --at-fer: one line per run, where its FER crosses the target and how far that is from the
// finite-length and capacity limits.
void print_crossings(const std::vector<PlotRun>& runs, const std::vector<std::string>& inputs,
                     double fer) {
  for (std::size_t i = 0; i < runs.size(); ++i) {
    const RunRecord& r = runs[i].run;
    const FerCrossing c = fer_crossing(r, fer);
    const std::string unit = snr_swept(r.config.channel.kind) ? " dB" : "";
    std::string line = fmt::format("{}: FER {:g} ", inputs[i], fer);
    if (!c.at) {
      fmt::print("{}not crossed within the sweep\n", line);
      continue;
    }
    line += fmt::format("at {:.3f}{}", *c.at, unit);
    if (std::isfinite(c.normal_approximation)) {
      line += fmt::format("; normal approximation (n {}, k {}) {:.3f}{}: {:+.3f}", c.sent_n,
                          c.sent_k, c.normal_approximation, unit, *c.at - c.normal_approximation);
    }
    if (std::isfinite(c.limit))
      line += fmt::format("; capacity limit {:.3f}{}: {:+.3f}", c.limit, unit, *c.at - c.limit);
    fmt::print("{}\n", line);
  }
}

}  // namespace

void check_plot_path(const std::string& path) {
  const std::string extension = std::filesystem::path(path).extension().string();
  if (path == "-" || extension.empty() || extension == ".svg" || extension == ".png" ||
      extension == ".pdf")
    return;
  throw Error(fmt::format(
      "{}: plots are written as .svg, .png or .pdf (from the name's extension), not '{}'", path,
      extension));
}

void fill_plot(const std::string& path, const std::string& svg, OutputFile& out) {
  check_plot_path(path);
  const bool png = path.ends_with(".png"), pdf = path.ends_with(".pdf");
  if (!png && !pdf) return out.write(svg);
  const int status = run_converter(
      {"rsvg-convert", png ? "--format=png" : "--format=pdf", "--background-color=white"}, svg,
      out);
  if (status != 0) {
    throw Error(status == -1 ? fmt::format("{}: {} output needs rsvg-convert (apt-get install "
                                           "librsvg2-bin); write an .svg instead",
                                           path, png ? "PNG" : "PDF")
                             : fmt::format("{}: rsvg-convert failed", path));
  }
}

void write_plot(const std::string& path, const std::string& svg) {
  OutputFile out(path, false);
  fill_plot(path, svg, out);
  out.commit();
}

void add_plot(CLI::App& app) {
  auto o = std::make_shared<PlotCommand>();
  auto* sub =
      app.add_subcommand("plot", "Draw error-rate curves of one or more results files as SVG");
  sub->footer(
      "Example:\n  tannery plot sp.json nms.json -o compare.svg --label sum-product --label 'NMS "
      "0.75'");
  sub->add_option("RESULT", o->inputs, "results files written by tannery simulate")->required();
  sub->add_option("-o,--output", o->output,
                  "plot file: .svg ('-' = stdout), or .png / .pdf (rendered by rsvg-convert); "
                  "may be left out with --at-fer");
  sub->add_option("--at-fer", o->at_fer,
                  "print, per results file, the sweep value where its FER crosses this value "
                  "(log-linear interpolation) and its distance to the normal approximation for "
                  "its n, k and to the capacity limit")
      ->check(CLI::Range(1e-300, 0.999999));
  sub->add_option("--label", o->labels,
                  "legend label per results file, in order (default: the decoder)");
  sub->add_option("--metric", o->metric, "fer, ber or both")
      ->check(CLI::IsMember({"fer", "ber", "both"}))
      ->capture_default_str();
  sub->add_flag("--no-references", o->no_references,
                "leave out the uncoded BPSK curve and the capacity limit");
  sub->add_option("--title", o->title, "plot title");
  sub->add_flag("--failure-classes", o->failure_classes,
                "label each FER point with the (a, b) class of its most frequent failures and "
                "its share (results of this version; cw: codewords)");
  sub->add_flag("--normal-approximation", o->normal_approximation,
                "overlay the finite-length limit (Polyanskiy-Poor-Verdu normal approximation) for "
                "the first run's n, k");
  sub->add_option("--threshold", o->threshold,
                  "draw a vertical line at this sweep value, e.g. a threshold from tannery "
                  "threshold (dB for AWGN)");
  sub->callback([o] {
    if (o->output.empty() && !o->at_fer) throw Error("plot needs -o FILE (or --at-fer FER)");
    if (!o->output.empty()) check_plot_path(o->output);
    std::vector<PlotRun> runs;
    for (std::size_t i = 0; i < o->inputs.size(); ++i) {
      RunRecord r = parse_results_json(read_text_file(o->inputs[i]), o->inputs[i]);
      std::string label = i < o->labels.size() ? o->labels[i] : run_label(r);
      runs.push_back(PlotRun{std::move(label), std::move(r)});
    }
    PlotOptions options;
    options.fer = o->metric != "ber";
    options.ber = o->metric != "fer";
    options.references = !o->no_references;
    options.title = o->title;
    options.normal_approximation = o->normal_approximation;
    options.failure_classes = o->failure_classes;
    options.threshold = o->threshold;
    if (o->at_fer) print_crossings(runs, o->inputs, *o->at_fer);
    if (!o->output.empty()) write_plot(o->output, plot_svg(runs, options));
  });
}

}  // namespace tannery::cli
