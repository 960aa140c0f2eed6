#include "tannery/io/capture.hpp"

#include <bit>
#include <cstdint>

namespace tannery {

void append_f32_le(std::string& out, std::span<const float> values) {
  out.reserve(out.size() + 4 * values.size());
  for (float v : values) {
    const auto bits = std::bit_cast<std::uint32_t>(v);
    for (int b = 0; b < 4; ++b) out.push_back(static_cast<char>((bits >> (8 * b)) & 0xffu));
  }
}

}  // namespace tannery
