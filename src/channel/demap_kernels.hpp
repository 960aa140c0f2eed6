// The SIMD demapper (private to the library); tannery/channel/modulation.hpp defines what it
// computes.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "tannery/channel/modulation.hpp"

namespace tannery::detail {

// Points of the constellation the kernel demaps, by label: in-phase levels, and quadrature ones
// when the metric is two-dimensional (empty otherwise).
struct DemapTable {
  unsigned bits = 1;
  std::vector<double> in_phase, quadrature;
};

// count symbols: received in_phase[c] (and quadrature[c] for a two-dimensional table), amplitude
// a[c] (nullptr: 1), noise variance sigma^2 per real dimension; bit b of symbol c goes to
// out[b * count + c].
void demap_symbols(const DemapTable& table, bool exact, std::size_t count, const double* in_phase,
                   const double* quadrature, const double* amplitude, double noise_variance,
                   double* out);

// demap() with the LLRs by bit plane: bit b of symbol s goes to planes[b * count + s].
void demap_planes(const Constellation& c, Demapper demapper, std::span<const double> in_phase,
                  std::span<const double> quadrature, std::span<const double> amplitude,
                  double noise_variance, double* planes);

}  // namespace tannery::detail
