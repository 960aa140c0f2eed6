// Arguments of the batched layered kernels (private to the library). Data are lane-interleaved:
// value x of node/edge i for frame (lane) l sits at [i * lanes + l]. No vector types here.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace tannery::detail {

enum class CheckRule : int { min_sum, normalized, offset, sum_product };

template <class T>
struct LayeredArgs {
  // Graph: checks in order, edges check-major; edge_row[e] = v x lanes for the variable v of
  // edge e: where its row starts in the posteriors and channel values.
  const std::uint32_t* check_start = nullptr;
  const std::uint32_t* edge_row = nullptr;
  std::size_t n = 0, m = 0, max_degree = 0;
  std::size_t lanes = 0;  // frames in this batch (the kernel's vector width)
  // Flooding (float only): all checks from the variable-to-check messages, then all variables.
  bool flooding = false;
  const std::uint32_t* var_start =
      nullptr;  // n + 1: edges of variable v are var_edge[var_start[v]..]
  const std::uint32_t* var_edge = nullptr;
  T* v2c = nullptr;  // edges x lanes
  CheckRule rule = CheckRule::min_sum;
  // Float: alpha, beta in LLR units. Fixed point: alpha_eighths = round(8 alpha) applied as
  // m - floor(m * (8 - alpha_eighths) / 8), beta in LSBs, saturation limits.
  float alpha = 1, beta = 0;
  int alpha_eighths = 8;
  int beta_lsb = 0;
  int message_limit = 0, posterior_limit = 0;
  // Channel values (posteriors start from them) and the decoder state.
  T* channel = nullptr;    // n x lanes
  T* posterior = nullptr;  // n x lanes
  // Check-to-variable messages: sum-product and flooding keep one per edge; layered min-sum
  // keeps each check's state compressed, as a hardware decoder would: the two messages it sends
  // to an edge whose input is positive (rule and the sign of all its inputs applied; an edge
  // with a negative input gets their negative) and, per edge, two lane masks of
  // mask_bytes(lanes) bytes: the edge held the smallest input (it was sent the second one), its
  // input was negative.
  T* messages = nullptr;               // edges x lanes (sum-product, flooding)
  T* check_magnitudes = nullptr;       // m x 2 x lanes (layered min-sum)
  std::uint8_t* edge_marks = nullptr;  // edges x 2 x mask_bytes(lanes) (layered min-sum)
  T* scratch = nullptr;                // 4 x max_degree x lanes
};

// Bytes of a lane mask (one bit per lane).
constexpr std::size_t mask_bytes(std::size_t lanes) {
  return (lanes + 7) / 8;
}

// The batch kernels, for T = float, int16 and int8 lanes. lane_count: lanes per vector of T for
// the dispatched target (call as lane_count(T{})). Lane sets are bit masks (bit l: lane l).
// start: posteriors from the channel values, messages zero. iterate: one iteration; lanes in
// `fresh` were given a new frame since (posterior = channel, messages count as zero), lanes in
// `frozen` keep their posteriors. refill: for each k < count (1 to 64), posteriors (flooding:
// also channel values) of the lanes in lanes[k] from rows[k] (n x lanes, the same layout).
// sign_masks: bit l of masks[v] set where lane l of posterior v is negative, of zeros[v] where
// it is zero (the hard decisions and the undecided bits, from which the caller computes syndromes);
// returns the lanes with a zero posterior.
// channel_values: count LLRs in lane layout (count: a multiple of 8) to channel values: float32
// clipped at +-clip (scale 1), or fixed point round(llr * scale), ties to even, saturated at +-clip
// (the rule of LlrQuantizer); false when an LLR is NaN.
#define TANNERY_BATCH_KERNELS(T)                                                            \
  std::size_t lane_count(T);                                                                \
  void start(const LayeredArgs<T>& args);                                                   \
  void iterate(const LayeredArgs<T>& args, std::uint64_t fresh, std::uint64_t frozen);      \
  void refill(const LayeredArgs<T>& args, const T* const* rows, const std::uint64_t* lanes, \
              std::size_t count);                                                           \
  std::uint64_t sign_masks(const LayeredArgs<T>& args, std::uint64_t* masks,                \
                           std::uint64_t* zeros);                                           \
  bool channel_values(const double* llr, std::size_t count, double scale, double clip, T* out);
TANNERY_BATCH_KERNELS(float)
TANNERY_BATCH_KERNELS(std::int16_t)
TANNERY_BATCH_KERNELS(std::int8_t)
#undef TANNERY_BATCH_KERNELS
// Targets the kernels were compiled for and this CPU supports, best first; restricting dispatch
// to one of them (empty name: automatic). false when the name is unknown.
std::vector<std::string> kernel_targets();
bool force_kernel_target(const std::string& name);

}  // namespace tannery::detail
