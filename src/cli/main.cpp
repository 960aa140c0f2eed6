#include <fmt/format.h>
#include <algorithm>
#include <csignal>
#include <cstdio>
#include <exception>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"
#include "tannery/version.hpp"

namespace {

// Edit distance (insertions, deletions, substitutions, adjacent swaps).
std::size_t distance(std::string_view a, std::string_view b) {
  std::vector<std::vector<std::size_t>> d(a.size() + 1, std::vector<std::size_t>(b.size() + 1));
  for (std::size_t i = 0; i <= a.size(); ++i) d[i][0] = i;
  for (std::size_t j = 0; j <= b.size(); ++j) d[0][j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    for (std::size_t j = 1; j <= b.size(); ++j) {
      d[i][j] = std::min(
          {d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + (a[i - 1] == b[j - 1] ? 0u : 1u)});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
        d[i][j] = std::min(d[i][j], d[i - 2][j - 2] + 1);
    }
  }
  return d[a.size()][b.size()];
}

// The valid name nearest to a mistyped one, if it is near enough to be a typo.
std::optional<std::string> nearest(std::string_view typed, const std::vector<std::string>& names) {
  std::optional<std::string> best;
  std::size_t best_distance = std::max<std::size_t>(2, typed.size() / 3) + 1;
  for (const auto& name : names) {
    const std::size_t dist = distance(typed, name);
    if (dist < best_distance) best = name, best_distance = dist;
  }
  return best;
}

// "--name" of every option of a subcommand, its option groups included.
void option_names(const CLI::App* app, std::vector<std::string>& out) {
  for (const CLI::Option* opt : app->get_options()) {
    for (const auto& l : opt->get_lnames()) out.push_back("--" + l);
  }
  for (const CLI::App* group :
       app->get_subcommands([](const CLI::App* a) { return a->get_name().empty(); })) {
    option_names(group, out);
  }
}

// The message of a parse error, with the nearest subcommand or option to the first unknown word.
std::string parse_error_message(const CLI::App& app, int argc, char** argv, std::string what) {
  std::vector<std::string> subcommands;
  for (const CLI::App* s :
       app.get_subcommands([](const CLI::App* a) { return !a->get_name().empty(); })) {
    subcommands.push_back(s->get_name());
  }
  if (argc < 2) return what;
  const std::string first = argv[1];
  if (std::find(subcommands.begin(), subcommands.end(), first) == subcommands.end()) {
    if (first.starts_with("-")) return what;
    const auto near = nearest(first, subcommands);
    return fmt::format("unknown subcommand '{}'{}", first,
                       near ? fmt::format(" (did you mean '{}'?)", *near) : "");
  }
  std::vector<std::string> options;
  option_names(app.get_subcommand(first), options);
  for (int i = 2; i < argc; ++i) {
    std::string word = argv[i];
    if (!word.starts_with("--")) continue;
    word = word.substr(0, word.find('='));
    if (std::find(options.begin(), options.end(), word) != options.end()) continue;
    const auto near = nearest(word, options);
    if (near) return fmt::format("{} (did you mean '{}'?)", what, *near);
  }
  return what;
}

}  // namespace

int main(int argc, char** argv) {
  // Beyond a file-size limit (ulimit -f) a write must fail with a message and remove its
  // temporary file, not kill the process silently (SIGXFSZ, exit 153).
  std::signal(SIGXFSZ, SIG_IGN);
  // Shipped codes beside the executable: PREFIX/bin/tannery finds PREFIX/share/tannery/codes
  // wherever the installation was moved, build/tannery the build tree's copy.
  std::error_code ec;
  const auto exe = std::filesystem::read_symlink("/proc/self/exe", ec);
  if (!ec) tannery::add_code_directories_near(exe.parent_path().string(), 1);
  CLI::App app{
      "tannery: design, inspect, decode and simulate error-correcting codes on Tanner graphs"};
  app.set_version_flag("--version", "tannery " + std::string(tannery::version()));
  app.require_subcommand(1);
  app.footer("Run 'tannery SUBCOMMAND --help' for the options and an example of each subcommand.");
  tannery::cli::add_inspect(app);
  tannery::cli::add_convert(app);
  tannery::cli::add_construct(app);
  tannery::cli::add_simulate(app);
  tannery::cli::add_plot(app);
  tannery::cli::add_decode(app);
  tannery::cli::add_encode(app);
  tannery::cli::add_compare(app);
  tannery::cli::add_merge(app);
  tannery::cli::add_threshold(app);
  tannery::cli::add_floor(app);
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    fmt::print(stderr, "tannery: error: {}\n", parse_error_message(app, argc, argv, e.what()));
    return 2;
  } catch (const tannery::cli::CheckFailed& e) {
    return e.code;
  } catch (const tannery::Error& e) {
    fmt::print(stderr, "tannery: error: {}\n", e.what());
    return 2;
  } catch (const std::bad_alloc&) {
    fmt::print(stderr, "tannery: error: out of memory\n");
    return 2;
  } catch (const std::exception& e) {
    fmt::print(stderr, "tannery: error: {}\n", e.what());
    return 2;
  }
  return 0;
}
