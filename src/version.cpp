#include "tannery/version.hpp"

#include "tannery_build_version.h"  // generated at build time by cmake/build_id.cmake

namespace tannery {

std::string_view version() noexcept {
  return TANNERY_BUILD_VERSION;
}

}  // namespace tannery
