// Counter-based randomness (Philox4x32-10 from Random123): every frame's data bits and channel
// noise are a pure function of (seed, sweep point, frame index), so any frame can be regenerated
// alone, in any order, on any thread.
#pragma once

#include <cstdint>
#include <span>

namespace tannery {

struct FrameId {
  std::uint64_t seed = 0;
  std::uint32_t point = 0;  // index of the sweep point
  std::uint64_t frame = 0;  // index of the frame within the point
};

// Information bits (one byte per bit, 0/1): stream 0 of the frame.
void frame_bits(const FrameId& id, std::span<std::uint8_t> bits);
// Standard normal samples by Box-Muller on 53-bit uniforms: stream 1 of the frame.
void frame_gaussians(const FrameId& id, std::span<double> out);
// Uniforms in [0, 1) with 53-bit resolution: stream 1 of the frame (BSC flips, BEC erasures).
void frame_uniforms(const FrameId& id, std::span<double> out);

}  // namespace tannery
