// Decoding: one API over every decoder. make_decoder(code, settings) builds one — the code is
// shared (std::shared_ptr<const Code>) or owned (a Code moved in), never borrowed — and it then
// decodes channel LLRs, L = log P(bit = 0) / P(bit = 1) (positive means 0):
//
//   auto decoder = make_decoder(load_code("qc-rate-half-z54"), DecoderSettings{});
//   DecodedFrame f = decoder->decode(llr);  // a span of n floats or doubles
//   // f.bits: 0, 1 or kUndecided; f.posterior; f.outcome.converged, .iterations
//
// Batches in frame layout (frames x n) go through decode(llr, hard, posterior, outcome);
// ParallelDecoder (decode/parallel.hpp) spreads them over all cores. Decoders keep their scratch
// memory between batches (no allocation after the first batch of a given size) and are not
// shared between threads: use one per thread.
//
// Kernel::reference is the scalar decoders: plain code in double precision whose job is to be
// obviously right; the batched SIMD kernels (Kernel::simd, float32 or fixed-point integer lanes)
// are tested against them, bit-exact in fixed point. Settings have one name table each
// (tannery/names.hpp) and one field table (tannery/sim/settings.hpp).
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tannery/code/code.hpp"
#include "tannery/names.hpp"

namespace tannery {

enum class Algorithm { sum_product, min_sum, normalized_min_sum, offset_min_sum, bit_flip, ml };
enum class Schedule { flooding, layered };

template <>
struct Names<Algorithm> {
  static constexpr std::string_view setting = "algorithm";
  static constexpr std::pair<Algorithm, std::string_view> table[] = {
      {Algorithm::sum_product, "sum-product"},
      {Algorithm::min_sum, "min-sum"},
      {Algorithm::normalized_min_sum, "normalized-min-sum"},
      {Algorithm::offset_min_sum, "offset-min-sum"},
      {Algorithm::bit_flip, "bit-flip"},
      {Algorithm::ml, "ml"},
  };
};
template <>
struct Names<Schedule> {
  static constexpr std::string_view setting = "schedule";
  static constexpr std::pair<Schedule, std::string_view> table[] = {
      {Schedule::flooding, "flooding"}, {Schedule::layered, "layered"}};
};

// Fixed-point decoding as hardware does it (see the README for the arithmetic): channel LLRs
// become round(L * 2^fraction) saturated to channel_bits (two's complement, symmetric range);
// check messages saturate to message_bits and posteriors to posterior_bits. SPEC syntax:
// "B.F" or "B.F:M:P", e.g. "6.2" (6-bit channel LLRs with 2 fractional bits; messages 6 bits,
// posteriors 8 bits by default) or "5.1:5:7".
struct Quantization {
  int channel_bits = 6;
  int fraction_bits = 2;
  int message_bits = 6;
  int posterior_bits = 8;
  bool operator==(const Quantization&) const = default;
};
std::optional<Quantization> parse_quantization(std::string_view spec);  // empty on bad syntax
std::string quantization_spec(const Quantization& q);
template <>
struct SettingText<Quantization> {
  static constexpr std::string_view setting = "quantize";
  static constexpr std::string_view syntax = "B.F or B.F:M:P (e.g. 6.2 or 5.1:5:7)";
  static std::optional<Quantization> parse(std::string_view text) {
    return parse_quantization(text);
  }
  static std::string format(const Quantization& q) { return quantization_spec(q); }
};

// Which implementation decodes: the scalar reference (double precision, the definition), the
// batched SIMD kernels (float32, or integer lanes when quantized) or automatic: the SIMD kernels
// where they implement the algorithm and schedule, the reference otherwise (resolve_kernel).
enum class Kernel { automatic, reference, simd };
template <>
struct Names<Kernel> {
  static constexpr std::string_view setting = "kernel";
  static constexpr std::pair<Kernel, std::string_view> table[] = {
      {Kernel::automatic, "auto"}, {Kernel::reference, "reference"}, {Kernel::simd, "simd"}};
};

struct DecoderSettings {
  Algorithm algorithm = Algorithm::sum_product;
  Schedule schedule = Schedule::flooding;
  int iterations = 50;     // maximum iterations (ignored by ml)
  bool early_stop = true;  // stop a frame once its hard decisions satisfy every check
  double alpha = 0.75;     // normalized min-sum: check messages scaled by alpha, 0 < alpha <= 1
  double beta = 0.5;       // offset min-sum: check magnitudes reduced by beta >= 0 (floored at 0)
  int flip_threshold = 0;  // bit-flip: other checks that must disagree to flip; 0 = majority
  Kernel kernel = Kernel::automatic;
  std::optional<Quantization> quantization;  // fixed-point min-sum family (layered)

