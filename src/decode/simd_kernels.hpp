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
  // Graph: checks in order, edges check-major; edge_var[e] is the variable of edge e.
  const std::uint32_t* check_start = nullptr;
  const std::uint32_t* edge_var = nullptr;
  std::size_t n = 0, m = 0, max_degree = 0;
  std::size_t lanes = 0;  // frames in this batch (the kernel's vector width)
  int iterations = 0;
  bool early_stop = true;
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
  // In: channel LLRs (posterior initialised from them). Out: posteriors, iterations used.
  const T* channel = nullptr;               // n x lanes
  T* posterior = nullptr;                   // n x lanes
  T* messages = nullptr;                    // edges x lanes (check-to-variable)
  T* scratch = nullptr;                     // 5 x max_degree x lanes
  std::int32_t* iterations_used = nullptr;  // lanes
  std::int32_t* syndrome_weight = nullptr;  // lanes: unsatisfied checks at exit
};

// Lanes per vector for the dispatched target.
std::size_t float_lanes();
std::size_t int16_lanes();
std::size_t int8_lanes();
void layered_float(const LayeredArgs<float>& args);
void layered_int16(const LayeredArgs<std::int16_t>& args);
void layered_int8(const LayeredArgs<std::int8_t>& args);
// Channel values of a batch from count LLRs in lane layout (count: a multiple of 8): float32
// clipped at +-clip (scale 1), or fixed point round(llr * scale), ties to even, saturated at
// +-clip: the rule of LlrQuantizer.
void channel_values(const double* llr, std::size_t count, double scale, double clip, float* out);
void channel_values(const double* llr, std::size_t count, double scale, double clip,
                    std::int16_t* out);
void channel_values(const double* llr, std::size_t count, double scale, double clip,
                    std::int8_t* out);
// Hard decisions of n posteriors in lane layout: bit l of masks[v] set where lane l is negative.
void sign_masks(const float* post, std::size_t n, std::uint64_t* masks);
void sign_masks(const std::int16_t* post, std::size_t n, std::uint64_t* masks);
void sign_masks(const std::int8_t* post, std::size_t n, std::uint64_t* masks);
// Targets the kernels were compiled for and this CPU supports, best first; restricting dispatch
// to one of them (empty name: automatic). false when the name is unknown.
std::vector<std::string> kernel_targets();
bool force_kernel_target(const std::string& name);

}  // namespace tannery::detail
