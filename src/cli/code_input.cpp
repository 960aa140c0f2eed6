#include <fmt/format.h>

#include "commands.hpp"
#include "tannery/error.hpp"
#include "tannery/io/code_lookup.hpp"

namespace tannery::cli {

void CodeInput::add_to(CLI::App& sub, bool positional, const std::string& default_code) {
  const std::string help = fmt::format(
      "parity-check matrix: a file (tannery, alist, mtx, qc or dense format, detected from its "
      "content; "
      "'-' = stdin) or a shipped code name ({})",
      fmt::join(shipped_code_names(), ", "));
  code = default_code;
  auto* opt =
      positional ? sub.add_option("CODE", code, help) : sub.add_option("--code", code, help);
  if (default_code.empty())
    opt->required();
  else
    opt->capture_default_str();
  sub.add_option("--format,--from", format, "input matrix format, instead of detecting it")
      ->check(CLI::IsMember({"tannery", "alist", "mtx", "qc", "dense"}));
  sub.add_option("--lifting", lifting,
                 "lifting size Z (circulant size) for a qc base table that does not state it")
      ->check(CLI::Range(1, 1 << 20));
}

Code CodeInput::load() const {
  ReadOptions options;
  if (!format.empty()) options.format = parse_format_name(format);
  options.lifting = lifting;
  return load_code(code, options);
}

}  // namespace tannery::cli
