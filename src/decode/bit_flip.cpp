// Hard-decision message passing for the BSC (Gallager's algorithm B): a variable tells a check
// its channel bit unless at least `threshold` of its other checks say otherwise. A position
// whose channel LLR is 0 (an erasure) has no channel bit to start from: its decisions are
// guesses and it stays undecided (this decoder is for the BSC, not for erasures).
#include <vector>

#include "decoders.hpp"

namespace tannery::detail {

namespace {

class BitFlip final : public Decoder {
 public:
  BitFlip(const Code& code, const DecoderSettings& settings)
      : Decoder(code, settings), v2c_(code.edges()), c2v_(code.edges()), received_(code.n()) {}

 protected:
  FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior) override {
    const Code& code = code_;
    for (std::size_t v = 0; v < code.n(); ++v) received_[v] = llr[v] < 0 ? 1 : 0;
    for (std::size_t e = 0; e < code.edges(); ++e) v2c_[e] = received_[code.edge_variable(e)];
    FrameOutcome outcome;
    for (int it = 1; it <= settings_.iterations; ++it) {
      for (std::size_t c = 0; c < code.m(); ++c) {
        std::uint8_t parity = 0;
        for (std::uint32_t e = code.check_begin(c); e < code.check_end(c); ++e) parity ^= v2c_[e];
        for (std::uint32_t e = code.check_begin(c); e < code.check_end(c); ++e)
          c2v_[e] = parity ^ v2c_[e];
      }
      for (std::size_t v = 0; v < code.n(); ++v) {
        const auto edges = code.variable_edges(v);
        const std::uint8_t r = received_[v];
        std::size_t against = 0;  // checks that say the bit is not r
        for (std::uint32_t e : edges) against += c2v_[e] != r;
        // Decision: majority of the channel bit and all checks; a tie keeps the channel bit.
        hard[v] = llr[v] == 0 ? kUndecided : (2 * against > edges.size() ? r ^ 1 : r);
        if (!posterior.empty()) {
          // Vote margin for 0 (channel counts one vote): a soft-looking summary, not an LLR.
          const double for_r = 1.0 + static_cast<double>(edges.size() - against);
          const double margin = for_r - static_cast<double>(against);
          posterior[v] = r ? -margin : margin;
        }
        const std::size_t threshold =
            settings_.flip_threshold > 0
                ? static_cast<std::size_t>(settings_.flip_threshold)
                : (edges.size() - 1) / 2 + 1;  // strict majority of the others
        for (std::uint32_t e : edges) {
          const std::size_t others_against = against - (c2v_[e] != r);
          v2c_[e] = others_against >= threshold && edges.size() > 1 ? r ^ 1 : r;
        }
      }
      outcome = assess(code, hard, it);
      if (settings_.early_stop && outcome.converged) break;
    }
    return outcome;
  }

 private:
  std::vector<std::uint8_t> v2c_, c2v_, received_;
};

}  // namespace

std::unique_ptr<Decoder> make_bit_flip(const Code& code, const DecoderSettings& settings) {
  return std::make_unique<BitFlip>(code, settings);
}

}  // namespace tannery::detail
