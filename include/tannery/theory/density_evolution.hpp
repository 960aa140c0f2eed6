// Decoding thresholds of LDPC ensembles by density evolution, and finite-length limits.
#pragma once

#include <map>
#include <string>
#include <string_view>

#include "tannery/channel/channel.hpp"
#include "tannery/code/analysis.hpp"
#include "tannery/decode/decoder.hpp"

namespace tannery {

inline constexpr std::size_t kMaxEnsembleDegree = 1024;

// Edge-perspective degree distributions: lambda[d] (variables), rho[d] (checks), each summing to 1.
struct Ensemble {
  std::map<std::size_t, double> lambda, rho;

  double design_rate() const;  // 1 - (sum rho_d / d) / (sum lambda_d / d)
  static Ensemble regular(std::size_t dv, std::size_t dc);
  // From node-perspective fractions (degree -> fraction of nodes).
  static Ensemble from_node_fractions(const std::map<std::size_t, double>& variables,
                                      const std::map<std::size_t, double>& checks);
  static Ensemble from_code(const DegreeProfile& profile);
  // Throws Error unless both sum to 1, degrees are 1..kMaxEnsembleDegree (checks >= 2) and the
  // design rate is in (0, 1).
  void validate() const;
};

// Degree fractions as written in settings: "2:0.3,3:0.7" (DEGREE:VALUE items; values of a
// repeated degree add up). Degrees are whole numbers >= 1, values finite and >= 0; setting names
// the value in errors ("--lambda", "variable_degrees").
std::map<std::size_t, double> parse_degree_map(std::string_view text, std::string_view setting);
// "DV,DC": the degrees of a regular ensemble, each a whole number >= 1.
std::pair<std::size_t, std::size_t> parse_degree_pair(std::string_view text,
                                                      std::string_view setting);

// exit: protograph EXIT analysis (protographs only, see theory/protograph.hpp).
enum class ThresholdMethod { exact, discretized, gaussian, exit };
template <>
struct Names<ThresholdMethod> {
  static constexpr std::string_view setting = "method";
  static constexpr std::pair<ThresholdMethod, std::string_view> table[] = {
      {ThresholdMethod::exact, "exact"},
      {ThresholdMethod::discretized, "discretized"},
      {ThresholdMethod::gaussian, "gaussian"},
      {ThresholdMethod::exit, "exit"}};
};

// The threshold is the worst channel at which density evolution drives the error probability of
// the messages below `target`. The min-sum family can instead stall at a floor after its
// waterfall (normalized min-sum with degree-2 variables): then `stalled`, `waterfall` is the worst
// channel at which the error probability falls to a floor (a fixed point below 1/20 of the
// channel's error probability), `floor` the error probability it stalls at there, and
// `threshold` where it finally falls below the target.
struct ThresholdResult {
  double threshold = 0;  // sigma (AWGN), p (BSC) or epsilon (BEC)
  double target = 0;     // error probability that counts as decoded (0: exact, the BEC)
  bool stalled = false;
  double waterfall = 0;          // stalled: channel value where the error falls to the floor
  double waterfall_ebn0_db = 0;  // stalled, AWGN: the same as Eb/N0
  double floor = 0;              // stalled: error probability at the waterfall's end
  double ebn0_db = 0;            // AWGN: Eb/N0 at the threshold for the design rate
  double rate = 0;               // design rate
  double limit = 0;              // capacity limit at that rate, in the same units as threshold
  double gap_db = 0;             // AWGN: Eb/N0 gap to the Shannon limit; BSC/BEC: 0
  std::string method;   // "exact (BEC)", "discretized DE, grid ..." or "Gaussian approximation"
  double accuracy = 0;  // stated accuracy of the threshold value
};

// BEC: exact recursion x <- eps lambda(1 - rho(1 - x)), bisection on eps.
double bec_threshold(const Ensemble& e);
// Discretized density evolution on a quantised LLR grid (Richardson & Urbanke 2001; Chung et al.
// 2001): variable nodes by FFT convolution; sum-product check nodes in the (sign, -log tanh|x/2|)
// domain where they become convolutions; min-sum checks through the distribution of the minimum.
// algorithm: sum-product, min-sum, normalized-min-sum (alpha), offset-min-sum (beta).
ThresholdResult awgn_threshold(const Ensemble& e, const DecoderSettings& decoder,
                               ThresholdMethod method);
ThresholdResult bsc_threshold(const Ensemble& e, const DecoderSettings& decoder);
// The threshold on any channel: the BEC's exact one (sum-product only: on the BEC every
// message-passing decoder is the peeling decoder), else bsc_threshold or awgn_threshold.
ThresholdResult threshold(const Ensemble& e, const DecoderSettings& decoder, ChannelKind kind,
                          ThresholdMethod method = ThresholdMethod::discretized);
// Where discretized density evolution ends at one channel value (AWGN sigma or BSC p): the error
// probability of the messages, below 1e-7 when it converges, else the fixed point it stalls at
// (a failure or, past the waterfall, a floor).
double density_evolution_error(const Ensemble& e, const DecoderSettings& decoder, ChannelKind kind,
                               double value);

}  // namespace tannery
