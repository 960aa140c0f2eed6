// CODE arguments: a path to a matrix file, or the name of a code shipped in codes/.
#pragma once

#include <string>
#include <vector>

#include "tannery/code/code.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery {

// Names of the shipped codes (file names without extension), sorted.
std::vector<std::string> shipped_code_names();
// Path of a file, or of the shipped code of that name; throws Error listing the names if neither.
std::string resolve_code_path(const std::string& name_or_path);
Code load_code(const std::string& name_or_path, const ReadOptions& options = {});

// The code simulated and inspected when none is given.
inline constexpr const char* kDefaultCode = "regular-3-6-n2016";

}  // namespace tannery
