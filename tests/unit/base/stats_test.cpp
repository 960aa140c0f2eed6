#include <catch2/catch.hpp>
#include <cmath>

#include "tannery/base/stats.hpp"

using namespace tannery;

// Reference values from scipy 1.10.1 (Debian python3-scipy), computed on 2026-12-02 with
//   beta.ppf(0.025, k, n-k+1), beta.ppf(0.975, k+1, n-k)   (scipy.stats)
//   betainc(a, b, x)                                       (scipy.special)
//   norm.ppf(p)                                            (scipy.stats)
TEST_CASE("Clopper-Pearson intervals match scipy's beta quantiles", "[stats]") {
  struct Row {
    std::uint64_t k, n;
    double low, high;
  };
  const Row rows[] = {
      {0, 100, 0.0, 0.03621669264517641},
      {1, 100, 0.00025314603297742064, 0.054459385392080645},
      {5, 1000, 0.00162541951756276, 0.011629470559812147},
      {100, 12345, 0.006595565700449726, 0.00984367025579447},
      {50, 50, 0.9288782635358024, 1.0},
      {3, 10000000, 6.186721656250593e-08, 8.767270541303173e-07},
  };
  for (const Row& r : rows) {
    const Interval iv = clopper_pearson(r.k, r.n, 0.95);
    INFO("k " << r.k << " n " << r.n);
    CHECK(iv.low == Approx(r.low).epsilon(1e-9).margin(1e-300));
    CHECK(iv.high == Approx(r.high).epsilon(1e-9));
  }
}

TEST_CASE("regularized incomplete beta and the normal quantile match scipy", "[stats]") {
  CHECK(incomplete_beta(2.5, 3.5, 0.3) == Approx(0.2967529892956661).epsilon(1e-12));
  CHECK(incomplete_beta(100, 2000, 0.05) == Approx(0.7037440459355985).epsilon(1e-10));
  CHECK(incomplete_beta(0.5, 0.5, 0.999) == Approx(0.9798649583666225).epsilon(1e-12));
  CHECK(normal_quantile(0.975) == Approx(1.959963984540054).epsilon(1e-12));
  CHECK(normal_quantile(1e-9) == Approx(-5.9978070150076865).epsilon(1e-10));
}

TEST_CASE("clustered BER interval: wider when errors cluster, capped by FER", "[stats]") {
  // Same total of 100 bit errors in 10000 frames of 100 bits: spread one per frame, or ten per
  // frame.
  const Interval spread = clustered_ber_interval(10000, 100, 100, 100.0, 0.95, 1.0);
  const Interval clustered = clustered_ber_interval(10000, 100, 100, 1000.0, 0.95, 1.0);
  CHECK(spread.high - spread.low < clustered.high - clustered.low);
  CHECK(clustered_ber_interval(100, 100, 0, 0, 0.95, 0.03).high == 0.03);
}
