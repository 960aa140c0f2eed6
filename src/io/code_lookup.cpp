#include "tannery/io/code_lookup.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <mutex>

#include "tannery/error.hpp"

namespace tannery {

namespace fs = std::filesystem;

namespace {

std::mutex added_mutex;
std::vector<fs::path>& added_dirs() {
  static std::vector<fs::path> dirs;
  return dirs;
}

// Where shipped codes live: $TANNERY_CODES, the added directories, the installation prefix.
std::vector<fs::path> code_dirs() {
  std::vector<fs::path> dirs;
  if (const char* env = std::getenv("TANNERY_CODES")) dirs.emplace_back(env);
  {
    std::lock_guard lock(added_mutex);
    dirs.insert(dirs.end(), added_dirs().begin(), added_dirs().end());
  }
  dirs.emplace_back(TANNERY_INSTALL_CODES_DIR);
  return dirs;
}

bool is_matrix_file(const fs::path& p) {
  return fs::is_regular_file(p) && format_from_extension(p.string()).has_value();
}

}  // namespace

void add_code_directory(const std::string& directory) {
  std::error_code ec;
  if (!fs::is_directory(directory, ec)) return;
  std::lock_guard lock(added_mutex);
  auto& dirs = added_dirs();
  if (std::find(dirs.begin(), dirs.end(), fs::path(directory)) == dirs.end())
    dirs.emplace_back(directory);
}

void add_code_directories_near(const std::string& dir, int levels) {
  fs::path at(dir);
  for (int up = 0; up <= levels && !at.empty(); ++up, at = at.parent_path()) {
    add_code_directory((at / "share" / "tannery" / "codes").string());
    if (at == at.parent_path()) break;
  }
}

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
