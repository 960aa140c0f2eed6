#include "tannery/base/stats.hpp"

#include <algorithm>
#include <cmath>

namespace tannery {

namespace {

// Continued fraction for I_x(a, b) (Abramowitz & Stegun 26.5.8), evaluated by the modified
// Lentz method; converges fast for x < (a + 1) / (a + b + 2).
double beta_fraction(double a, double b, double x) {
  constexpr double kTiny = 1e-300;
  double c = 1.0, d = 1.0 - (a + b) * x / (a + 1.0);
  if (std::abs(d) < kTiny) d = kTiny;
  d = 1.0 / d;
  double h = d;
  for (int m = 1; m <= 10000; ++m) {
    const double dm = m;
    double num = dm * (b - dm) * x / ((a + 2 * dm - 1) * (a + 2 * dm));
    for (int pass = 0; pass < 2; ++pass) {
      d = 1.0 + num * d;
      if (std::abs(d) < kTiny) d = kTiny;
      c = 1.0 + num / c;
      if (std::abs(c) < kTiny) c = kTiny;
      d = 1.0 / d;
      const double delta = c * d;
      h *= delta;
      if (pass == 1 && std::abs(delta - 1.0) < 1e-16) return h;
      num = -(a + dm) * (a + b + dm) * x / ((a + 2 * dm) * (a + 2 * dm + 1));
    }
  }
  return h;
}

// lgamma(x + a) - lgamma(x) without the cancellation of two huge values when x is large:
// Stirling's series (Abramowitz & Stegun 6.1.41) for both terms, differenced analytically.
double log_gamma_ratio(double a, double x) {
  if (x < 10) return std::lgamma(x + a) - std::lgamma(x);
  auto correction = [](double z) {
    const double z2 = z * z;
    return 1 / (12 * z) - 1 / (360 * z * z2) + 1 / (1260 * z2 * z2 * z) -
           1 / (1680 * z2 * z2 * z2 * z);
  };
  return (x - 0.5) * std::log1p(a / x) + a * std::log(x + a) - a + correction(x + a) -
         correction(x);
}

}  // namespace

double incomplete_beta(double a, double b, double x) {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const double small = std::min(a, b), large = std::max(a, b);
  const double log_front =
      log_gamma_ratio(small, large) - std::lgamma(small) + a * std::log(x) + b * std::log1p(-x);
  const double front = std::exp(log_front);
  if (x < (a + 1) / (a + b + 2)) return front * beta_fraction(a, b, x) / a;
  return 1.0 - front * beta_fraction(b, a, 1.0 - x) / b;
}

double beta_quantile(double p, double a, double b) {
  double lo = 0, hi = 1;
  for (int i = 0; i < 1100 && lo < hi; ++i) {
    const double mid =
        i < 60 ? 0.5 * (lo + hi) : std::sqrt(lo * hi);  // geometric steps resolve tiny quantiles
    if (mid <= lo || mid >= hi) break;
    (incomplete_beta(a, b, mid) < p ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

double normal_tail(double x) {
  return 0.5 * std::erfc(x / std::sqrt(2.0));
}

double normal_quantile(double p) {
  // Bisection on the CDF, evaluated as 0.5 erfc(-x / sqrt 2) so lower tails keep full precision.
  double lo = -40, hi = 40;
  for (int i = 0; i < 200; ++i) {
    const double mid = 0.5 * (lo + hi);
    (normal_tail(-mid) < p ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

Interval clopper_pearson(std::uint64_t k, std::uint64_t n, double confidence) {
  if (n == 0) return {0, 1};
  const double alpha = 1 - confidence;
  const double kd = static_cast<double>(k), nd = static_cast<double>(n);
  Interval r;
  r.low = k == 0 ? 0.0 : beta_quantile(alpha / 2, kd, nd - kd + 1);
  r.high = k == n ? 1.0 : beta_quantile(1 - alpha / 2, kd + 1, nd - kd);
  return r;
}

Interval clustered_ber_interval(std::uint64_t frames, std::uint64_t bits_per_frame,
                                std::uint64_t bit_errors, double bit_error_squares,
                                double confidence, double fer_high) {
  if (frames == 0 || bits_per_frame == 0) return {0, 1};
  const double nf = static_cast<double>(frames), kb = static_cast<double>(bits_per_frame);
  const double mean = static_cast<double>(bit_errors) / nf;
  const double ber = mean / kb;
  if (bit_errors == 0) return {0, std::min(1.0, fer_high)};
  const double variance =
      frames > 1 ? std::max(0.0, (bit_error_squares - nf * mean * mean) / (nf - 1)) : mean * mean;
  const double half = normal_quantile(1 - (1 - confidence) / 2) * std::sqrt(variance / nf) / kb;
  return {std::max(0.0, ber - half), std::min({1.0, ber + half, fer_high})};
}

namespace {

double log_choose(double n, double k) {
  return std::lgamma(n + 1) - std::lgamma(k + 1) - std::lgamma(n - k + 1);
}

// log(exp(a) + exp(b)) without overflow.
double log_add(double a, double b) {
  if (a < b) std::swap(a, b);
  return b == -INFINITY ? a : a + std::log1p(std::exp(b - a));
}

}  // namespace

double fisher_greater_p(std::uint64_t x1, std::uint64_t n1, std::uint64_t x2, std::uint64_t n2) {
  const double total = static_cast<double>(n1 + n2), successes = static_cast<double>(x1 + x2);
  const double draws = static_cast<double>(n1);
  const std::uint64_t top = std::min(x1 + x2, n1);
  const double log_all = log_choose(total, draws);
  double log_p = -INFINITY;
  for (std::uint64_t x = x1; x <= top; ++x) {
    const double xd = static_cast<double>(x);
    if (successes - xd > total - draws) continue;  // impossible split
    log_p = log_add(
        log_p, log_choose(successes, xd) + log_choose(total - successes, draws - xd) - log_all);
  }
  return std::min(1.0, std::exp(log_p));
}

double binomial_half_upper_p(std::uint64_t k, std::uint64_t n) {
  if (k == 0) return 1.0;
  double log_p = -INFINITY;
  const double nd = static_cast<double>(n), log_half = nd * std::log(0.5);
  for (std::uint64_t x = k; x <= n; ++x)
    log_p = log_add(log_p, log_choose(nd, static_cast<double>(x)) + log_half);
  return std::min(1.0, std::exp(log_p));
}

}  // namespace tannery
