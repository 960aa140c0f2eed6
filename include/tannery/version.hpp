// The library's version and the commit it was built from.
#pragma once

#include <string_view>

namespace tannery {

// "MAJOR.MINOR.PATCH+gCOMMIT" (12 hex digits, ".dirty" when built with uncommitted changes;
// "+unknown" outside a git tree). Results files record it, so runs of different builds differ.
std::string_view version() noexcept;

}  // namespace tannery
