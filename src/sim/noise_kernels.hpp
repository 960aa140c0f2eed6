// SIMD Philox streams and Gaussian samples (private to the library); the public functions of
// tannery/sim/random.hpp define what they compute.
#pragma once

#include <cstddef>
#include <cstdint>

#include "tannery/channel/channel.hpp"

namespace tannery::detail {

// Gaussians 0..count-1 of one frame (stream 1), in order.
void gaussians_of_frame(std::uint64_t seed, std::uint32_t point, std::uint64_t frame,
                        std::size_t count, double* out);
// The same samples for frames first..first+lanes-1 in lane layout: out[i * lanes + l].
void gaussians_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                        std::size_t lanes, std::size_t count, double* out);
// Their channel LLRs, for codeword[i] (bit l: lane l): AWGN scale * ((1 - 2 c) + value * x)
// with the Gaussians x; BSC and BEC with the uniforms of stream 1 (flip or
// erase below value) and LLRs +-magnitude; all as transmit() computes them.
void channel_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                      std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                      ChannelKind kind, double value, double magnitude, double* out);
// The fixed-point values the quantized decoders make of channel_of_group's AWGN LLRs:
// round(llr * scale) to nearest, ties to even, saturated at +-limit (scale a power of two, limit
// an integer), bit for bit, without the double LLRs.
void fixed_channel_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                            std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                            double value, double magnitude, double scale, double limit,
                            std::int8_t* out);
void fixed_channel_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first,
                            std::size_t lanes, std::size_t count, const std::uint64_t* codeword,
                            double value, double magnitude, double scale, double limit,
                            std::int16_t* out);
// Information bits 0..count-1 (stream 0) of frames first..first+lanes-1 (lanes <= 64) as
// masks: bit l of masks[i] is bit i of frame first + l.
void bits_of_group(std::uint64_t seed, std::uint32_t point, std::uint64_t first, std::size_t lanes,
                   std::size_t count, std::uint64_t* masks);

}  // namespace tannery::detail
