// Any bytes as a puncture map for a code of length 1..4096 (taken from the first two bytes): a
// tannery::Error is the only acceptable failure, a map that is read covers exactly n positions,
// and converting a frame through it puts every received value and every known position in place.
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <vector>

#include "tannery/error.hpp"
#include "tannery/io/capture.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 2) return 0;
  const std::size_t n = 1 + ((std::size_t{data[0]} << 8 | data[1]) & 4095);
  try {
    const auto map = tannery::parse_puncture_map(
        std::string(reinterpret_cast<const char*>(data + 2), size - 2), "fuzz", n);
    if (map.state.size() != n || map.transmitted() == 0 || map.transmitted() > n) std::abort();
    const tannery::SampleConverter converter(map, tannery::SampleMeaning::llr_inverted);
    std::vector<double> values(converter.received(), 1.0), llr(n);
    converter.convert(values, llr);
    for (std::size_t i = 0; i < n; ++i) {
      const double want = map.state[i] == tannery::PunctureMap::sent        ? -1.0
                          : map.state[i] == tannery::PunctureMap::punctured ? 0.0
                                                                            : HUGE_VAL;
      if (llr[i] != want) std::abort();
    }
  } catch (const tannery::Error&) {
  }
  return 0;
}
