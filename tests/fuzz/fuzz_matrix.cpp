// Any bytes through every matrix reader: a tannery::Error is the only acceptable failure.
#include <cstdint>
#include <string>

#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  for (int f = -1; f < 5; ++f) {
    tannery::ReadOptions options;
    if (f >= 0) options.format = static_cast<tannery::MatrixFormat>(f);
    if (f == 3) options.lifting = 7;
    try {
      (void)tannery::parse_code(text, "fuzz", options);
    } catch (const tannery::Error&) {
    }
  }
  return 0;
}
