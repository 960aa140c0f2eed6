// Sum-product and the min-sum family on the Tanner graph, flooding or layered schedule.
#include <algorithm>
#include <cmath>
#include <vector>

#include "decoders.hpp"

namespace tannery::detail {

namespace {

// log(1 + e^-x) for x >= 0; below 2e-22 beyond x = 50, where it is dropped.
double softplus_negative(double x) {
  return x > 50 ? 0.0 : std::log1p(std::exp(-x));
}

// a ⊞ b = 2 atanh(tanh(a/2) tanh(b/2)), in the form that is exact and overflow-free for any
// finite a, b: sign(a) sign(b) min(|a|, |b|) + log1p(e^-|a+b|) - log1p(e^-|a-b|).
double boxplus(double a, double b) {
  const double s = (a < 0) != (b < 0) ? -1.0 : 1.0;
  return s * std::min(std::abs(a), std::abs(b)) + softplus_negative(std::abs(a + b)) -
         softplus_negative(std::abs(a - b));
}

class BeliefPropagation final : public Decoder {
 public:
  BeliefPropagation(const Code& code, const DecoderSettings& settings) : Decoder(code, settings) {
    const std::size_t max_degree = code.max_check_degree();
    v2c_.resize(code.edges());
    c2v_.resize(code.edges());
    channel_.resize(code.n());
    total_.resize(code.n());
    in_.resize(max_degree);
    forward_.resize(max_degree + 1);
  }

 protected:
  FrameOutcome decode_frame(std::span<const double> llr, std::span<std::uint8_t> hard,
                            std::span<double> posterior) override {
    const Code& code = code_;
    for (std::size_t v = 0; v < code.n(); ++v) channel_[v] = clip_llr(llr[v]);
    FrameOutcome outcome;
    if (settings_.schedule == Schedule::flooding) {
      for (std::size_t e = 0; e < code.edges(); ++e) v2c_[e] = channel_[code.edge_variable(e)];
    } else {
      std::copy(channel_.begin(), channel_.end(), total_.begin());
      std::fill(c2v_.begin(), c2v_.end(), 0.0);
    }
    for (int it = 1; it <= settings_.iterations; ++it) {
      if (settings_.schedule == Schedule::flooding)
        flooding_iteration();
      else
        layered_iteration();
      for (std::size_t v = 0; v < code.n(); ++v) hard[v] = decide(total_[v]);
      outcome = assess(code, hard, it);
      if (settings_.early_stop && outcome.converged) break;
    }
    if (!posterior.empty()) std::copy(total_.begin(), total_.end(), posterior.begin());
    return outcome;
  }

 private:
  // All checks from the variable-to-check messages, then all variables.
  void flooding_iteration() {
    const Code& code = code_;
    for (std::size_t c = 0; c < code.m(); ++c) {
      const std::size_t b = code.check_begin(c), d = code.check_degree(c);
      check_rule({v2c_.data() + b, d}, {c2v_.data() + b, d});
    }
    for (std::size_t v = 0; v < code.n(); ++v) {
      double total = channel_[v];
      for (std::uint32_t e : code.variable_edges(v)) total += c2v_[e];
      total_[v] = total;
      for (std::uint32_t e : code.variable_edges(v)) v2c_[e] = clip_llr(total - c2v_[e]);
    }
  }

  // Checks in order; each updates the posteriors of its variables at once.
  void layered_iteration() {
    const Code& code = code_;
    for (std::size_t c = 0; c < code.m(); ++c) {
      const std::size_t b = code.check_begin(c), d = code.check_degree(c);
      auto vars = code.check_variables(c);
      for (std::size_t i = 0; i < d; ++i) in_[i] = clip_llr(total_[vars[i]] - c2v_[b + i]);
      check_rule({in_.data(), d}, {c2v_.data() + b, d});
      for (std::size_t i = 0; i < d; ++i) total_[vars[i]] = in_[i] + c2v_[b + i];
    }
  }

  // Check-node rule: out[i] from all in[j], j != i. A check with one variable pins it to 0.
  void check_rule(std::span<const double> in, std::span<double> out) {
    const std::size_t d = in.size();
    if (d == 0) return;
    if (d == 1) {
      out[0] = kLlrLimit;
      return;
    }
    if (settings_.algorithm == Algorithm::sum_product) {
      // forward_[i] = in[0] ⊞ ... ⊞ in[i-1]; a running backward product completes each output.
      forward_[1] = in[0];
      for (std::size_t i = 1; i + 1 < d; ++i) forward_[i + 1] = boxplus(forward_[i], in[i]);
      double backward = in[d - 1];
      out[d - 1] = forward_[d - 1];
      for (std::size_t i = d - 1; i-- > 1;) {
        out[i] = boxplus(forward_[i], backward);
        backward = boxplus(backward, in[i]);
      }
      out[0] = backward;
      return;
    }
    double min1 = kLlrLimit, min2 = kLlrLimit;
    std::size_t at = 0;
    bool negative = false;
    for (std::size_t i = 0; i < d; ++i) {
      const double a = std::abs(in[i]);
      negative ^= in[i] < 0;
      if (a < min1) {
        min2 = min1;
        min1 = a;
        at = i;
      } else if (a < min2) {
        min2 = a;
      }
    }
    for (std::size_t i = 0; i < d; ++i) {
      double magnitude = i == at ? min2 : min1;
      if (settings_.algorithm == Algorithm::normalized_min_sum) magnitude *= settings_.alpha;
      if (settings_.algorithm == Algorithm::offset_min_sum)
        magnitude = std::max(magnitude - settings_.beta, 0.0);
      out[i] = (negative != (in[i] < 0)) ? -magnitude : magnitude;
    }
  }

  std::vector<double> v2c_, c2v_, channel_, total_, in_, forward_;
};

}  // namespace

std::unique_ptr<Decoder> make_belief_propagation(const Code& code,
                                                 const DecoderSettings& settings) {
  return std::make_unique<BeliefPropagation>(code, settings);
}

}  // namespace tannery::detail
