// SHA-256 (FIPS 180-4), for recording exactly which code file a result came from.
#pragma once

#include <string>
#include <string_view>

namespace tannery {

// Lower-case hex digest of the bytes.
std::string sha256_hex(std::string_view data);

}  // namespace tannery