  bool operator==(const DecoderSettings&) const = default;
};

// Whether the SIMD kernels implement these settings on this code: the min-sum family and
// sum-product, check degrees up to 127 (fixed point: layered schedule only).
bool simd_supports(const DecoderSettings& settings, const Code& code);
// The settings with Kernel::automatic replaced by the kernel that will decode (simd where
// simd_supports, else reference); other kernels unchanged.
DecoderSettings resolve_kernel(DecoderSettings settings, const Code& code);

// Throws Error for impossible settings (a layered bit-flip, alpha outside (0, 1]...); the
// second form also for settings this code rules out (ml above k = 24, check degrees above the
// batched kernels' limit). Messages name settings as scenario files do.
void validate(const DecoderSettings& settings);
void validate(const DecoderSettings& settings, const Code& code);
// One line such as "sum-product, flooding, 50 iterations, early stop".
std::string describe(const DecoderSettings& settings);

// Hard decisions are 0, 1 or kUndecided: a posterior LLR of exactly 0 (an erasure never
// resolved, a tie) decides nothing. An undecided bit is an error whatever was sent, and a frame
// with one has not converged, whatever its syndrome.
inline constexpr std::uint8_t kUndecided = 2;
constexpr std::uint8_t decide(double posterior) noexcept {
  return posterior < 0 ? 1 : (posterior > 0 ? 0 : kUndecided);
}

struct FrameOutcome {
  int iterations = 0;                 // iterations run (ml: 1)
  bool converged = false;             // every bit decided and every check satisfied
  std::uint32_t syndrome_weight = 0;  // unsatisfied checks at exit (undecided bits taken as 0)
  std::uint32_t undecided = 0;        // undecided bits at exit
};
// The outcome of hard decisions after `iterations`: syndrome weight, undecided bits, converged.
FrameOutcome assess(const Code& code, std::span<const std::uint8_t> hard, int iterations);
// Positions whose decision differs from the channel's own, decide(llr): what decoding changed.
std::size_t changed_decisions(std::span<const std::uint8_t> hard, std::span<const double> llr);

// Magnitude at which channel LLRs and messages are clipped: ±Inf and huge inputs become
// certainties of this size (a probability of error near e^-1e5, zero in double precision),
// so no NaN or Inf can arise inside the decoders.
inline constexpr double kLlrLimit = 1e5;

// The batched protocol of the SIMD kernels, for pipelines that work in their lane layout (the
// simulator): lanes() frames side by side, one per lane (at most 64), position v of lane l at
// [v * lanes() + l]. A batch of F frames is loaded group by group (group g holds frames
// g * lanes() + l, lane l; lanes past F are ignored), then decoded at once: lane l decodes
// frames l, l + lanes(), l + 2 lanes(), ..., each as soon as the previous one finished, so
// lanes do not wait for the slowest frame of a group. No allocation after the first batch of a
// given size.
struct LaneResults {
  std::vector<std::uint64_t> hard;       // groups x n: bit l of [g * n + v] = frame g*lanes()+l
                                         // decided 1 at v (negative posterior)
  std::vector<std::uint64_t> undecided;  // groups x n: ... posterior exactly zero
  std::vector<FrameOutcome> outcome;     // per frame
  std::vector<double> posterior;         // frames x n (frame layout), when asked for
  // When asked for, the decisions one iteration before the last, like hard and undecided: set
  // for the frames that ran out of iterations (outcome.iterations == the limit, at least 2),
  // unspecified for the others. (A frame that changes its decisions in its last iteration
  // oscillates; decoding it again with one iteration less would give the same.)
  std::vector<std::uint64_t> hard_before, undecided_before;
};

// Lane-iterations of a batched decoder: `busy` lanes decoding a frame, of `total` (lanes x
// iterations run); busy / total is its lane utilization.
struct LaneUse {
  std::uint64_t busy = 0, total = 0;
};

// A quantized batched decoder's channel values of one group, for a producer that makes them
// itself instead of passing LLRs to load() (the simulator's AWGN path): what load() would make
// of LLR L is round(L x scale) to nearest, ties to even, saturated at +-limit. n x lanes() values
// in lane layout, in `int8` or in `int16` (the other empty) by the decoder's lane type.
struct FixedPointGroup {
  double scale = 1, limit = 0;
  std::span<std::int8_t> int8;
  std::span<std::int16_t> int16;
};

class LaneDecoder {
 public:
  virtual ~LaneDecoder() = default;
  virtual std::size_t lanes() const noexcept = 0;
  // Starts a batch of `frames` frames.
  virtual void begin(std::size_t frames) = 0;
  // Group g's n x lanes() channel LLRs in lane layout; Error for a NaN (naming group, position
  // and lane) or a wrong size.
  virtual void load(std::size_t group, std::span<const double> llr) = 0;
  // Group g's values to be written in place of load(g, ...), for fixed-point decoders (nothing
  // for float lanes); Error for a group outside the batch.
  virtual std::optional<FixedPointGroup> fixed_point_group(std::size_t group) = 0;
  // Decodes the batch (every group loaded) into results, posteriors and the decisions before the
  // last iteration only when asked for.
  virtual void decode(LaneResults& results, bool want_posterior = false,
                      bool want_before = false) = 0;
  // Lane-iterations since the decoder was made.
  virtual LaneUse lane_use() const noexcept = 0;
};

// One decoded frame.
struct DecodedFrame {
  std::vector<std::uint8_t> bits;  // hard decisions: 0, 1 or kUndecided
  std::vector<double> posterior;   // posterior LLRs
  FrameOutcome outcome;
};

class Decoder {
 public:
  virtual ~Decoder() = default;

