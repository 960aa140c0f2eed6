// The batched decoder: groups frames into SIMD lanes (one frame per lane), transposes them to the
// lane-interleaved layout, runs the dispatched kernel and transposes the results back.
#include <fmt/format.h>
#include <hwy/aligned_allocator.h>
#include <hwy/targets.h>
#include <algorithm>
#include <cmath>
#include <optional>
#include <vector>

#include "decoders.hpp"
#include "simd_kernels.hpp"
#include "tannery/error.hpp"

namespace tannery {

std::vector<std::string> simd_targets() {
  return detail::kernel_targets();
}

void force_simd_target(const std::string& name) {
  if (!detail::force_kernel_target(name)) {
    std::string known;
    for (const auto& n : simd_targets()) known += (known.empty() ? "" : ", ") + n;
    throw Error(fmt::format("SIMD target '{}' is not available here (available: {})", name, known));
  }
}

std::string active_simd_target() {
  const auto targets = simd_targets();
  return targets.empty() ? std::string("none") : targets.front();
}

namespace detail {

namespace {

template <class T>
class Batched final : public Decoder {
 public:
  Batched(const Code& code, const DecoderSettings& settings) : Decoder(code, settings) {
    if constexpr (std::is_same_v<T, float>)
      lanes_ = float_lanes();
    else if constexpr (std::is_same_v<T, std::int16_t>)
      lanes_ = int16_lanes();
    else
      lanes_ = int8_lanes();
    std::size_t max_degree = 0;
    for (std::size_t c = 0; c < code.m(); ++c)
      max_degree = std::max(max_degree, code.check_degree(c));
    check_start_.resize(code.m() + 1);
    for (std::size_t c = 0; c <= code.m(); ++c)
      check_start_[c] =
          c < code.m() ? code.check_begin(c) : static_cast<std::uint32_t>(code.edges());
    edge_var_.resize(code.edges());
    for (std::size_t e = 0; e < code.edges(); ++e) edge_var_[e] = code.edge_variable(e);
    var_start_.assign(code.n() + 1, 0);
    for (std::size_t v = 0; v < code.n(); ++v) {
      var_start_[v + 1] = var_start_[v] + static_cast<std::uint32_t>(code.variable_degree(v));
      for (std::uint32_t e : code.variable_edges(v)) var_edge_.push_back(e);
    }
    args_.flooding = settings.schedule == Schedule::flooding;
    args_.var_start = var_start_.data();
    args_.var_edge = var_edge_.data();
    args_.check_start = check_start_.data();
    args_.edge_var = edge_var_.data();
    args_.n = code.n();
    args_.m = code.m();
    args_.max_degree = std::max<std::size_t>(max_degree, 1);
    args_.lanes = lanes_;
    args_.iterations = settings.iterations;
    args_.early_stop = settings.early_stop;
    switch (settings.algorithm) {
      case Algorithm::normalized_min_sum:
        args_.rule = CheckRule::normalized;
        break;
      case Algorithm::offset_min_sum:
        args_.rule = CheckRule::offset;
        break;
      case Algorithm::sum_product:
        args_.rule = CheckRule::sum_product;
        break;
      default:
        args_.rule = CheckRule::min_sum;
    }
    args_.alpha = static_cast<float>(settings.alpha);
    args_.beta = static_cast<float>(settings.beta);
    if (settings.quantization) {
      const Quantization& q = *settings.quantization;
      args_.alpha_eighths = static_cast<int>(std::lround(std::clamp(settings.alpha, 0.0, 1.0) * 8));
      args_.beta_lsb =
          static_cast<int>(std::lround(settings.beta * std::ldexp(1.0, q.fraction_bits)));
      args_.message_limit = (1 << (q.message_bits - 1)) - 1;
      quantize_.emplace(q);
      args_.posterior_limit = (1 << (q.posterior_bits - 1)) - 1;
    }
    // Aligned buffers (Highway's Load needs vector alignment).
    channel_ = hwy::AllocateAligned<T>(code.n() * lanes_);
    posterior_ = hwy::AllocateAligned<T>(code.n() * lanes_);
    messages_ = hwy::AllocateAligned<T>(std::max<std::size_t>(code.edges(), 1) * lanes_);
    scratch_ = hwy::AllocateAligned<T>(5 * args_.max_degree * lanes_);
    if (args_.flooding) {
      v2c_ = hwy::AllocateAligned<T>(std::max<std::size_t>(code.edges(), 1) * lanes_);
      args_.v2c = v2c_.get();
    }
    iterations_.resize(lanes_);
    syndrome_.resize(lanes_);
    args_.syndrome_weight = syndrome_.data();
    args_.channel = channel_.get();
    args_.posterior = posterior_.get();
    args_.messages = messages_.get();
    args_.scratch = scratch_.get();
    args_.iterations_used = iterations_.data();
  }

