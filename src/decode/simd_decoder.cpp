// The batched decoder: groups frames into SIMD lanes (one frame per lane), transposes them to the
// lane-interleaved layout, runs the dispatched kernel and transposes the results back.
#include <fmt/format.h>
#include <hwy/aligned_allocator.h>
#include <algorithm>
#include <array>
#include <atomic>
#include <bit>
#include <cmath>
#include <limits>
#include <optional>
#include <type_traits>
#include <utility>
#include <vector>

#include "decoders.hpp"
#include "simd_control.hpp"
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

namespace {
std::atomic<std::size_t> compress_above{kCompressAboveBytes};
}  // namespace

void compress_simd_checks_above(std::size_t bytes) {
  compress_above = bytes;
}

namespace detail {

namespace {

template <class T>
class Batched final : public Decoder, public LaneDecoder {
 public:
  Batched(const Code& code, const DecoderSettings& settings) : Decoder(code, settings) {
    lanes_ = lane_count(T{});
    TANNERY_ASSERT(lanes_ <= 64);  // lane sets are 64-bit masks (x86 vectors hold at most 64)
    args_.flooding = settings.schedule == Schedule::flooding;
    // The decoder owns its code (Decoder::code_), so the kernels walk the code's own arrays.
    args_.var_start = code.variable_starts().data();
    args_.var_edge = code.variable_edge_ids().data();
    args_.check_start = code.check_starts().data();
    // Where each edge's variable row starts (32-bit offsets keep the kernels' index arrays small).
    if (code.n() * lanes_ > std::numeric_limits<std::uint32_t>::max())
      throw Error(
          fmt::format("the SIMD kernel holds at most {} variables in {} lanes; this code has {}",
                      std::numeric_limits<std::uint32_t>::max() / lanes_, lanes_, code.n()));
    edge_row_.reserve(code.edges());
    for (const std::uint32_t v : code.edge_variables())
      edge_row_.push_back(static_cast<std::uint32_t>(v * lanes_));
    args_.edge_row = edge_row_.data();
    args_.n = code.n();
    args_.m = code.m();
    args_.max_degree = std::max<std::size_t>(code.max_check_degree(), 1);
    args_.lanes = lanes_;
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
    const std::size_t edges = std::max<std::size_t>(code.edges(), 1);
    if (!args_.flooding && args_.rule != CheckRule::sum_product &&
        edges * lanes_ * sizeof(T) > compress_above) {
      check_magnitudes_ = hwy::AllocateAligned<T>(2 * std::max<std::size_t>(code.m(), 1) * lanes_);
      edge_marks_ = hwy::AllocateAligned<std::uint8_t>(2 * edges * mask_bytes(lanes_));
      args_.check_magnitudes = check_magnitudes_.get();
      args_.edge_marks = edge_marks_.get();
    } else {
      messages_ = hwy::AllocateAligned<T>(edges * lanes_);
      args_.messages = messages_.get();
    }
    scratch_ = hwy::AllocateAligned<T>(4 * args_.max_degree * lanes_);
    if (args_.flooding) {
      v2c_ = hwy::AllocateAligned<T>(edges * lanes_);
      args_.v2c = v2c_.get();
    }
    args_.channel = channel_.get();
    args_.posterior = posterior_.get();
    args_.scratch = scratch_.get();
  }

  LaneDecoder* lane_decoder() noexcept override { return this; }
  std::size_t lanes() const noexcept override { return lanes_; }
  LaneUse lane_use() const noexcept override { return use_; }

  void begin(std::size_t frames) override {
    frames_ = frames;
    groups_.resize((frames + lanes_ - 1) / lanes_ * code_.n() * lanes_);
  }

  std::optional<FixedPointGroup> fixed_point_group(std::size_t g) override {
    if constexpr (std::is_floating_point_v<T>) {
      return std::nullopt;
    } else {
      if (g * lanes_ >= frames_) {
        throw Error(fmt::format("group {} is outside a batch of {} frames in {} lanes", g, frames_,
                                lanes_));
      }
      const std::size_t group = code_.n() * lanes_;
      FixedPointGroup out{quantize_->scale(), quantize_->limit(), {}, {}};
      const std::span<T> values(groups_.data() + g * group, group);
      if constexpr (sizeof(T) == 1) {
        out.int8 = values;
      } else {
        out.int16 = values;
      }
      return out;
    }
  }

