#include <Random123/philox.h>
#include <catch2/catch.hpp>
#include <cmath>
#include <numbers>

#include "decode/simd_control.hpp"
#include "tannery/channel/channel.hpp"
#include "tannery/decode/decoder.hpp"
#include "tannery/sim/random.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

// The Philox output behind Gaussian pair `block` of a frame, from Random123 itself.
r123::Philox4x32::ctr_type noise_words(const FrameId& id, std::uint32_t block) {
  r123::Philox4x32 rng;
  return rng({{block, static_cast<std::uint32_t>(id.frame),
               static_cast<std::uint32_t>(id.frame >> 32), id.point * 2u + 1}},
             {{static_cast<std::uint32_t>(id.seed), static_cast<std::uint32_t>(id.seed >> 32)}});
}

}  // namespace

TEST_CASE("group_bits gives every frame's frame_bits on every target", "[random]") {
  test::TargetGuard guard;
  for (const auto& target : simd_targets()) {
    force_simd_target(target);
    for (std::size_t lanes : {1, 5, 16, 64}) {
      // Frame indices across the 2^32 boundary exercise the high counter word.
      const FrameGroup group{0x1234'5678'9abc'def0ull, 3, (1ull << 32) - 7, lanes};
      const std::size_t k = 300;
      std::vector<std::uint64_t> masks(k);
      group_bits(group, masks);
      std::vector<std::uint8_t> bits(k);
      for (std::size_t l = 0; l < lanes; ++l) {
        frame_bits(FrameId{group.seed, group.point, group.first + l}, bits);
        for (std::size_t i = 0; i < k; ++i) {
          INFO("target " << target << " lanes " << lanes << " lane " << l << " bit " << i);
          REQUIRE(((masks[i] >> l) & 1u) == bits[i]);
        }
      }
      for (std::size_t i = 0; i < k; ++i) REQUIRE((lanes == 64 || masks[i] >> lanes == 0));
    }
  }
}

TEST_CASE("group_gaussians equals frame_gaussians bit for bit, and every target agrees",
          "[random]") {
  test::TargetGuard guard;
  const std::size_t n = 101, lanes = 13;
  const FrameGroup group{42, 1, (1ull << 32) - 5, lanes};
  std::vector<double> first_target;
  for (const auto& target : simd_targets()) {
    force_simd_target(target);
    std::vector<double> lanes_out(n * lanes), frame(n);
    group_gaussians(group, lanes_out);
    for (std::size_t l = 0; l < lanes; ++l) {
      frame_gaussians(FrameId{group.seed, group.point, group.first + l}, frame);
      for (std::size_t i = 0; i < n; ++i) {
        INFO("target " << target << " lane " << l << " sample " << i);
        REQUIRE(lanes_out[i * lanes + l] == frame[i]);  // exact
      }
    }
    if (first_target.empty()) first_target = lanes_out;
    INFO("target " << target);
    REQUIRE(lanes_out == first_target);  // exact across targets
  }
}

TEST_CASE("Box-Muller samples have the radius and angle of their Philox words", "[random]") {
  // Reference: the C library's log and atan2 on the uniforms decoded from Random123's output,
  // as random.hpp defines them: 1 - u from the top 52 bits of the first 64, the angle 2 pi v
  // from the top 55 bits of the second.
  const FrameId id{2024, 0, 77};
  const std::size_t count = 20'000;
  std::vector<double> g(count);
  frame_gaussians(id, g);
  double worst_radius = 0, worst_angle = 0;
  for (std::size_t b = 0; b < count / 2; ++b) {
    const auto r = noise_words(id, static_cast<std::uint32_t>(b));
    const std::uint64_t x = (std::uint64_t{r[0]} << 32) | r[1],
                        y = (std::uint64_t{r[2]} << 32) | r[3];
    const double one_minus_u = 1.0 - static_cast<double>(x >> 12) * 0x1.0p-52;
    const double radius2 = -2.0 * std::log(one_minus_u);
    const double got2 = g[2 * b] * g[2 * b] + g[2 * b + 1] * g[2 * b + 1];
    worst_radius = std::max(worst_radius, std::abs(got2 - radius2) / std::max(radius2, 1e-300));
    const double angle = 2 * std::numbers::pi * static_cast<double>(y >> 9) * 0x1.0p-55;
    double got_angle = std::atan2(g[2 * b + 1], g[2 * b]);
    if (got_angle < 0) got_angle += 2 * std::numbers::pi;
    double diff = std::abs(got_angle - angle);
    diff = std::min(diff, 2 * std::numbers::pi - diff);
    if (radius2 > 1e-20) worst_angle = std::max(worst_angle, diff);
  }
  INFO("worst relative radius^2 error " << worst_radius << ", worst angle error " << worst_angle);
  CHECK(worst_radius < 1e-14);
  CHECK(worst_angle < 1e-14);
}

TEST_CASE("group channel LLRs equal each frame's transmit() of its noise, on every target",
          "[random]") {
  test::TargetGuard guard;
  const std::size_t n = 77, lanes = 21;
  const FrameGroup group{5, 2, 1000, lanes};
  std::vector<std::uint64_t> codeword(n);
  for (std::size_t v = 0; v < n; ++v) codeword[v] = 0x9E3779B97F4A7C15ull * (v + 1);
  // sigma or p or epsilon, and the assumed value (mismatched for AWGN and BSC).
  for (const ChannelPoint channel : {ChannelPoint::awgn(0.8, 0.75), ChannelPoint::bsc(0.3, 0.25),
                                     ChannelPoint::bsc(0.1, 0.0), ChannelPoint::bec(0.4)}) {
    for (const auto& target : simd_targets()) {
      force_simd_target(target);
      std::vector<double> llr(n * lanes), noise(n), frame_llr(n);
      group_channel_llrs(group, channel, codeword, llr);
      std::vector<std::uint8_t> bits(n);
      std::size_t erased_or_flipped = 0;
      for (std::size_t l = 0; l < lanes; ++l) {
        const FrameId id{group.seed, group.point, group.first + l};
        if (channel.kind() == ChannelKind::awgn)
          frame_gaussians(id, noise);
        else
          frame_uniforms(id, noise);
        for (std::size_t v = 0; v < n; ++v) bits[v] = (codeword[v] >> l) & 1u;
        transmit(channel, bits, noise, frame_llr);
        for (std::size_t v = 0; v < n; ++v) {
          INFO("channel " << name_of(channel.kind()) << " target " << target << " lane " << l
                          << " position " << v);
          REQUIRE(llr[v * lanes + l] == frame_llr[v]);  // exact (Inf included)
          erased_or_flipped += noise[v] < channel.value();
        }
      }
      if (channel.kind() != ChannelKind::awgn) CHECK(erased_or_flipped > 100);  // not vacuous
    }
  }
}
