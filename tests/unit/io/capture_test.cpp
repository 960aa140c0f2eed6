#include <catch2/catch.hpp>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <sstream>

#include "tannery/decode/decoder.hpp"
#include "tannery/io/capture.hpp"
#include "test_support.hpp"

using namespace tannery;

TEST_CASE("capture round trip in every encoding", "[capture]") {
  const std::vector<double> values{1.5, -2.25, 0.0, 100.0, -0.125, 3.0};
  for (auto f : {SampleFormat::f32, SampleFormat::f64, SampleFormat::text, SampleFormat::i16,
                 SampleFormat::i8}) {
    const double scale = f == SampleFormat::i8 || f == SampleFormat::i16 ? 0.125 : 1.0;
    std::string bytes;
    append_samples(bytes, values, f, scale);
    std::istringstream in(bytes);
    CaptureReader reader(in, "c", f, scale, 3);
    std::vector<double> out;
    INFO(name_of(f));
    REQUIRE(reader.read(10, out) == 2);
    // i8 saturates 100 / 0.125 = 800 at 127.
    const double big = f == SampleFormat::i8 ? 127 * 0.125 : 100.0;
    CHECK(out == std::vector<double>{1.5, -2.25, 0.0, big, -0.125, 3.0});
    CHECK(reader.read(10, out) == 0);
    CHECK_FALSE(reader.error().has_value());
  }
}

TEST_CASE("a partial frame or a NaN ends the good data with an error naming byte and frame",
          "[capture]") {
  std::string bytes;
  append_f32_le(bytes, std::vector<float>{1, 2, 3, 4, 5, 6, 7});
  std::istringstream in(bytes);
  CaptureReader reader(in, "c.f32", SampleFormat::f32, 1.0, 3);
  std::vector<double> out;
  CHECK(reader.read(10, out) == 2);
  CHECK(reader.read(10, out) == 0);
  REQUIRE(reader.error());
  CHECK_THAT(*reader.error(),
             Catch::Contains("c.f32: ends with a partial frame: 4 bytes at byte 24 after frame 2"));

  bytes.clear();
  append_f32_le(bytes, std::vector<float>{1, 2, 3, 4, NAN, 6});
  std::istringstream nan_in(bytes);
  CaptureReader nan_reader(nan_in, "n.f32", SampleFormat::f32, 1.0, 3);
  CHECK(nan_reader.read(10, out) == 1);
  CHECK(out.size() == 3);
  CHECK_THAT(*nan_reader.error(),
             Catch::Contains("n.f32: byte 16 (frame 1, value 1): value is NaN"));

  std::istringstream empty("");
  CaptureReader empty_reader(empty, "e", SampleFormat::f64, 1.0, 3);
  CHECK(empty_reader.read(10, out) == 0);
  CHECK_THAT(*empty_reader.error(), Catch::Contains("empty input"));
}

TEST_CASE("text captures: separators, infinities, bad tokens", "[capture]") {
  std::istringstream in("1, -2 inf\n-inf 0.5\t7\n1e999 2 3\n4 nan 6\n");
  CaptureReader reader(in, "t", SampleFormat::text, 1.0, 3);
  std::vector<double> out;
  CHECK(reader.read(2, out) == 2);
  CHECK(std::isinf(out[2]));
  CHECK(reader.read(5, out) == 1);
  CHECK(std::isinf(out[0]));  // overflow reads as infinity
  CHECK(reader.read(5, out) == 0);
  CHECK_THAT(*reader.error(),
             Catch::Contains("t: byte 33 (frame 3, value 1): line 4: value is NaN"));
}

