#include "tannery/io/code_lookup.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cstdlib>
#include <filesystem>

#include "tannery/error.hpp"

namespace tannery {

namespace fs = std::filesystem;

namespace {

// Where shipped codes live: $TANNERY_CODES, the installed data folder, the source tree.
std::vector<fs::path> code_dirs() {
  std::vector<fs::path> dirs;
  if (const char* env = std::getenv("TANNERY_CODES")) dirs.emplace_back(env);
  dirs.emplace_back(TANNERY_INSTALL_CODES_DIR);
  dirs.emplace_back(TANNERY_SOURCE_CODES_DIR);
  return dirs;
}

bool is_matrix_file(const fs::path& p) {
  return fs::is_regular_file(p) && format_from_extension(p.string()).has_value();
}

}  // namespace

std::vector<std::string> shipped_code_names() {
  std::vector<std::string> names;
  for (const auto& dir : code_dirs()) {
    std::error_code ec;
    for (const auto& entry : fs::directory_iterator(dir, ec)) {
      if (is_matrix_file(entry.path())) names.push_back(entry.path().stem().string());
    }
    if (!names.empty()) break;  // the first folder that has codes wins
  }
  std::sort(names.begin(), names.end());
  names.erase(std::unique(names.begin(), names.end()), names.end());
  return names;
}

std::string resolve_code_path(const std::string& name_or_path) {
  std::error_code ec;
  if (name_or_path == "-" || fs::exists(name_or_path, ec)) return name_or_path;
  for (const auto& dir : code_dirs()) {
    for (const auto& entry : fs::directory_iterator(dir, ec)) {
      if (entry.path().stem() == name_or_path && is_matrix_file(entry.path()))
        return entry.path().string();
    }
  }
  throw Error(fmt::format("{}: no such file, and no shipped code of that name (shipped: {})",
                          name_or_path, fmt::join(shipped_code_names(), ", ")));
}

Code load_code(const std::string& name_or_path, const ReadOptions& options) {
  return read_code_file(resolve_code_path(name_or_path), options);
}

}  // namespace tannery
