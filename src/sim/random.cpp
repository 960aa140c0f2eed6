#include "tannery/sim/random.hpp"

#include <Random123/philox.h>
#include <cmath>

#include "noise_kernels.hpp"
#include "tannery/error.hpp"

namespace tannery {

namespace {

using Philox = r123::Philox4x32;

// Counter words: block index, frame low, frame high, point * 2 + stream.
Philox::ctr_type counter(const FrameId& id, std::uint32_t block, std::uint32_t stream) {
  return {{block, static_cast<std::uint32_t>(id.frame), static_cast<std::uint32_t>(id.frame >> 32),
           id.point * 2u + stream}};
}
Philox::key_type key(const FrameId& id) {
  return {{static_cast<std::uint32_t>(id.seed), static_cast<std::uint32_t>(id.seed >> 32)}};
}
// Two 53-bit uniforms in [0, 1) from one Philox output.
void two_uniforms(const Philox::ctr_type& r, double& a, double& b) {
  const std::uint64_t x = (std::uint64_t{r[0]} << 32) | r[1],
                      y = (std::uint64_t{r[2]} << 32) | r[3];
  a = static_cast<double>(x >> 11) * 0x1.0p-53;
  b = static_cast<double>(y >> 11) * 0x1.0p-53;
}

}  // namespace

void frame_bits(const FrameId& id, std::span<std::uint8_t> bits) {
  Philox rng;
  const auto k = key(id);
  for (std::size_t i = 0; i < bits.size(); i += 128) {
    const auto r = rng(counter(id, static_cast<std::uint32_t>(i / 128), 0), k);
    for (std::size_t j = 0; j < 128 && i + j < bits.size(); ++j)
      bits[i + j] = (r[j / 32] >> (j % 32)) & 1u;
  }
}

void frame_gaussians(const FrameId& id, std::span<double> out) {
  detail::gaussians_of_frame(id.seed, id.point, id.frame, out.size(), out.data());
}

void group_bits(const FrameGroup& group, std::span<std::uint64_t> masks) {
  TANNERY_ASSERT(group.lanes <= 64);
  detail::bits_of_group(group.seed, group.point, group.first, group.lanes, masks.size(),
                        masks.data());
}

void group_channel_llrs(const FrameGroup& group, const ChannelPoint& channel,
                        std::span<const std::uint64_t> codeword, std::span<double> out) {
  TANNERY_ASSERT(group.lanes > 0 && out.size() == codeword.size() * group.lanes);
  detail::channel_of_group(group.seed, group.point, group.first, group.lanes, codeword.size(),
                           codeword.data(), channel.kind(), channel.value(), llr_magnitude(channel),
                           out.data());
}

void group_channel_values(const FrameGroup& group, const ChannelPoint& channel,
                          std::span<const std::uint64_t> codeword, const FixedPointGroup& out) {
  const std::size_t values = codeword.size() * group.lanes;
  TANNERY_ASSERT(channel.kind() == ChannelKind::awgn && group.lanes > 0 &&
                 out.int8.size() + out.int16.size() == values);
  if (!out.int8.empty()) {
    detail::fixed_channel_of_group(group.seed, group.point, group.first, group.lanes,
                                   codeword.size(), codeword.data(), channel.value(),
                                   llr_magnitude(channel), out.scale, out.limit, out.int8.data());
  } else {
    detail::fixed_channel_of_group(group.seed, group.point, group.first, group.lanes,
                                   codeword.size(), codeword.data(), channel.value(),
                                   llr_magnitude(channel), out.scale, out.limit, out.int16.data());
  }
}

void group_gaussians(const FrameGroup& group, std::span<double> out) {
  TANNERY_ASSERT(group.lanes > 0 && out.size() % group.lanes == 0);
  detail::gaussians_of_group(group.seed, group.point, group.first, group.lanes,
                             out.size() / group.lanes, out.data());
}

void frame_uniforms(const FrameId& id, std::span<double> out) {
  Philox rng;
  const auto k = key(id);
  for (std::size_t i = 0; i < out.size(); i += 2) {
    double a, b;
    two_uniforms(rng(counter(id, static_cast<std::uint32_t>(i / 2), 1), k), a, b);
    out[i] = a;
    if (i + 1 < out.size()) out[i + 1] = b;
  }
}

}  // namespace tannery