TEST_CASE("captured values to LLRs: meanings, punctured and shortened positions", "[capture]") {
  // Positions 1 punctured, 3 shortened: a frame of 3 values fills positions 0, 2, 4.
  const PunctureMap map = parse_puncture_map("punctured 1\nshortened 3\n", "map", 5);
  const std::vector<double> values{1.5, -2.0, 0.5, -1.0, 4.0, 0.0};  // two frames
  std::vector<double> llr(10);
  const double inf = std::numeric_limits<double>::infinity();
  SampleConverter(map).convert(values, llr);
  CHECK(llr == std::vector<double>{1.5, 0, -2.0, inf, 0.5, -1.0, 0, 4.0, inf, 0.0});
  // Inverted LLRs: the values change sign, a shortened position is still known to be 0.
  SampleConverter(map, SampleMeaning::llr_inverted).convert(values, llr);
  CHECK(llr[0] == -1.5);
  CHECK(llr[3] == inf);
  CHECK(llr[8] == inf);
  // BPSK samples with sigma^2 = 0.5: LLR = 2y / sigma^2 = 4y (the AWGN LLR, common practice).
  const SampleConverter samples(map, SampleMeaning::samples, 0.5);
  CHECK(samples.factor() == 4.0);
  samples.convert(values, llr);
  CHECK(llr[2] == -8.0);
  CHECK_THROWS_WITH(SampleConverter(map, SampleMeaning::samples),
                    Catch::Contains("needs noise_variance"));
  CHECK_THROWS_WITH(SampleConverter(map, SampleMeaning::llr, 1.0),
                    Catch::Contains("noise_variance applies to meaning samples only"));
  CHECK_THROWS_WITH(SampleConverter(map, SampleMeaning::samples, -1.0),
                    Catch::Contains("noise_variance must be positive"));
  CHECK_THROWS_WITH(samples.convert(std::span(values).first(4), llr),
                    Catch::Contains("whole frames"));
}

TEST_CASE("bit frames: text, packed, bytes", "[capture]") {
  const std::vector<std::uint8_t> bits{1, 0, 1, 1, 0, 0, 0, 0, 1, 1};
  for (auto f : {BitFormat::text, BitFormat::packed, BitFormat::bytes}) {
    std::string bytes;
    append_bits(bytes, bits, f);
    append_bits(bytes, bits, f);
    std::istringstream in(bytes);
    BitFrameReader reader(in, "b", f, bits.size());
    std::vector<std::uint8_t> out;
    REQUIRE(reader.read(8, out) == 2);
    CHECK(std::equal(bits.begin(), bits.end(), out.begin()));
    CHECK_FALSE(reader.error().has_value());
  }
  std::istringstream bad("0120");
  BitFrameReader reader(bad, "b", BitFormat::text, 2);
  std::vector<std::uint8_t> out;
  CHECK(reader.read(8, out) == 1);  // the complete frame before the bad character
  CHECK_THAT(*reader.error(), Catch::Contains("b: byte 2 (frame 1, bit 0): '2' is not a bit"));
}

TEST_CASE("the decode command's output is bit-identical to the library", "[capture][cli]") {
  const std::string dir = std::string(TANNERY_TEST_WORK) + "/capture_identity";
  std::system(("mkdir -p " + dir).c_str());
  const Code code = test::shipped("qc-rate-half-z54.qc");
  const std::size_t n = code.n(), frames = 30;
  test::Gaussian g(77);
  std::vector<float> llr_f(n * frames);
  for (auto& x : llr_f) x = static_cast<float>(1.2 + 1.8 * g());
  std::string bytes;
  append_f32_le(bytes, llr_f);
  std::ofstream(dir + "/in.f32", std::ios::binary) << bytes;
  const std::string command =
      std::string(TANNERY_CLI) + " decode --code " + TANNERY_CODES_DIR + "/qc-rate-half-z54.qc " +
      dir + "/in.f32 --codeword --output-format bytes --output " + dir + "/hard.bin --posterior " +
      dir + "/post.f32 --algorithm normalized-min-sum " +
      "--schedule layered --iterations 17 --kernel reference 2>/dev/null";
  REQUIRE(std::system(command.c_str()) == 0);

  DecoderSettings s;
  s.kernel = Kernel::reference;
  s.algorithm = Algorithm::normalized_min_sum;
  s.schedule = Schedule::layered;
  s.iterations = 17;
  const std::vector<double> llr(llr_f.begin(), llr_f.end());
  std::vector<std::uint8_t> hard(n * frames);
  std::vector<double> post(n * frames);
  std::vector<FrameOutcome> out(frames);
  make_decoder(code, s)->decode(llr, hard, post, out);
  std::string expected_hard(hard.begin(), hard.end()), expected_post;
  append_f32_le(expected_post, std::vector<float>(post.begin(), post.end()));
  std::stringstream got_hard, got_post;
  got_hard << std::ifstream(dir + "/hard.bin", std::ios::binary).rdbuf();
  got_post << std::ifstream(dir + "/post.f32", std::ios::binary).rdbuf();
  CHECK(got_hard.str() == expected_hard);
  CHECK(got_post.str() == expected_post);
}
