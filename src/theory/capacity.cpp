#include "tannery/theory/capacity.hpp"

#include <cmath>
#include <cstddef>
#include <utility>

#include "tannery/base/stats.hpp"
#include "tannery/channel/channel.hpp"
#include "tannery/error.hpp"

namespace tannery {

namespace {

// log2(1 + e^x) without overflow.
double log2_one_plus_exp(double x) {
  const double ln = x > 0 ? x + std::log1p(std::exp(-x)) : std::log1p(std::exp(x));
  return ln / std::log(2.0);
}

}  // namespace

double biawgn_capacity(double sigma) {
  const double s2 = sigma * sigma;
  const int intervals = 4000;  // even
  const double lo = 1 - 14 * sigma, hi = 1 + 14 * sigma, h = (hi - lo) / intervals;
  const double norm = 1.0 / (sigma * std::sqrt(2 * M_PI));
  double sum = 0;
  for (int i = 0; i <= intervals; ++i) {
    const double y = lo + i * h;
    const double density = norm * std::exp(-(y - 1) * (y - 1) / (2 * s2));
    const double f = density * log2_one_plus_exp(-2 * y / s2);
    sum += f * (i == 0 || i == intervals ? 1 : (i % 2 ? 4 : 2));
  }
  return 1 - sum * h / 3;
}

double biawgn_shannon_limit_ebn0_db(double rate) {
  double lo = -10, hi = 30;  // Eb/N0 in dB; capacity increases with it
  for (int i = 0; i < 100; ++i) {
    const double mid = 0.5 * (lo + hi);
    (biawgn_capacity(awgn_sigma(mid, SnrMeasure::ebn0, rate)) < rate ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

double binary_entropy(double p) {
  if (p <= 0 || p >= 1) return 0;
  return -p * std::log2(p) - (1 - p) * std::log2(1 - p);
}
double bsc_capacity(double p) {
  return 1 - binary_entropy(p);
}
double bec_capacity(double epsilon) {
  return 1 - epsilon;
}

double bsc_limit_crossover(double rate) {
  double lo = 0, hi = 0.5;
  for (int i = 0; i < 100; ++i) {
    const double mid = 0.5 * (lo + hi);
    (bsc_capacity(mid) > rate ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

double uncoded_bpsk_ber(double ebn0_db) {
  return normal_tail(std::sqrt(2 * std::pow(10.0, ebn0_db / 10)));
}

std::pair<double, double> capacity_dispersion(ChannelKind kind, double value) {
  switch (kind) {
    case ChannelKind::bec:
      return {1 - value, value * (1 - value)};
    case ChannelKind::bsc: {
      const double l = value > 0 && value < 1 ? std::log2((1 - value) / value) : 0;
      return {bsc_capacity(value), value * (1 - value) * l * l};
    }
    case ChannelKind::awgn: {
      // i(x; y) = 1 - log2(1 + exp(-2Y/sigma^2)) for X = +1, Y ~ N(1, sigma^2) (symmetric channel).
      const double s2 = value * value;
      const int steps = 4000;
      const double lo = 1 - 14 * value, hi = 1 + 14 * value, h = (hi - lo) / steps;
      double m1 = 0, m2 = 0;
      for (int i = 0; i <= steps; ++i) {
        const double y = lo + i * h;
        const double w = (i == 0 || i == steps ? 1 : (i % 2 ? 4 : 2)) *
                         std::exp(-(y - 1) * (y - 1) / (2 * s2)) / (value * std::sqrt(2 * M_PI));
        const double info = 1 - log2_one_plus_exp(-2 * y / s2);
        m1 += w * info;
        m2 += w * info * info;
      }
      m1 *= h / 3;
      m2 *= h / 3;
      return {m1, std::max(0.0, m2 - m1 * m1)};
    }
    case ChannelKind::rayleigh:
      break;
  }
  throw Error("capacity and dispersion: BPSK over AWGN, the BSC and the BEC only");
}

double normal_approximation_fer(ChannelKind kind, double value, std::size_t n, std::size_t k) {
  const auto [c, v] = capacity_dispersion(kind, value);
  const double nd = static_cast<double>(n);
  if (v <= 0) return static_cast<double>(k) < nd * c ? 0.0 : 1.0;
  return normal_tail((nd * c - static_cast<double>(k) + 0.5 * std::log2(nd)) / std::sqrt(nd * v));
}

}  // namespace tannery
