#include "tannery/theory/capacity.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <complex>
#include <cstddef>
#include <limits>
#include <utility>
#include <vector>

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

struct Quadrature {
  std::vector<double> nodes, weights;
};

// Gauss quadrature for a weight with orthonormal polynomials p_0 = 1 / sqrt(mu0),
// b_(k+1) p_(k+1) = (x - a_k) p_k - b_k p_(k-1): the nodes are the roots of p_size, found by
// bisection between the sign changes on `grid` (fine enough to separate them), the weights
// the Christoffel numbers 1 / sum_(k < size) p_k(x)^2.
Quadrature gauss_rule(int size, double mu0, double (*a)(int), double (*b)(int),
                      const std::vector<double>& grid) {
  auto polynomials = [&](double x, double& sum_of_squares) {
    double previous = 0, current = 1 / std::sqrt(mu0);
    sum_of_squares = 0;
    for (int k = 0; k < size; ++k) {
      sum_of_squares += current * current;
      const double next = ((x - a(k)) * current - (k > 0 ? b(k) * previous : 0.0)) / b(k + 1);
      previous = current;
      current = next;
    }
    return current;  // p_size(x)
  };
  Quadrature q;
  double unused = 0;
  for (std::size_t g = 0; g + 1 < grid.size(); ++g) {
    double lo = grid[g], hi = grid[g + 1];
    const double at_lo = polynomials(lo, unused);
    if ((at_lo > 0) == (polynomials(hi, unused) > 0)) continue;
    for (int i = 0; i < 200 && lo < hi; ++i) {
      const double mid = 0.5 * (lo + hi);
      if (mid <= lo || mid >= hi) break;
      ((polynomials(mid, unused) > 0) == (at_lo > 0) ? lo : hi) = mid;
    }
    const double x = 0.5 * (lo + hi);
    double sum_of_squares = 0;
    polynomials(x, sum_of_squares);
    q.nodes.push_back(x);
    q.weights.push_back(1 / sum_of_squares);
  }
  if (q.nodes.size() != static_cast<std::size_t>(size))
    throw Error("quadrature: the grid did not separate the nodes");
  return q;
}

constexpr int kQuadratureNodes = 128;

// Weight e^(-t^2) on the real line (physicists' Hermite: a_k = 0, b_k = sqrt(k / 2)); the
// nodes of 64 lie within +-11, at least 0.27 apart.
const Quadrature& gauss_hermite() {
  static const Quadrature q = [] {
    std::vector<double> grid;
    for (int i = -1700; i <= 1700; ++i) grid.push_back(i * 0.01 + 0.001);
    return gauss_rule(
        kQuadratureNodes, std::sqrt(M_PI), [](int) { return 0.0; },
        [](int k) { return std::sqrt(k / 2.0); }, grid);
  }();
  return q;
}
// Weight e^(-t) on [0, inf) (Laguerre: a_k = 2k + 1, b_k = k); the nodes of 64 lie in
// (0.02, 240), their square roots at least 0.07 apart.
const Quadrature& gauss_laguerre() {
  static const Quadrature q = [] {
    std::vector<double> grid;
    for (int i = 1; i <= 24000; ++i) grid.push_back(i * 0.001 * i * 0.001);
    return gauss_rule(
        kQuadratureNodes, 1.0, [](int k) { return 2.0 * k + 1; },
        [](int k) { return static_cast<double>(k); }, grid);
  }();
  return q;
}

