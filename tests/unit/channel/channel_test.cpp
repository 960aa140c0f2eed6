#include <catch2/catch.hpp>
#include <cmath>
#include <limits>
#include <vector>

#include "tannery/channel/channel.hpp"
#include "tannery/error.hpp"

using namespace tannery;

TEST_CASE("Eb/N0 and Es/N0 give the noise deviation of unit-energy BPSK", "[channel]") {
  // Proakis, Digital Communications: Es = R Eb, N0 = 2 sigma^2 with unit symbol energy, so
  // sigma^2 = 1 / (2 R Eb/N0). At 0 dB and R = 1/2: sigma = 1.
  CHECK(awgn_sigma(0.0, SnrMeasure::ebn0, 0.5) == Approx(1.0).epsilon(1e-15));
  CHECK(awgn_sigma(3.0, SnrMeasure::ebn0, 0.5) ==
        Approx(std::sqrt(1 / std::pow(10.0, 0.3))).epsilon(1e-15));
  // Es/N0 does not involve the rate: 0 dB -> sigma^2 = 1/2.
  CHECK(awgn_sigma(0.0, SnrMeasure::esn0, 0.25) == Approx(std::sqrt(0.5)).epsilon(1e-15));
  CHECK(esn0_db_from_ebn0(2.0, 0.5) == Approx(2.0 + 10 * std::log10(0.5)).epsilon(1e-15));
}

TEST_CASE("channel LLRs: 2y/sigma^2, log((1-p)/p), erasures at 0", "[channel]") {
  const std::vector<std::uint8_t> bits{0, 1, 0, 1};
  std::vector<double> llr(4);
  // AWGN: y = x + sigma z, x = +1 for 0; LLR = 2y/sigma^2 (common practice).
  transmit(ChannelPoint::awgn(0.5), bits, std::vector<double>{0.2, -0.4, 0, 1}, llr);
  CHECK(llr[0] == Approx(8 * (1 + 0.1)));
  CHECK(llr[1] == Approx(8 * (-1 - 0.2)));
  CHECK(llr[3] == Approx(8 * (-1 + 0.5)));
  // A decoder that assumes another sigma scales by 2 / assumed^2.
  transmit(ChannelPoint::awgn(0.5, 1.0), bits, std::vector<double>{0.2, -0.4, 0, 1}, llr);
  CHECK(llr[0] == Approx(2 * 1.1));
  // BSC: a uniform below p flips the bit; magnitude log((1-p)/p).
  transmit(ChannelPoint::bsc(0.1), bits, std::vector<double>{0.05, 0.5, 0.5, 0.09}, llr);
  const double m = std::log(9.0);
  CHECK(llr == std::vector<double>{-m, -m, m, m});
  // BEC: a uniform below epsilon erases (LLR 0), the rest are certain.
  transmit(ChannelPoint::bec(0.3), bits, std::vector<double>{0.1, 0.5, 0.9, 0.2}, llr);
  const double inf = std::numeric_limits<double>::infinity();
  CHECK(llr == std::vector<double>{0, -inf, inf, 0});
}

TEST_CASE("channel points refuse what cannot be represented, naming the setting", "[channel]") {
  CHECK_THROWS_WITH(ChannelPoint::bsc(0.6), Catch::Contains("must be in [0, 0.5], got 0.6"));
  CHECK_THROWS_WITH(ChannelPoint::bec(1.5), Catch::Contains("must be in [0, 1]"));
  CHECK_THROWS_AS(ChannelPoint::awgn(0.0), Error);
  CHECK_THROWS_AS(ChannelPoint::awgn(std::numeric_limits<double>::quiet_NaN()), Error);
  CHECK_THROWS_WITH(ChannelPoint::bsc(0.1, 0.7), Catch::Contains("assumed bsc crossover"));
  ChannelSpec spec;
  // Eb/N0 of 4000 dB: 10^400 overflows, sigma is 0 and the LLR scale 2/sigma^2 infinite.
  CHECK_THROWS_WITH(channel_point(spec, 4000.0, 0.5), Catch::Contains("outside what a simulation"));
  spec.kind = ChannelKind::bsc;
  spec.snr_offset_db = 1;
  CHECK_THROWS_WITH(validate(spec), Catch::Contains("awgn and rayleigh channels only"));
  spec.snr_offset_db = 0;
  spec.assumed_crossover = 0.2;
  CHECK(channel_point(spec, 0.1, 0.5).assumed_value() == 0.2);
  spec.kind = ChannelKind::bec;
  CHECK_THROWS_WITH(validate(spec), Catch::Contains("bsc channel only"));
}

TEST_CASE("an SNR offset makes the decoder assume a better channel", "[channel]") {
  ChannelSpec spec;
  spec.snr_offset_db = 1.0;
  const ChannelPoint p = channel_point(spec, 2.0, 0.5);
  CHECK(p.kind() == ChannelKind::awgn);
  CHECK(p.value() == Approx(awgn_sigma(2.0, SnrMeasure::ebn0, 0.5)));
  CHECK(p.assumed_value() == Approx(awgn_sigma(3.0, SnrMeasure::ebn0, 0.5)));
  CHECK(llr_magnitude(p) == Approx(2 / (p.assumed_value() * p.assumed_value())));
}
