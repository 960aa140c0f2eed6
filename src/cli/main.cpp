#include <fmt/format.h>
#include <cstdio>
#include <exception>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/version.hpp"

int main(int argc, char** argv) {
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
  tannery::cli::add_threshold(app);
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    fmt::print(stderr, "tannery: error: {}\n", e.what());
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
