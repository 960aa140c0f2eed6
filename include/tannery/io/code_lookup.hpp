// CODE arguments: a path to a matrix file, or the name of a code shipped in codes/.
#pragma once

#include <string>
#include <vector>

#include "tannery/code/code.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery {

// Shipped codes are looked for in $TANNERY_CODES, then in the directories added here, in order
// (the command-line tool adds share/tannery/codes beside its executable and one level up, the
// Python module the same beside itself), then in the installation prefix the library was built
// for (PREFIX/share/tannery/codes). Directories that do not exist are skipped.
void add_code_directory(const std::string& directory);
// share/tannery/codes below dir and below each of its parents up to `levels` up: where a
// relocated installation (bin/, lib/python3/...) or a build tree keeps the shipped codes.
void add_code_directories_near(const std::string& dir, int levels);

// Names of the shipped codes (file names without extension), sorted.
std::vector<std::string> shipped_code_names();
// Path of a file, or of the shipped code of that name; throws Error listing the names if neither.
std::string resolve_code_path(const std::string& name_or_path);
Code load_code(const std::string& name_or_path, const ReadOptions& options = {});

// The code simulated and inspected when none is given.
inline constexpr const char* kDefaultCode = "regular-3-6-n2016";

}  // namespace tannery
