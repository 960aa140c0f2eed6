#include <fmt/format.h>
#include <iostream>
#include <sstream>

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

std::map<std::size_t, double> parse_degree_map(const std::string& text, const std::string& option) {
  std::map<std::size_t, double> out;
  std::stringstream items(text);
  for (std::string item; std::getline(items, item, ',');) {
    const auto colon = item.find(':');
    try {
      if (colon == std::string::npos) throw std::invalid_argument("");
      out[std::stoul(item.substr(0, colon))] += std::stod(item.substr(colon + 1));
    } catch (const std::exception&) {
      throw Error(fmt::format("{}: '{}' is not DEGREE:VALUE (e.g. 2:0.3,3:0.7)", option, item));
    }
  }
  if (out.empty()) throw Error(fmt::format("{} lists no degree", option));
  return out;
}

std::istream& open_input(const std::string& path, std::ifstream& file) {
  if (path == "-") return std::cin;
  file.open(path, std::ios::binary);
  if (!file) throw Error(fmt::format("{}: cannot open file", path));
  return file;
}

Code CodeInput::load() const {
  ReadOptions options;
  if (!format.empty()) options.format = parse_format_name(format);
  options.lifting = lifting;
  return load_code(code, options);
}

}  // namespace tannery::cli
