// The one exception type of the library. Messages say what went wrong and where
// (file, line, byte offset, frame), in one line, ready to print after "tannery: error: ".
#pragma once

#include <stdexcept>
#include <string>

namespace tannery {

class Error : public std::runtime_error {
 public:
  explicit Error(const std::string& message) : std::runtime_error(message) {}
};

// Internal invariant check; a failure is a bug in tannery, not a user error.
[[noreturn]] void assertion_failed(const char* condition, const char* file, int line);

}  // namespace tannery

#define TANNERY_ASSERT(condition) \
  ((condition) ? static_cast<void>(0) : ::tannery::assertion_failed(#condition, __FILE__, __LINE__))
