// Any bytes as the value of each setting with its own syntax: sweeps, fixed-point formats,
// degree fractions and degree pairs, counts and reals. A tannery::Error (or an empty result)
// is the only acceptable failure; what is accepted must be what the syntax promises.
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <string>

#include "tannery/decode/decoder.hpp"
#include "tannery/error.hpp"
#include "tannery/parse.hpp"
#include "tannery/sim/simulator.hpp"
#include "tannery/theory/density_evolution.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  try {
    for (double v : tannery::parse_sweep(text))
      if (!std::isfinite(v)) std::abort();
  } catch (const tannery::Error&) {
  }
  if (const auto q = tannery::parse_quantization(text)) {
    // The spec written back reads as the same format.
    const auto again = tannery::parse_quantization(tannery::quantization_spec(*q));
    if (!again || tannery::quantization_spec(*again) != tannery::quantization_spec(*q))
      std::abort();
  }
  try {
    for (auto [degree, value] : tannery::parse_degree_map(text, "fuzz"))
      if (degree == 0 || !(value >= 0) || !std::isfinite(value)) std::abort();
  } catch (const tannery::Error&) {
  }
  try {
    const auto [dv, dc] = tannery::parse_degree_pair(text, "fuzz");
    if (dv == 0 || dc == 0) std::abort();
  } catch (const tannery::Error&) {
  }
  if (const auto r = tannery::parse_real(text); r && !std::isfinite(*r)) std::abort();
  (void)tannery::parse_count(text);
  return 0;
}