  // Decodes one frame of n channel LLRs. Error for a wrong length or a NaN.
  DecodedFrame decode(std::span<const double> llr);
  DecodedFrame decode(std::span<const float> llr);

  // Decodes outcome.size() frames. llr and hard (0, 1, kUndecided) hold frames x n values;
  // posterior is frames x n
  // or empty (not wanted). A NaN input throws Error naming the frame (first_frame + index in
  // the batch) and the position; nothing is decoded then.
  void decode(std::span<const double> llr, std::span<std::uint8_t> hard,
              std::span<double> posterior, std::span<FrameOutcome> outcome,
              std::size_t first_frame = 0);

  // The batched protocol, when this decoder has one (the SIMD kernels), else null.
  virtual LaneDecoder* lane_decoder() noexcept { return nullptr; }

  const Code& code() const noexcept { return code_; }
  const std::shared_ptr<const Code>& shared_code() const noexcept { return owner_; }
  const DecoderSettings& settings() const noexcept { return settings_; }

 protected:
  Decoder(const Code& code, const DecoderSettings& settings) : code_(code), settings_(settings) {}
  // One frame; posterior is empty when not wanted. Inputs are NaN-free.
  virtual FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                                    std::span<double> posterior) = 0;
  // A whole batch (checked, NaN-free); batched kernels override it, the default loops frames.
  virtual void decode_batch(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior, std::span<FrameOutcome> outcome);

  const Code& code_;  // *owner_
  DecoderSettings settings_;

 private:
  friend std::unique_ptr<Decoder> make_decoder(std::shared_ptr<const Code>, const DecoderSettings&);
  std::shared_ptr<const Code> owner_;
};

// Validates the settings and builds the decoder, which shares the code (one code for many
// decoders, e.g. one per thread) or, given a Code, keeps its own copy; either way nothing the
// caller holds has to outlive the decoder. Throws Error for impossible settings.
std::unique_ptr<Decoder> make_decoder(std::shared_ptr<const Code> code,
                                      const DecoderSettings& settings);
std::unique_ptr<Decoder> make_decoder(Code code, const DecoderSettings& settings);

// SIMD targets compiled in and supported by this CPU, best first (names as Highway gives them),
// and the one the batched kernels dispatch to.
std::vector<std::string> simd_targets();
std::string active_simd_target();

}  // namespace tannery
