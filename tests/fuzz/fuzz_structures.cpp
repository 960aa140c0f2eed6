// Any bytes as a structures file (floor search's output) for the (7,4) Hamming code, and the
// file written back from what was read.
#include <cstdint>
#include <string>

#include "tannery/error.hpp"
#include "tannery/report/structures.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const tannery::Code code = tannery::Code::from_checks(
      7, {{0, 2, 4, 6}, {1, 2, 5, 6}, {3, 4, 5, 6}});  // codes/hamming-7-4
  try {
    const tannery::StructuresRecord r = tannery::parse_structures_json(
        std::string(reinterpret_cast<const char*>(data), size), "fuzz", code);
    (void)tannery::structures_json(r);
    (void)tannery::structures_text(r.result);
  } catch (const tannery::Error&) {
  }
  return 0;
}
