#include "tannery/error.hpp"

#include <fmt/format.h>

namespace tannery {

void assertion_failed(const char* condition, const char* file, int line) {
  throw std::logic_error(fmt::format("internal error: {} failed at {}:{}", condition, file, line));
}

}  // namespace tannery
