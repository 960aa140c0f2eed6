#include <fmt/format.h>
#include <catch2/catch.hpp>

#include <cmath>

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

TEST_CASE("modulation capacities: BPSK and QPSK against the binary-input AWGN capacity",
          "[capacity]") {
  const Constellation bpsk = Constellation::standard(ModulationKind::bpsk);
  const Constellation qpsk = Constellation::standard(ModulationKind::qpsk);
  for (double esn0 : {-5.0, 0.0, 3.0, 8.0}) {
    // BPSK: both capacities are the binary-input AWGN capacity (composite Simpson rule, an
    // independent integration), sigma^2 = 1 / (2 Es/N0).
    const double sigma = awgn_sigma(esn0, SnrMeasure::esn0, 1.0);
    for (auto kind : {CapacityKind::coded_modulation, CapacityKind::bicm})
      CHECK(modulation_capacity(bpsk, kind, ChannelKind::awgn, esn0) ==
            Approx(biawgn_capacity(sigma)).margin(1e-10));
    // Gray QPSK is two BPSKs with half the energy each (common practice).
    CHECK(modulation_capacity(qpsk, CapacityKind::coded_modulation, ChannelKind::awgn, esn0) ==
          Approx(2 * biawgn_capacity(sigma * std::sqrt(2.0))).margin(1e-10));
  }
  // So QPSK at 1 information bit per symbol has BPSK's rate-1/2 Shannon limit, 0.187 dB
  // (common practice).
  CHECK(modulation_shannon_limit_ebn0_db(qpsk, CapacityKind::bicm, ChannelKind::awgn, 1.0) ==
        Approx(biawgn_shannon_limit_ebn0_db(0.5)).margin(1e-6));
}

TEST_CASE("modulation capacities: the general two-dimensional rule agrees with the PAM split",
          "[capacity]") {
  // A 16-QAM written as a custom constellation file takes the general two-dimensional quadrature;
  // the standard one is split into two 4-PAMs. Both must give the same numbers.
  const Constellation standard = Constellation::standard(ModulationKind::qam16);
  std::string text;
  for (std::uint32_t label = 0; label < 16; ++label) {
    text += fmt::format("{:04b} {:.17g} {:.17g}\n", label, standard.point(label).real(),
                        standard.point(label).imag());
  }
  const Constellation custom = Constellation::parse(text, "16qam.txt");
  for (auto kind : {CapacityKind::coded_modulation, CapacityKind::bicm}) {
    for (double esn0 : {0.0, 8.0}) {
      CHECK(modulation_capacity(custom, kind, ChannelKind::awgn, esn0) ==
            Approx(modulation_capacity(standard, kind, ChannelKind::awgn, esn0)).margin(1e-9));
    }
  }
}

TEST_CASE("modulation capacities: ordering, ceilings and the fading loss", "[capacity]") {
  // Common practice: BICM <= coded modulation <= Gaussian-input log2(1 + Es/N0) (complex),
  // both reaching m bits at high SNR; ergodic Rayleigh below AWGN at the same average SNR.
  for (auto k : {ModulationKind::qam16, ModulationKind::qam64, ModulationKind::qam256}) {
    const Constellation c = Constellation::standard(k);
    for (double esn0 : {0.0, 10.0, 20.0}) {
      const double cm =
          modulation_capacity(c, CapacityKind::coded_modulation, ChannelKind::awgn, esn0);
      const double bicm = modulation_capacity(c, CapacityKind::bicm, ChannelKind::awgn, esn0);
      CHECK(bicm <= cm + 1e-12);
      CHECK(cm <= std::log2(1 + std::pow(10.0, esn0 / 10)));
      CHECK(modulation_capacity(c, CapacityKind::bicm, ChannelKind::rayleigh, esn0) < bicm);
    }
    CHECK(modulation_capacity(c, CapacityKind::bicm, ChannelKind::awgn, 45.0) ==
          Approx(c.bits()).margin(1e-9));
  }
  CHECK_THROWS_WITH(modulation_shannon_limit_ebn0_db(Constellation::standard(ModulationKind::qpsk),
                                                     CapacityKind::bicm, ChannelKind::awgn, 2.5),
                    Catch::Contains("0 < rate < 2"));
}
