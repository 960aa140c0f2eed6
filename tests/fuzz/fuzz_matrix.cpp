// Any bytes through every matrix reader, detection and the protograph table reader: a
// tannery::Error is the only acceptable failure. A matrix that is read must also come back
// unchanged from every format that can hold it (what is written can be read).
#include <cstdint>
#include <cstdlib>
#include <sstream>
#include <string>

#include "tannery/code/construct.hpp"
#include "tannery/error.hpp"
#include "tannery/io/matrix_io.hpp"

namespace {

void round_trip(const tannery::Code& code) {
  if (code.n() > 2000 || code.m() > 2000 || code.edges() > 20000) return;
  for (int f = 0; f < 5; ++f) {
    const auto format = static_cast<tannery::MatrixFormat>(f);
    std::ostringstream out;
    try {
      tannery::write_code(code, format, out);  // may refuse: qc without structure, dense n = 0
    } catch (const tannery::Error&) {
      continue;
    }
    tannery::ReadOptions options;
    options.format = format;
    if (!(tannery::parse_code(out.str(), "round trip", options) == code)) std::abort();
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  for (int f = -1; f < 5; ++f) {
    tannery::ReadOptions options;
    if (f >= 0) options.format = static_cast<tannery::MatrixFormat>(f);
    if (f == 3) options.lifting = 7;
    try {
      round_trip(tannery::parse_code(text, "fuzz", options));
    } catch (const tannery::Error&) {
    }
  }
  try {
    (void)tannery::parse_protograph(text, "fuzz");
  } catch (const tannery::Error&) {
  }
  return 0;
}
