// Statistics for error-rate estimates.
#pragma once

#include <cstdint>

namespace tannery {

// Regularized incomplete beta function I_x(a, b), a, b > 0, x in [0, 1] (continued fraction).
double incomplete_beta(double a, double b, double x);
// Inverse of I_x(a, b) in x, by bisection to full double precision.
double beta_quantile(double p, double a, double b);
// Standard normal quantile (inverse CDF), p in (0, 1).
double normal_quantile(double p);
double normal_tail(double x);  // Q(x) = P(Z > x)

struct Interval {
  double low = 0, high = 1;
};
// Exact (Clopper-Pearson) two-sided interval for a binomial proportion: k successes in n trials
// at confidence level (e.g. 0.95).
Interval clopper_pearson(std::uint64_t k, std::uint64_t n, double confidence);

// Bit error rate with errors clustered in frames: the ratio estimator sum(e_f) / (N k) with the
// variance from the per-frame counts e_f (a cluster-robust normal interval), high end capped by
// the frame-error interval's high end (BER <= FER always).
Interval clustered_ber_interval(std::uint64_t frames, std::uint64_t bits_per_frame,
                                std::uint64_t bit_errors, double bit_error_squares,
                                double confidence, double fer_high);

// One-sided p-value that the first of two binomial proportions is larger: Fisher's exact test,
// P(X >= x1) for X hypergeometric with n1 + n2 trials, x1 + x2 successes and n1 draws.
double fisher_greater_p(std::uint64_t x1, std::uint64_t n1, std::uint64_t x2, std::uint64_t n2);
// P(X >= k) for X ~ Binomial(n, 1/2): the one-sided exact McNemar test on discordant pairs.
double binomial_half_upper_p(std::uint64_t k, std::uint64_t n);

}  // namespace tannery