 public:
  std::size_t lanes() const noexcept override { return lanes_; }

  void decode_lanes(std::span<const double> llr, std::span<std::uint64_t> hard,
                    std::span<FrameOutcome> outcome) override {
    const std::size_t n = code_.n();
    TANNERY_ASSERT(llr.size() == n * lanes_ && hard.size() == n && outcome.size() == lanes_);
    if (quantize_)
      channel_values(llr.data(), llr.size(), quantize_->scale(), quantize_->limit(),
                     channel_.get());
    else
      channel_values(llr.data(), llr.size(), 1.0, kLlrLimit, channel_.get());
    if constexpr (std::is_same_v<T, float>)
      layered_float(args_);
    else if constexpr (std::is_same_v<T, std::int16_t>)
      layered_int16(args_);
    else
      layered_int8(args_);
    sign_masks(posterior_.get(), n, hard.data());
    for (std::size_t l = 0; l < lanes_; ++l) {
      FrameOutcome& o = outcome[l];
      o.iterations = iterations_[l];
      o.syndrome_weight = static_cast<std::uint32_t>(syndrome_[l]);
      o.converged = o.syndrome_weight == 0;
    }
  }

 protected:
  FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior) override {
    FrameOutcome out;
    decode_batch(llr, hard, posterior, std::span(&out, 1));
    return out;
  }

  // Frame layout: transposed into lane layout in blocks that stay in cache.
  void decode_batch(std::span<const double> llr, std::span<std::uint8_t> hard,
                    std::span<double> posterior, std::span<FrameOutcome> outcome) override {
    const std::size_t n = code_.n(), frames = outcome.size();
    const double scale =
        settings_.quantization ? std::ldexp(1.0, -settings_.quantization->fraction_bits) : 1.0;
    constexpr std::size_t kBlock = 16;
    lane_llr_.resize(n * lanes_);
    masks_.resize(n);
    for (std::size_t first = 0; first < frames; first += lanes_) {
      const std::size_t count = std::min(lanes_, frames - first);
      for (std::size_t v0 = 0; v0 < n; v0 += kBlock) {
        const std::size_t v1 = std::min(n, v0 + kBlock);
        for (std::size_t l = 0; l < lanes_; ++l) {
          const double* frame = llr.data() + (first + l) * n;
          for (std::size_t v = v0; v < v1; ++v)
            lane_llr_[v * lanes_ + l] = l < count ? frame[v] : 0.0;  // idle lanes decode zeros
        }
      }
      lane_outcome_.resize(lanes_);
      decode_lanes(lane_llr_, masks_, lane_outcome_);
      for (std::size_t l = 0; l < count; ++l) {
        const std::size_t f = first + l;
        std::uint8_t* h = hard.data() + f * n;
        for (std::size_t v = 0; v < n; ++v) h[v] = (masks_[v] >> l) & 1u;
        if (!posterior.empty()) {
          for (std::size_t v = 0; v < n; ++v)
            posterior[f * n + v] = static_cast<double>(posterior_[v * lanes_ + l]) * scale;
        }
        outcome[f] = lane_outcome_[l];
      }
    }
  }

 private:
  std::size_t lanes_ = 1;
  std::optional<LlrQuantizer> quantize_;
  std::vector<std::uint32_t> check_start_, edge_var_, var_start_, var_edge_;
  hwy::AlignedFreeUniquePtr<T[]> channel_, posterior_, messages_, scratch_, v2c_;
  std::vector<std::int32_t> iterations_, syndrome_;
  std::vector<double> lane_llr_;
  std::vector<std::uint64_t> masks_;
  std::vector<FrameOutcome> lane_outcome_;
  LayeredArgs<T> args_;
};

}  // namespace

std::unique_ptr<Decoder> make_simd(const Code& code, const DecoderSettings& settings) {
  if (!settings.quantization) return std::make_unique<Batched<float>>(code, settings);
  if (settings.quantization->posterior_bits <= 8)
    return std::make_unique<Batched<std::int8_t>>(code, settings);
  return std::make_unique<Batched<std::int16_t>>(code, settings);
}

}  // namespace detail
}  // namespace tannery
