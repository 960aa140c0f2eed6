// Exhaustive block maximum-likelihood decoding for small codes (k <= 24): the codeword c that
// maximises P(y | c), i.e. minimises the sum of L_i over the positions where c_i = 1, found by
// walking all 2^k codewords in Gray-code order. The posterior output is the max-log LLR
// min_{c: c_i = 1} metric(c) - min_{c: c_i = 0} metric(c). When several codewords share the best
// metric (within rounding: 1e-12 of the total |L|; an erasure pattern or a tie on the BSC), the
// bits on which they disagree are undecided.
#include <bit>
#include <cmath>
#include <limits>
#include <vector>

#include "decoders.hpp"
#include "tannery/code/gf2.hpp"

namespace tannery::detail {

namespace {

class MaximumLikelihood final : public Decoder {
 public:
  MaximumLikelihood(const Code& code, const DecoderSettings& settings) : Decoder(code, settings) {
    const Encoder encoder(code);
    k_ = encoder.k();
    std::vector<std::uint8_t> info(k_, 0), word(code.n());
    basis_start_.push_back(0);
    for (std::size_t j = 0; j < k_; ++j) {
      info[j] = 1;
      encoder.encode(info, word);
      info[j] = 0;
      for (std::uint32_t i = 0; i < code.n(); ++i) {
        if (word[i]) basis_.push_back(i);
      }
      basis_start_.push_back(static_cast<std::uint32_t>(basis_.size()));
    }
    current_.resize(code.n());
    best_.resize(code.n());
    tied_.resize(code.n());
    best0_.resize(code.n());
    best1_.resize(code.n());
    channel_.resize(code.n());
  }

 protected:
  FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior) override {
    const std::size_t n = code_.n();
    const bool soft = !posterior.empty();
    constexpr double kNone = std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < n; ++i) channel_[i] = clip_llr(llr[i]);
    std::fill(current_.begin(), current_.end(), std::uint8_t{0});
    double metric = 0, best_metric = 0, total = 0;
    for (std::size_t i = 0; i < n; ++i) total += std::abs(channel_[i]);
    const double tie = 1e-12 * total;
    best_ = current_;
    std::fill(tied_.begin(), tied_.end(), std::uint8_t{0});
    if (soft) {
      std::fill(best0_.begin(), best0_.end(), 0.0);  // the zero word has every bit 0
      std::fill(best1_.begin(), best1_.end(), kNone);
    }
    for (std::uint64_t step = 1; step < (std::uint64_t{1} << k_); ++step) {
      const auto j = static_cast<std::size_t>(std::countr_zero(step));
      for (std::uint32_t p = basis_start_[j]; p < basis_start_[j + 1]; ++p) {
        const std::uint32_t i = basis_[p];
        current_[i] ^= 1;
        metric += current_[i] ? channel_[i] : -channel_[i];
      }
      if (metric < best_metric - tie) {
        best_metric = metric;
        best_ = current_;
        std::fill(tied_.begin(), tied_.end(), std::uint8_t{0});
      } else if (metric <= best_metric + tie) {
        for (std::size_t i = 0; i < n; ++i)
          tied_[i] |= static_cast<std::uint8_t>(current_[i] ^ best_[i]);
      }
      if (soft) {
        for (std::size_t i = 0; i < n; ++i) {
          double& slot = current_[i] ? best1_[i] : best0_[i];
          slot = std::min(slot, metric);
        }
      }
    }
    for (std::size_t i = 0; i < n; ++i) hard[i] = tied_[i] ? kUndecided : best_[i];
    if (soft) {
      for (std::size_t i = 0; i < n; ++i) {
        // A bit that is 0 in every codeword is certain.
        posterior[i] = tied_[i] ? 0.0 : best1_[i] == kNone ? kLlrLimit : best1_[i] - best0_[i];
      }
    }
    return assess(code_, hard, 1);
  }

 private:
  std::size_t k_ = 0;
  std::vector<std::uint32_t> basis_, basis_start_;
  std::vector<std::uint8_t> current_, best_, tied_;
  std::vector<double> best0_, best1_, channel_;
};

}  // namespace

std::unique_ptr<Decoder> make_ml(const Code& code, const DecoderSettings& settings) {
  return std::make_unique<MaximumLikelihood>(code, settings);
}

}  // namespace tannery::detail