  void load(std::size_t g, std::span<const double> llr) override {
    const std::size_t group = code_.n() * lanes_;
    if (g * lanes_ >= frames_ || llr.size() != group) {
      throw Error(
          fmt::format("load: group {} of {} values does not fit a batch of {} frames in "
                      "{} lanes, n = {}",
                      g, llr.size(), frames_, lanes_, code_.n()));
    }
    const double scale = quantize_ ? quantize_->scale() : 1.0;
    const double clip = quantize_ ? quantize_->limit() : kLlrLimit;
    if (channel_values(llr.data(), group, scale, clip, groups_.data() + g * group)) return;
    const auto nan = std::ranges::find_if(llr, [](double x) { return std::isnan(x); });
    const auto i = static_cast<std::size_t>(nan - llr.begin());
    throw Error(fmt::format("group {}, position {}, lane {}: channel LLR is NaN", g, i / lanes_,
                            i % lanes_));
  }

  void decode(LaneResults& results, bool want_posterior, bool want_before) override {
    const std::size_t n = code_.n(), masks = groups_.size() / lanes_;
    const bool before = want_before && settings_.iterations >= 2;
    results.hard.assign(masks, 0);
    results.undecided.assign(masks, 0);
    results.outcome.resize(frames_);
    results.posterior.resize(want_posterior ? frames_ * n : 0);
    results.hard_before.assign(before ? masks : 0, 0);
    results.undecided_before.assign(before ? masks : 0, 0);
    stream(results);
  }

 protected:
  FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior) override {
    FrameOutcome out;
    decode_batch(llr, hard, posterior, std::span(&out, 1));
    return out;
  }

  // Frame layout: frames transposed into groups (frame f in lane f % lanes, idle lanes zero).
  void decode_batch(std::span<const double> llr, std::span<std::uint8_t> hard,
                    std::span<double> posterior, std::span<FrameOutcome> outcome) override {
    const std::size_t n = code_.n(), frames = outcome.size();
    begin(frames);
    group_llr_.resize(n * lanes_);
    for (std::size_t g = 0; g * lanes_ < frames; ++g) {
      for (std::size_t l = 0; l < lanes_; ++l) {
        const std::size_t f = g * lanes_ + l;
        for (std::size_t v = 0; v < n; ++v)
          group_llr_[v * lanes_ + l] = f < frames ? llr[f * n + v] : 0.0;
      }
      load(g, group_llr_);
    }
    decode(results_, !posterior.empty(), false);
    for (std::size_t f = 0; f < frames; ++f) {
      const std::uint64_t* decided = results_.hard.data() + f / lanes_ * n;
      const std::uint64_t* zero = results_.undecided.data() + f / lanes_ * n;
      const std::size_t l = f % lanes_;
      for (std::size_t v = 0; v < n; ++v)
        hard[f * n + v] = (zero[v] >> l) & 1u ? kUndecided : (decided[v] >> l) & 1u;
      outcome[f] = results_.outcome[f];
    }
    std::copy(results_.posterior.begin(), results_.posterior.end(), posterior.begin());
  }