// E over the noise of log2 sum_j exp(-(|x_i - x_j + z|^2 - |z|^2) / 2 sigma^2) over the points j
// in `among` (a subset holding i), averaged over i; points by label, one or two dimensions.
// Gauss-Hermite: z = sqrt(2) sigma t per dimension.
double mean_log_sum(const std::vector<std::complex<double>>& points, bool complex, double sigma,
                    const std::vector<std::vector<std::uint32_t>>& subsets_of) {
  const Quadrature& gh = gauss_hermite();
  const std::size_t k = gh.nodes.size(), q_nodes = complex ? k : 1;
  const double s2 = sigma * sigma;
  double total = 0;
  std::vector<double> exponents;
  for (std::size_t i = 0; i < points.size(); ++i) {
    const std::vector<std::uint32_t>& among = subsets_of[i];
    exponents.resize(among.size());
    double expected = 0;
    for (std::size_t u = 0; u < k; ++u) {
      if (gh.weights[u] < 1e-300) continue;  // no contribution in double precision
      for (std::size_t v = 0; v < q_nodes; ++v) {
        const std::complex<double> z(std::sqrt(2.0) * sigma * gh.nodes[u],
                                     complex ? std::sqrt(2.0) * sigma * gh.nodes[v] : 0.0);
        const double weight =
            gh.weights[u] / std::sqrt(M_PI) * (complex ? gh.weights[v] / std::sqrt(M_PI) : 1.0);
        double top = -std::numeric_limits<double>::infinity();
        for (std::size_t j = 0; j < among.size(); ++j) {
          exponents[j] = -(std::norm(points[i] - points[among[j]] + z) - std::norm(z)) / (2 * s2);
          top = std::max(top, exponents[j]);
        }
        double sum = 0;
        for (double e : exponents) sum += std::exp(e - top);
        expected += weight * (top + std::log(sum)) / std::log(2.0);
      }
    }
    total += expected;
  }
  return total / static_cast<double>(points.size());
}

// The AWGN capacity of a set of points (unit energy overall) at noise sigma per dimension.
double points_capacity(const std::vector<std::complex<double>>& points, bool complex, unsigned bits,
                       CapacityKind kind, double sigma) {
  const std::size_t size = points.size();
  std::vector<std::vector<std::uint32_t>> all(size);
  for (auto& a : all) {
    for (std::uint32_t j = 0; j < size; ++j) a.push_back(j);
  }
  const double whole = mean_log_sum(points, complex, sigma, all);
  if (kind == CapacityKind::coded_modulation) return bits - whole;
  // BICM: sum over bits b of 1 - E[log2 sum_all / sum_{same bit b}] = bits - sum_b (whole -
  // same_b).
  double capacity = bits;
  for (unsigned b = 0; b < bits; ++b) {
    std::vector<std::vector<std::uint32_t>> same(size);
    for (std::uint32_t i = 0; i < size; ++i) {
      for (std::uint32_t j = 0; j < size; ++j) {
        if (((i ^ j) >> (bits - 1 - b) & 1u) == 0) same[i].push_back(j);
      }
    }
    capacity -= whole - mean_log_sum(points, complex, sigma, same);
  }
  return capacity;
}

double awgn_modulation_capacity(const Constellation& c, CapacityKind kind, double sigma) {
  if (c.pam_bits() > 0 && c.complex()) {
    std::vector<std::complex<double>> pam;
    for (double level : c.pam_levels()) pam.emplace_back(level, 0.0);
    return 2 * points_capacity(pam, false, c.pam_bits(), kind, sigma);
  }
  return points_capacity(c.points(), c.complex(), c.bits(), kind, sigma);
}

}  // namespace

double modulation_capacity(const Constellation& c, CapacityKind kind, ChannelKind channel,
                           double esn0_db) {
  const double snr = std::pow(10.0, esn0_db / 10);
  if (channel == ChannelKind::awgn) return awgn_modulation_capacity(c, kind, std::sqrt(0.5 / snr));
  if (channel != ChannelKind::rayleigh)
    throw Error("modulation capacities: the awgn and rayleigh channels only");
  // a^2 = t ~ Exp(1): the AWGN capacity at t Es/N0, i.e. noise sigma / a.
  const Quadrature& gl = gauss_laguerre();
  double sum = 0;
  for (std::size_t i = 0; i < gl.nodes.size(); ++i) {
    // Nodes beyond t ~ 40 carry weights below 1e-17: bits x weight is below rounding.
    if (gl.weights[i] < 1e-17) continue;
    sum += gl.weights[i] * awgn_modulation_capacity(c, kind, std::sqrt(0.5 / (snr * gl.nodes[i])));
  }
  return sum;
}

double modulation_shannon_limit_ebn0_db(const Constellation& c, CapacityKind kind,
                                        ChannelKind channel, double rate) {
  if (!(rate > 0 && rate < c.bits())) {
    throw Error(
        fmt::format("a Shannon limit needs 0 < rate < {} bits per symbol, got {}", c.bits(), rate));
  }
  double lo = -10, hi = 60;       // Eb/N0 in dB; capacity increases with it
  for (int i = 0; i < 32; ++i) {  // 70 dB / 2^32: far below any figure quoted
    const double mid = 0.5 * (lo + hi);
    (modulation_capacity(c, kind, channel, esn0_db_from_ebn0(mid, rate)) < rate ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

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
