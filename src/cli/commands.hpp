// Each subcommand lives in its own file and registers itself here; main() maps errors to exits.
#pragma once

#include <CLI/CLI.hpp>

namespace tannery::cli {

void add_inspect(CLI::App& app);
void add_convert(CLI::App& app);
void add_construct(CLI::App& app);

// Exit code for "a check found a problem" (e.g. a regression); errors exit 2.
struct CheckFailed {
  int code = 1;
};

}  // namespace tannery::cli

#include <memory>
#include <optional>
#include <string>

#include "tannery/code/code.hpp"

namespace tannery::cli {

// CODE argument plus --format / --lifting, shared by every subcommand that reads a code.
struct CodeInput {
  std::string code;
  std::string format;
  std::optional<std::size_t> lifting;

  // Registers the options; positional: CODE is positional, otherwise --code.
  void add_to(CLI::App& sub, bool positional, const std::string& default_code);
  Code load() const;
};

}  // namespace tannery::cli

#include "tannery/io/matrix_io.hpp"

namespace tannery::cli {
// Output matrix format from --to, else from the file extension, else (stdout) tannery's own.
MatrixFormat output_format(const std::string& to, const std::string& path);
}  // namespace tannery::cli