 private:
  // Decodes the frames held in groups_: lane l takes frames l, l + lanes, ... in turn, the next
  // as soon as the previous one is done (converged with early stop, or out of iterations), then
  // frames left in other lanes' columns; a lane with no frame left idles (frozen) until the
  // last one is done. A finished frame's decisions, outcome and posteriors go to results at once
  // (its lane is refilled next).
  void stream(LaneResults& results) {
    const std::size_t frames = frames_;
    if (frames == 0) return;
    const std::size_t n = code_.n(), group = n * lanes_;
    const int max_iterations = settings_.iterations;
    std::array<std::size_t, 64> frame_of{};
    std::array<FrameOutcome, 64> outcome{};
    std::array<int, 64> iterations{};
    std::uint64_t active = 0, fresh = 0;
    for (std::size_t l = 0; l < lanes_ && l < frames; ++l) frame_of[l] = l, active |= bit(l);
    // Column c holds frames c, c + lanes, ...: own_next[c] is the next of them to start, last[c]
    // the last that no other lane took. A lane whose column is done takes the last frame of the
    // column with the most left, so the lanes run dry together instead of one column at a time.
    std::array<std::size_t, 64> own_next{}, last{};
    for (std::size_t c = 0; c < lanes_; ++c) {
      own_next[c] = c + lanes_;
      last[c] = c < frames ? c + (frames - 1 - c) / lanes_ * lanes_ : c;
    }
    auto left = [&](std::size_t c) {
      return own_next[c] <= last[c] ? (last[c] - own_next[c]) / lanes_ + 1 : 0;
    };
    std::copy(groups_.begin(), groups_.begin() + static_cast<std::ptrdiff_t>(group),
              channel_.get());
    start(args_);  // posteriors = channel, messages zero
    masks_.resize(n);
    zeros_.resize(n);
    std::vector<const T*> refill_rows;  // one per group that gives frames this iteration
    std::vector<std::uint64_t> refill_lanes;
    while (active) {
      use_.busy += static_cast<std::uint64_t>(std::popcount(active));
      use_.total += lanes_;
      iterate(args_, fresh, ~active & all_lanes());
      fresh = 0;
      std::uint64_t at_limit = 0, one_short = 0;  // lanes at, and one iteration before, the limit
      for (std::uint64_t a = active; a; a &= a - 1) {
        const int l = std::countr_zero(a), it = ++iterations[l];
        if (it == max_iterations) at_limit |= bit(static_cast<std::size_t>(l));
        if (it == max_iterations - 1) one_short |= bit(static_cast<std::size_t>(l));
      }
      if (results.hard_before.empty()) one_short = 0;
      const bool may_finish = settings_.early_stop || at_limit;
      if (!may_finish && !one_short) continue;
      const std::uint64_t undecided = sign_masks(args_, masks_.data(), zeros_.data());
      if (one_short)
        record_masks(one_short, undecided, frame_of, results.hard_before, results.undecided_before);
      if (!may_finish) continue;
      // Lanes that stop here: converged (zero syndrome, nothing undecided) with early stop, and
      // every lane at the limit (its outcome is completed after the batch, outcomes_at_limit).
      const std::uint64_t unsat =
          settings_.early_stop ? unsatisfied(active & ~at_limit & ~undecided) | undecided : 0;
      const std::uint64_t finished = (settings_.early_stop ? active & ~unsat : 0) | at_limit;
      if (!finished) continue;
      refill_rows.clear();
      refill_lanes.clear();
      for (std::uint64_t a = finished; a; a &= a - 1) {
        const auto l = static_cast<std::size_t>(std::countr_zero(a));
        outcome[l] = {};
        outcome[l].iterations = iterations[l];
        outcome[l].converged = !(at_limit & bit(l));
      }
      record(finished, undecided, frame_of, outcome, results);
      for (std::uint64_t a = finished; a; a &= a - 1) {
        const auto l = static_cast<std::size_t>(std::countr_zero(a));
        std::size_t next = 0;
        if (left(l)) {
          next = own_next[l];
          own_next[l] += lanes_;
        } else {
          std::size_t most = 0;
          for (std::size_t c = 0; c < lanes_; ++c) most = left(c) > left(most) ? c : most;
          if (!left(most)) {
            active &= ~bit(l);
            continue;
          }
          next = last[most];
          last[most] -= lanes_;
        }
        frame_of[l] = next;
        iterations[l] = 0;
        fresh |= bit(l);
        if (next % lanes_ != l) {
          refill_lane(l, next);
          continue;
        }
        const T* rows = groups_.data() + next / lanes_ * group;
        const auto at = std::find(refill_rows.begin(), refill_rows.end(), rows);
        if (at == refill_rows.end()) {
          refill_rows.push_back(rows);
          refill_lanes.push_back(bit(l));
        } else {
          refill_lanes[static_cast<std::size_t>(at - refill_rows.begin())] |= bit(l);
        }
      }
      if (!refill_rows.empty())
        refill(args_, refill_rows.data(), refill_lanes.data(), refill_rows.size());
    }
    outcomes_at_limit(results);
  }

  // Lane l takes frame f of another column: its posteriors (and, for flooding, channel values)
  // one value per position (where refill moves whole rows of a group).
  void refill_lane(std::size_t l, std::size_t f) {
    const std::size_t n = code_.n();
    const T* from = groups_.data() + f / lanes_ * n * lanes_ + f % lanes_;
    for (std::size_t v = 0; v < n; ++v) posterior_[v * lanes_ + l] = from[v * lanes_];
    if (std::is_floating_point_v<T> && args_.flooding) {
      for (std::size_t v = 0; v < n; ++v) channel_[v * lanes_ + l] = from[v * lanes_];
    }
  }

