#include <catch2/catch.hpp>
#include <string>

#include "tannery/error.hpp"
#include "tannery/report/scenario.hpp"

using namespace tannery;

namespace {

constexpr const char* kFull = R"(name = "sensor-link"
description = "fixed-point offset min-sum over a mismatched AWGN channel"
code = "qc-rate-half-z54"

[decoder]
algorithm = "offset-min-sum"
schedule = "layered"
iterations = 20
beta = 0.5
kernel = "simd"
quantize = "6.2"

[channel]
kind = "awgn"
sweep = "1.5:0.5:3"
snr = "esn0"
snr_offset_db = 0.25

[stop]
frame_errors = 100
max_frames = 50000
stop_below_fer = 1e-4

[run]
seed = 9
chunk_frames = 256
confidence = 0.99
)";

std::string error_of(const std::string& text) {
  try {
    parse_scenario(text, "s.toml");
  } catch (const Error& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("a scenario sets every field of its sections", "[scenario]") {
  const Scenario s = parse_scenario(kFull, "dir/s.toml");
  CHECK(s.name == "sensor-link");
  CHECK(s.code == "qc-rate-half-z54");  // a shipped name stays a name
  const SimulationConfig& c = s.config;
  CHECK(c.decoder.algorithm == Algorithm::offset_min_sum);
  CHECK(c.decoder.schedule == Schedule::layered);
  CHECK(c.decoder.iterations == 20);
  CHECK(c.decoder.beta == 0.5);
  CHECK(c.decoder.kernel == Kernel::simd);
  REQUIRE(c.decoder.quantization);
  CHECK(quantization_spec(*c.decoder.quantization) == "6.2:6:8");
  CHECK(c.channel.measure == SnrMeasure::esn0);
  CHECK(c.channel.snr_offset_db == 0.25);
  CHECK(c.sweep == std::vector<double>{1.5, 2, 2.5, 3});
  CHECK(c.stop.frame_errors == 100);
  CHECK(c.stop.max_frames == 50000);
  CHECK(c.stop.stop_below_fer == 1e-4);
  CHECK(c.seed == 9);
  CHECK(c.chunk_frames == 256);
  CHECK(c.confidence == 0.99);
}

TEST_CASE("omitted settings keep the library's one default", "[scenario]") {
  const Scenario s =
      parse_scenario("code = \"hamming-7-4\"\n[channel]\nsweep = [1.0, 2.0]\n", "s.toml");
  const SimulationConfig defaults;
  CHECK(s.config.decoder == defaults.decoder);
  CHECK(s.config.stop.max_frames == defaults.stop.max_frames);
  CHECK(s.config.stop.max_frames == 100'000);
  CHECK(s.config.seed == defaults.seed);
  CHECK(s.config.sweep == std::vector<double>{1, 2});
}

TEST_CASE("scenario errors name the file, line and column and the setting", "[scenario]") {
  CHECK(error_of("code = \"x\"\n[channel]\nsweep = \"1\"\n[decoder]\niteration = 5\n") ==
        "s.toml:5:13: unknown key 'iteration' in [decoder]");
  CHECK_THAT(error_of("code = \"x\"\n[channel]\nsweep = \"1\"\n[decoder]\nalpha = 0.5\n"),
             Catch::StartsWith("s.toml:5:9: alpha applies to algorithm = \"normalized-min-sum\" "
                               "only, not \"sum-product\""));
  CHECK_THAT(error_of("code = \"x\"\n[channel]\nsweep = \"1\"\n[decoder]\nalgorithm = \"min\"\n"),
             Catch::Contains("min-sum"));
  CHECK_THAT(error_of("code = \"x\"\n[channel]\nkind = \"bsc\"\nsweep = \"0.1\"\nsnr = \"esn0\"\n"),
             Catch::Contains("awgn and rayleigh channels only"));
  CHECK_THAT(error_of("[channel]\nsweep = \"1\"\n"), Catch::Contains("code"));
  CHECK_THAT(error_of("code = \"x\"\n[stop]\nmax_frames = -5\n[channel]\nsweep = \"1\"\n"),
             Catch::StartsWith("s.toml:3:"));
  CHECK_THAT(error_of("code = \"x\"\n[channel\n"), Catch::StartsWith("s.toml:2:"));
}
