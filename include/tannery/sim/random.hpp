// Counter-based randomness (Philox4x32-10 from Random123): every frame's data bits and channel
// noise are a pure function of (seed, sweep point, frame index), so any frame can be regenerated
// alone, in any order, on any thread.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>

#include "tannery/channel/channel.hpp"
#include "tannery/decode/decoder.hpp"

namespace tannery {

struct FrameId {
  std::uint64_t seed = 0;
  std::uint32_t point = 0;  // index of the sweep point
  std::uint64_t frame = 0;  // index of the frame within the point
};

// Information bits (one byte per bit, 0/1): stream 0 of the frame.
void frame_bits(const FrameId& id, std::span<std::uint8_t> bits);
// Standard normal samples, stream 1 of the frame: Box-Muller, four samples (two pairs) per
// Philox output; for each pair the radius sqrt(-2 ln u) from one 32-bit word, u = (v + 1/2) 2^-30
// with v its top 30 bits, refined with 23 more bits where v < 2^7 (so u >= 2^-54 and |x| < 8.65),
// and the angle from the next word (octant and 23-bit position). Computed in float32 with IEEE
// add, multiply, fused multiply-add, divide and square root in a fixed order: the same bits on
// every machine and SIMD target.
void frame_gaussians(const FrameId& id, std::span<double> out);
// Uniforms in [0, 1) with 53-bit resolution: stream 1 of the frame (BSC flips, BEC erasures).
void frame_uniforms(const FrameId& id, std::span<double> out);

// Frames first .. first + lanes - 1 of a sweep point side by side (the batched decoders' lane
// layout), generated together with SIMD.
struct FrameGroup {
  std::uint64_t seed = 0;
  std::uint32_t point = 0;
  std::uint64_t first = 0;
  std::size_t lanes = 0;
};
// Bit l of masks[i] is frame_bits of frame first + l at position i (lanes <= 64).
void group_bits(const FrameGroup& group, std::span<std::uint64_t> masks);
// out[i * lanes + l] is frame_gaussians of frame first + l at position i, bit for bit.
void group_gaussians(const FrameGroup& group, std::span<double> out);
// The channel LLRs of the group: out[i * lanes + l] is what transmit() gives frame first + l at
// position i from its stream-1 noise (frame_gaussians for AWGN, frame_uniforms for BSC/BEC),
// codeword bit l of codeword[i] sent; bit for bit.
void group_channel_llrs(const FrameGroup& group, const ChannelPoint& channel,
                        std::span<const std::uint64_t> codeword, std::span<double> out);
// AWGN only: what a quantized decoder's load() makes of those LLRs, written straight into its
// values (bit for bit the same, without the double LLRs).
void group_channel_values(const FrameGroup& group, const ChannelPoint& channel,
                          std::span<const std::uint64_t> codeword, const FixedPointGroup& out);

}  // namespace tannery