  // The outcomes of the frames that ran to the iteration limit, from their recorded decisions:
  // syndrome weight (undecided bits counted as 0), undecided bits, converged. One pass over the
  // checks and positions per group that has such frames, instead of one per iteration.
  void outcomes_at_limit(LaneResults& results) const {
    const std::size_t n = code_.n();
    for (std::size_t g = 0; g * lanes_ < frames_; ++g) {
      std::uint64_t limit = 0;
      for (std::size_t l = 0; l < lanes_ && g * lanes_ + l < frames_; ++l) {
        if (results.outcome[g * lanes_ + l].iterations == settings_.iterations) limit |= bit(l);
      }
      if (!limit) continue;
      const std::uint64_t* hard = results.hard.data() + g * n;
      const std::uint64_t* zero = results.undecided.data() + g * n;
      const auto weight =
          lane_counts(limit, code_.m(), [&](std::size_t c) { return parity(c, hard); });
      const auto undecided = lane_counts(limit, n, [&](std::size_t v) { return zero[v]; });
      for (std::uint64_t a = limit; a; a &= a - 1) {
        const auto l = static_cast<std::size_t>(std::countr_zero(a));
        FrameOutcome& o = results.outcome[g * lanes_ + l];
        o.syndrome_weight = weight[l];
        o.undecided = undecided[l];
        o.converged = o.syndrome_weight == 0 && o.undecided == 0;
      }
    }
  }

  // For each lane l of `lanes`, the number of i < count whose mask_of(i) has bit l set, counted
  // in bit-sliced counters (bit l of level b is bit b of lane l's count): the four lowest in
  // registers, the carries out of them (one add in 16 at most) in memory.
  template <class F>
  static std::array<std::uint32_t, 64> lane_counts(std::uint64_t lanes, std::size_t count,
                                                   const F& mask_of) {
    std::uint64_t c0 = 0, c1 = 0, c2 = 0, c3 = 0;
    std::array<std::uint64_t, 28> high{};  // levels 4..31
    for (std::size_t i = 0; i < count; ++i) {
      std::uint64_t x = mask_of(i) & lanes, t;
      t = c0 & x, c0 ^= x, x = t;
      t = c1 & x, c1 ^= x, x = t;
      t = c2 & x, c2 ^= x, x = t;
      t = c3 & x, c3 ^= x, x = t;
      for (std::size_t b = 0; x; ++b) t = high[b] & x, high[b] ^= x, x = t;
    }
    std::array<std::uint32_t, 64> out{};
    for (std::uint64_t a = lanes; a; a &= a - 1) {
      const int l = std::countr_zero(a);
      auto level = [&](std::uint64_t c, std::size_t b) {
        return static_cast<std::uint32_t>((c >> l) & 1u) << b;
      };
      std::uint32_t w = level(c0, 0) | level(c1, 1) | level(c2, 2) | level(c3, 3);
      for (std::size_t b = 0; b < high.size(); ++b) w |= level(high[b], b + 4);
      out[static_cast<std::size_t>(l)] = w;
    }
    return out;
  }

  // The decisions of the lanes in `which` (masks_, zeros_) into their frames' bits of the
  // groups' masks `decided` and `zero` (groups x n, bit j of group g: frame g lanes + j): one
  // pass over the positions per group among the lanes holding a frame of their own column (the
  // zero masks only for a group with a lane in `undecided`), one per lane holding another's.
  void record_masks(std::uint64_t which, std::uint64_t undecided,
                    const std::array<std::size_t, 64>& frame_of,
                    std::vector<std::uint64_t>& decided, std::vector<std::uint64_t>& zero) const {
    const std::size_t n = code_.n();
    std::uint64_t own = 0;
    for (std::uint64_t a = which; a; a &= a - 1) {
      const auto l = static_cast<std::size_t>(std::countr_zero(a));
      if (frame_of[l] % lanes_ == l) {
        own |= bit(l);
        continue;
      }
      const std::size_t g = frame_of[l] / lanes_, j = frame_of[l] % lanes_;
      std::uint64_t* d = decided.data() + g * n;
      for (std::size_t v = 0; v < n; ++v) d[v] |= ((masks_[v] >> l) & 1u) << j;
      if (!(undecided & bit(l))) continue;
      std::uint64_t* z = zero.data() + g * n;
      for (std::size_t v = 0; v < n; ++v) z[v] |= ((zeros_[v] >> l) & 1u) << j;
    }
    for (std::uint64_t rest = own; rest;) {
      const std::size_t g = frame_of[static_cast<std::size_t>(std::countr_zero(rest))] / lanes_;
      std::uint64_t in = 0;
      for (std::uint64_t a = rest; a; a &= a - 1) {
        const auto l = static_cast<std::size_t>(std::countr_zero(a));
        if (frame_of[l] / lanes_ == g) in |= bit(l);
      }
      rest &= ~in;
      std::uint64_t* d = decided.data() + g * n;
      for (std::size_t v = 0; v < n; ++v) d[v] |= masks_[v] & in;
      if (!(in & undecided)) continue;
      std::uint64_t* z = zero.data() + g * n;
      for (std::size_t v = 0; v < n; ++v) z[v] |= zeros_[v] & in;
    }
  }

