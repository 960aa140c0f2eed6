// Any bytes as a custom constellation file: a tannery::Error is the only acceptable failure; a
// constellation that is read has 2^m distinct points of unit average energy, and demapping
// received points with both demappers gives finite LLRs whose signs agree where the exact one is
// large.
#include <cmath>
#include <complex>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <vector>

#include "tannery/channel/modulation.hpp"
#include "tannery/error.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    const auto c = tannery::Constellation::parse(
        std::string(reinterpret_cast<const char*>(data), size), "fuzz");
    if (c.size() != (std::size_t{1} << c.bits()) || c.bits() > 8) std::abort();
    double energy = 0;
    for (const auto& x : c.points()) energy += std::norm(x);
    if (std::abs(energy / static_cast<double>(c.size()) - 1) > 1e-9) std::abort();
    // Every point, and a point off the constellation, received with noise variance 0.1.
    std::vector<double> in_phase, quadrature;
    for (const auto& x : c.points()) {
      in_phase.push_back(x.real());
      if (c.complex()) quadrature.push_back(x.imag());
    }
    in_phase.push_back(0.3);
    if (c.complex()) quadrature.push_back(-0.7);
    std::vector<double> exact(in_phase.size() * c.bits()), max_log(exact.size());
    tannery::demap(c, tannery::Demapper::exact, in_phase, quadrature, {}, 0.1, exact);
    tannery::demap(c, tannery::Demapper::max_log, in_phase, quadrature, {}, 0.1, max_log);
    for (std::size_t i = 0; i < exact.size(); ++i) {
      if (!std::isfinite(exact[i]) || !std::isfinite(max_log[i])) std::abort();
      if (std::abs(exact[i]) > 10 && exact[i] * max_log[i] < 0) std::abort();
    }
  } catch (const tannery::Error&) {
  }
  return 0;
}
