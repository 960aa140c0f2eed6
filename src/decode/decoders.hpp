// Constructors of the concrete reference decoders (private to the library).
#pragma once

#include <cmath>
#include <cstdint>
#include <memory>

#include "tannery/decode/decoder.hpp"

namespace tannery::detail {

std::unique_ptr<Decoder> make_belief_propagation(const Code& code, const DecoderSettings& settings);
std::unique_ptr<Decoder> make_bit_flip(const Code& code, const DecoderSettings& settings);
std::unique_ptr<Decoder> make_ml(const Code& code, const DecoderSettings& settings);
std::unique_ptr<Decoder> make_fixed_point(const Code& code, const DecoderSettings& settings);
std::unique_ptr<Decoder> make_simd(const Code& code, const DecoderSettings& settings);

// Channel LLR to fixed point: round(L * 2^fraction) to nearest (ties to even), saturated to the
// symmetric range of channel_bits; +-Inf saturate. Shared by the scalar and SIMD fixed-point paths.
class LlrQuantizer {
 public:
  explicit LlrQuantizer(const Quantization& q)
      : LlrQuantizer(static_cast<double>(1 << q.fraction_bits),  // exact: a power of two
                     static_cast<double>((1 << (q.channel_bits - 1)) - 1)) {}
  LlrQuantizer(double scale, double limit) : scale_(scale), limit_(limit) {}
  std::int32_t operator()(double llr) const {
    const double x = llr * scale_;
    if (!(x < limit_)) return static_cast<std::int32_t>(limit_);
    if (!(x > -limit_)) return static_cast<std::int32_t>(-limit_);
    return static_cast<std::int32_t>(std::rint(x));  // default rounding mode: nearest, ties to even
  }
  double scale() const noexcept { return scale_; }
  double limit() const noexcept { return limit_; }

 private:
  double scale_, limit_;
};
inline std::int32_t saturate(std::int64_t x, int bits) {
  const std::int64_t limit = (std::int64_t{1} << (bits - 1)) - 1;
  return static_cast<std::int32_t>(x > limit ? limit : (x < -limit ? -limit : x));
}

inline double clip_llr(double x) {
  return x > kLlrLimit ? kLlrLimit : (x < -kLlrLimit ? -kLlrLimit : x);
}

}  // namespace tannery::detail
