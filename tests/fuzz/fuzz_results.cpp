// Any bytes as a results file.
#include <cstdint>
#include <string>

#include "tannery/error.hpp"
#include "tannery/report/results.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    (void)tannery::parse_results_json(std::string(reinterpret_cast<const char*>(data), size),
                                      "fuzz");
  } catch (const tannery::Error&) {
  }
  return 0;
}
