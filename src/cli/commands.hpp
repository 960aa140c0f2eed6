// Each subcommand lives in its own file and registers itself here; main() maps errors to exits.
#pragma once

#include <CLI/CLI.hpp>
#include <atomic>

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
#include <string_view>

#include "tannery/code/code.hpp"
#include "tannery/code/gf2.hpp"

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

#include "tannery/base/output_file.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery::cli {
// Output matrix format from --to, else from the file extension, else (stdout) tannery's own.
MatrixFormat output_format(const std::string& to, const std::string& path);
}  // namespace tannery::cli

#include "settings_options.hpp"
#include "tannery/decode/decoder.hpp"

namespace tannery::cli {

// The decoder option group shared by every subcommand that decodes.
struct DecoderOptions {
  SettingsOptions<DecoderSettings> fields;
  std::string simd_target;

  void add_to(CLI::App& sub);
  // The settings: base with the options given here; refuses parameters that the chosen
  // algorithm does not use.
  DecoderSettings settings(DecoderSettings base = {}) const;
};

void add_simulate(CLI::App& app);
void add_plot(CLI::App& app);
void add_decode(CLI::App& app);
void add_encode(CLI::App& app);
void add_compare(CLI::App& app);
void add_merge(CLI::App& app);
void add_threshold(CLI::App& app);
void add_floor(CLI::App& app);

// Set by SIGINT/SIGTERM once install_interrupt_handler() ran (every signal only asks to stop, so
// the results so far are always saved; SIGKILL stops at once).
extern std::atomic<bool> g_interrupted;
void install_interrupt_handler();

}  // namespace tannery::cli

#include <fstream>
#include <istream>
#include <map>
#include <vector>

namespace tannery::cli {

// "2:0.5,3:0.3" -> {2: 0.5, 3: 0.3} (repeated degrees add up); option names the flag in errors.

// Standard input for "-", else the file opened in binary mode (kept in `file`); Error if
// unreadable.
std::istream& open_input(const std::string& path, std::ifstream& file);

// Plots: the format from the name's extension, .svg (also '-' and no extension), .png or .pdf
// (rendered by rsvg-convert); check_plot_path refuses any other before work starts.
void check_plot_path(const std::string& path);
// fill_plot writes the plot into out (opened on path), for outputs published as a set.
void fill_plot(const std::string& path, const std::string& svg, OutputFile& out);
void write_plot(const std::string& path, const std::string& svg);

// Runs a program with these arguments and waits for it, without a shell (nothing in an argument
// is interpreted: file names may hold quotes or ';'). Its exit status, or -1 when it cannot be
// started (e.g. not installed) or is killed.
int run_program(const std::vector<std::string>& args);
// Runs a converter that reads input on its standard input and writes its result to its standard
// output, here into out (nothing under the final name until out is committed). As run_program.
int run_converter(const std::vector<std::string>& args, std::string_view input, OutputFile& out);

// "1 thread", "2 threads": a count with its noun in the right number.
std::string count_of(std::uint64_t count, std::string_view noun);

// The encoder of a code; systematic_first: the information bits at positions 0..k-1 (where an
// encoder with the systematic part first puts them), an Error naming the option when the code's
// structure does not allow it.
Encoder make_encoder(const Code& code, bool systematic_first);

// A file argument and the option that gave it ("--output", "INPUT"); empty paths are unused.
struct PathArgument {
  std::string option, path;
};
// Refuses arguments that would collide: two inputs on standard input, two outputs on standard
// output or on one file, an output that is one of the inputs (it would be destroyed).
void check_paths(const std::vector<PathArgument>& inputs, const std::vector<PathArgument>& outputs);

}  // namespace tannery::cli
