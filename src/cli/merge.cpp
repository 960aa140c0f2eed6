// tannery merge SHARD... -o RESULT.json: the results of a run computed as independent shards.
#include <fmt/format.h>

#include "commands.hpp"
#include "simulate_output.hpp"
#include "tannery/io/matrix_io.hpp"
#include "tannery/report/shards.hpp"

namespace tannery::cli {

namespace {

struct MergeCommand {
  std::vector<std::string> shards;
  std::string output = "tannery-run.json";
  std::string csv, plot;
  bool quiet = false;
};

void run(const MergeCommand& o) {
  check_plot_path(o.plot);
  check_paths({}, {{"--output", o.output}, {"--csv", o.csv}, {"--plot", o.plot}});
  std::vector<ShardRecord> shards;
  for (const std::string& file : o.shards)
    shards.push_back(parse_shard_json(read_text_file(file), file));
  const MergeResult m = merge_shards(shards, o.shards);
  write_outputs(m.run, o.output, o.csv, o.plot);
  if (!o.quiet) {
    fmt::print("{}{}", results_table(m.run), failure_anatomy_text(m.run));
    for (const auto* f : {&o.output, &o.csv, &o.plot}) {
      if (!f->empty()) fmt::print("wrote {}\n", *f);
    }
  }
  if (m.shortfalls.empty()) return;
  for (const std::string& s : m.shortfalls) fmt::print(stderr, "tannery: incomplete: {}\n", s);
  fmt::print(stderr,
             "tannery: the merged results stop at that point (marked interrupted); merge again "
             "once the shard has run further\n");
  throw CheckFailed{1};
}

}  // namespace

void add_merge(CLI::App& app) {
  auto o = std::make_shared<MergeCommand>();
  auto* sub = app.add_subcommand(
      "merge", "Combine the shard files of a run split with simulate --shard into its results");
  sub->footer(
      "The stop rules are applied in chunk order over all shards, so the results equal a single\n"
      "run's when every shard ran far enough; otherwise the shard that must continue is named.\n"
      "Exit status: 0 complete, 1 a shard must run further (results so far written), 2 error\n"
      "(unreadable files, shards of different runs).\n"
      "Example:\n"
      "  tannery merge tannery-shard-*-of-16.json -o run.json --plot run.svg");
  sub->add_option("SHARD", o->shards, "shard files (simulate --shard I/N)")->required();
  sub->add_option("-o,--output", o->output, "results file (JSON)")->capture_default_str();
  sub->add_option("--csv", o->csv, "also write the points as CSV");
  sub->add_option("--plot", o->plot, "plot of FER and BER (.svg, .png, .pdf)");
  sub->add_flag("--quiet", o->quiet, "print nothing but errors");
  sub->callback([o] { run(*o); });
}

}  // namespace tannery::cli
