// Any bytes as a scenario file (TOML): a tannery::Error is the only acceptable failure.
#include <cstdint>
#include <string>

#include "tannery/error.hpp"
#include "tannery/report/scenario.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    (void)tannery::parse_scenario(std::string(reinterpret_cast<const char*>(data), size),
                                  "fuzz/scenario.toml");
  } catch (const tannery::Error&) {
  }
  return 0;
}
