// The scalar fixed-point reference: layered min-sum family on integers, the definition that the
// integer SIMD kernels match bit for bit.
//
// Per check, for each of its edges e (variable v):  t = sat_P(P[v] - R[e]) (kept at posterior
// width: clamping it to the message width would drop the channel value of degree-2 variables)
// and its magnitude for the check a = min(|t|, 2^(M-1) - 1).
// m1, m2 = the two smallest a (first occurrence wins ties), i = position of m1, s = parity of
// the signs (t < 0). New message magnitude: m2 at position i, m1 elsewhere (a check with one
// edge sends the saturation value); then
//   normalized: m - floor(m * (8 - a) / 8), a = round(8 alpha)   (alpha 0.75: m - floor(m / 4))
//   offset:     max(m - b, 0), b = round(beta * 2^fraction)
// R[e] = +-m with the sign parity of the other edges; P[v] = sat_P(t + R[e]).
// sat_B clamps to +-(2^(B-1) - 1). Hard decision: P < 0. Posterior output: P / 2^fraction.
#include <algorithm>
#include <cmath>
#include <vector>

#include "decoders.hpp"

namespace tannery::detail {

namespace {

class FixedPoint final : public Decoder {
 public:
  FixedPoint(const Code& code, const DecoderSettings& settings)
      : Decoder(code, settings),
        q_(*settings.quantization),
        quantize_(q_),
        messages_(code.edges()),
        posterior_(code.n()) {
    t_.resize(code.max_check_degree());
    alpha_eighths_ = static_cast<int>(std::lround(std::clamp(settings.alpha, 0.0, 1.0) * 8));
    beta_lsb_ = static_cast<int>(std::lround(settings.beta * std::ldexp(1.0, q_.fraction_bits)));
  }

 protected:
  FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior) override {
    const Code& code = code_;
    const int limit_m = (1 << (q_.message_bits - 1)) - 1;
    for (std::size_t v = 0; v < code.n(); ++v) posterior_[v] = quantize_(llr[v]);
    std::fill(messages_.begin(), messages_.end(), 0);
    FrameOutcome outcome;
    for (int it = 1; it <= settings_.iterations; ++it) {
      for (std::size_t c = 0; c < code.m(); ++c) {
        const std::size_t b = code.check_begin(c), d = code.check_degree(c);
        auto vars = code.check_variables(c);
        int m1 = limit_m, m2 = limit_m;
        std::size_t at = 0;
        bool negative = false;
        for (std::size_t i = 0; i < d; ++i) {
          t_[i] = saturate(static_cast<std::int64_t>(posterior_[vars[i]]) - messages_[b + i],
                           q_.posterior_bits);
          const int a = std::min(std::abs(t_[i]), limit_m);
          negative ^= t_[i] < 0;
          if (a < m1) {
            m2 = m1;
            m1 = a;
            at = i;
          } else if (a < m2) {
            m2 = a;
          }
        }
        for (std::size_t i = 0; i < d; ++i) {
          int mag = d == 1 ? limit_m : (i == at ? m2 : m1);
          if (settings_.algorithm == Algorithm::normalized_min_sum) {
            mag -= (mag >> 3) * (8 - alpha_eighths_) + (((mag & 7) * (8 - alpha_eighths_)) >> 3);
          } else if (settings_.algorithm == Algorithm::offset_min_sum) {
            mag = std::max(mag - beta_lsb_, 0);
          }
          const std::int32_t r = (negative != (t_[i] < 0)) ? -mag : mag;
          messages_[b + i] = r;
          posterior_[vars[i]] = saturate(static_cast<std::int64_t>(t_[i]) + r, q_.posterior_bits);
        }
      }
      for (std::size_t v = 0; v < code.n(); ++v) hard[v] = decide(posterior_[v]);
      outcome = assess(code, hard, it);
      if (settings_.early_stop && outcome.converged) break;
    }
    if (!posterior.empty()) {
      for (std::size_t v = 0; v < code.n(); ++v)
        posterior[v] = std::ldexp(posterior_[v], -q_.fraction_bits);
    }
    return outcome;
  }

 private:
  Quantization q_;
  LlrQuantizer quantize_;
  std::vector<std::int32_t> messages_, posterior_, t_;
  int alpha_eighths_ = 8, beta_lsb_ = 0;
};

}  // namespace

std::unique_ptr<Decoder> make_fixed_point(const Code& code, const DecoderSettings& settings) {
  return std::make_unique<FixedPoint>(code, settings);
}

}  // namespace tannery::detail
