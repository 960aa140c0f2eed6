// tannery convert IN OUT: between the matrix formats.
#include <fmt/format.h>

#include "commands.hpp"
#include "settings_options.hpp"
#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery::cli {

namespace {

struct ConvertOptions {
  CodeInput input;
  std::string output;
  std::string to;
};

}  // namespace

// Output format from --to, else from the file extension, else tannery's own format.
MatrixFormat output_format(const std::string& to, const std::string& path) {
  if (!to.empty()) return *from_name<MatrixFormat>(to);
  if (auto f = format_from_extension(path)) return *f;
  if (path == "-") return MatrixFormat::tannery;
  throw Error(
      fmt::format("{}: cannot tell the output format from the extension; pass --to "
                  "(tannery, alist, mtx, qc or dense)",
                  path));
}

void add_convert(CLI::App& app) {
  auto o = std::make_shared<ConvertOptions>();
  auto* sub = app.add_subcommand("convert", "Convert a parity-check matrix between formats");
  sub->footer(
      "Example:\n  tannery convert codes/qc-rate-half-z54.qc big.alist\n  tannery convert H.mtx - "
      "--to dense");
  o->input.add_to(*sub, true, "");
  sub->add_option("OUT", o->output,
                  "output file ('-' = stdout); format from --to or the extension "
                  "(.tanner .alist .mtx .qc .dense)")
      ->required();
  sub->add_option("--to", o->to, "output format")->check(names_of<MatrixFormat>());
  sub->callback([o] {
    const Code code = o->input.load();
    write_code_file(code, output_format(o->to, o->output), o->output);
  });
}

}  // namespace tannery::cli