  // The finished lanes' decisions, outcomes and, when asked for, posteriors.
  void record(std::uint64_t finished, std::uint64_t undecided,
              const std::array<std::size_t, 64>& frame_of,
              const std::array<FrameOutcome, 64>& outcome, LaneResults& results) const {
    const std::size_t n = code_.n();
    record_masks(finished, undecided, frame_of, results.hard, results.undecided);
    const double scale =
        settings_.quantization ? std::ldexp(1.0, -settings_.quantization->fraction_bits) : 1.0;
    for (std::uint64_t a = finished; a; a &= a - 1) {
      const auto l = static_cast<std::size_t>(std::countr_zero(a));
      const std::size_t f = frame_of[l];
      results.outcome[f] = outcome[l];
      if (results.posterior.empty()) continue;
      for (std::size_t v = 0; v < n; ++v)
        results.posterior[f * n + v] = static_cast<double>(posterior_[v * lanes_ + l]) * scale;
    }
  }

  // Syndromes of all lanes at once from hard decisions (`masks`: per position, bit l set where
  // lane l decided 1): bit l of check c's parity is lane l's syndrome bit. One XOR of 64-bit
  // masks per edge, where the posteriors themselves would be a vector row each; checks of the
  // common degrees unrolled.
  std::uint64_t parity(std::size_t c, const std::uint64_t* masks) const noexcept {
    const std::uint32_t* start = code_.check_starts().data();
    const std::uint32_t* v = code_.edge_variables().data() + start[c];
    switch (start[c + 1] - start[c]) {
#define TANNERY_DEGREE(k) \
  case k:                 \
    return xor_of(v, masks, std::make_index_sequence<k>());
      TANNERY_DEGREE(2)
      TANNERY_DEGREE(3)
      TANNERY_DEGREE(4)
      TANNERY_DEGREE(5)
      TANNERY_DEGREE(6)
      TANNERY_DEGREE(7)
      TANNERY_DEGREE(8)
      TANNERY_DEGREE(9)
      TANNERY_DEGREE(10)
      TANNERY_DEGREE(11)
      TANNERY_DEGREE(12)
#undef TANNERY_DEGREE
      default:
        std::uint64_t p = 0;
        for (std::uint32_t i = start[c]; i < start[c + 1]; ++i) p ^= masks[*v++];
        return p;
    }
  }
  template <std::size_t... I>
  static std::uint64_t xor_of(const std::uint32_t* v, const std::uint64_t* masks,
                              std::index_sequence<I...>) noexcept {
    return (masks[v[I]] ^ ...);
  }
  // The lanes with an unsatisfied check, exact for the lanes in `need`: the pass ends once each
  // of them has one.
  std::uint64_t unsatisfied(std::uint64_t need) const noexcept {
    std::uint64_t any = 0;
    for (std::size_t c = 0; c < code_.m() && (any & need) != need; ++c)
      any |= parity(c, masks_.data());
    return any;
  }

  static std::uint64_t bit(std::size_t l) noexcept {
    return std::uint64_t{1} << l;
  }
  std::uint64_t all_lanes() const noexcept {
    return lanes_ >= 64 ? ~std::uint64_t{0} : (std::uint64_t{1} << lanes_) - 1;
  }

  std::size_t lanes_ = 1;
  std::optional<LlrQuantizer> quantize_;
  hwy::AlignedFreeUniquePtr<T[]> channel_, posterior_, messages_, check_magnitudes_, scratch_, v2c_;
  hwy::AlignedFreeUniquePtr<std::uint8_t[]> edge_marks_;
  std::vector<std::uint32_t> edge_row_;  // LayeredArgs::edge_row
  std::vector<T> groups_;                // channel values of the frames being decoded, in groups
  std::vector<std::uint64_t> masks_, zeros_;  // per variable: negative, zero posterior lanes
  std::size_t frames_ = 0;                    // of the batch begun
  LaneUse use_;
  std::vector<double> group_llr_;
  LaneResults results_;  // of decode_batch
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
