#include <catch2/catch.hpp>

#include "tannery/theory/capacity.hpp"

using namespace tannery;

TEST_CASE("BPSK-AWGN Shannon limits at rates 1/2 and 3/4", "[theory]") {
  // Common practice: 0.187 dB at rate 1/2 and 1.626 dB at rate 3/4 for binary-input AWGN.
  CHECK(biawgn_shannon_limit_ebn0_db(0.5) == Approx(0.187).margin(0.0015));
  CHECK(biawgn_shannon_limit_ebn0_db(0.75) == Approx(1.626).margin(0.0015));
}

TEST_CASE("BSC and BEC capacities", "[theory]") {
  // Cover & Thomas, Elements of Information Theory: C_BSC = 1 - h2(p), C_BEC = 1 - epsilon.
  CHECK(bsc_capacity(0.11) == Approx(1 - (-0.11 * std::log2(0.11) - 0.89 * std::log2(0.89))));
  CHECK(bsc_capacity(0.5) == Approx(0.0).margin(1e-15));
  CHECK(bsc_limit_crossover(0.5) == Approx(0.110028).margin(1e-6));  // h2^-1(1/2), common practice
  CHECK(bec_capacity(0.25) == 0.75);
  CHECK(biawgn_capacity(1e-3) == Approx(1.0).margin(1e-12));
}

TEST_CASE("normal approximation of the finite-length limit", "[theory]") {
  // Polyanskiy, Poor, Verdu 2010: BEC capacity 1 - eps, dispersion eps (1 - eps); at the
  // erasure probability where n C + log2(n)/2 = k the approximation gives FER 1/2.
  const std::size_t n = 1000, k = 500;
  const double eps = 1 - (static_cast<double>(k) - 0.5 * std::log2(1000.0)) / 1000.0;
  CHECK(normal_approximation_fer(ChannelKind::bec, eps, n, k) == Approx(0.5).margin(1e-12));
  // AWGN: capacity from the dispersion routine equals the capacity routine.
  CHECK(capacity_dispersion(ChannelKind::awgn, 0.8).first ==
        Approx(biawgn_capacity(0.8)).epsilon(1e-9));
  // Better channel, lower FER.
  CHECK(normal_approximation_fer(ChannelKind::awgn, 0.7, 648, 324) <
        normal_approximation_fer(ChannelKind::awgn, 0.8, 648, 324));
}
