// Pieces shared by the threshold computations of ensembles and protographs.
#pragma once

#include <cmath>
#include <string>
#include <utility>

#include "tannery/channel/channel.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/density_evolution.hpp"

namespace tannery::detail {

// Bisection for the largest channel value (worse is larger) at which decodes(value) holds.
template <class F>
double bisect(double good, double bad, double tolerance, F decodes) {
  while (bad - good > tolerance) {
    const double mid = 0.5 * (good + bad);
    (decodes(mid) ? good : bad) = mid;
  }
  return 0.5 * (good + bad);
}

// An AWGN threshold sigma at a design rate, with its Eb/N0, the Shannon limit and the gap.
inline ThresholdResult awgn_threshold_result(double sigma, double rate, std::string method,
                                             double accuracy) {
  ThresholdResult r;
  r.threshold = sigma;
  r.rate = rate;
  r.ebn0_db = 10 * std::log10(1 / (2 * rate * sigma * sigma));
  const double limit_db = biawgn_shannon_limit_ebn0_db(rate);
  r.limit = awgn_sigma(limit_db, SnrMeasure::ebn0, rate);
  r.gap_db = r.ebn0_db - limit_db;
  r.method = std::move(method);
  r.accuracy = accuracy;
  return r;
}

}  // namespace tannery::detail
