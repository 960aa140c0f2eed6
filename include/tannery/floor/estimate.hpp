// Importance-sampled frame error rate in the error floor, in the spirit of Cole, Wilson, Hall &
// Giallorenzi, "A general method for finding low error rates of LDPC codes" (2006): BPSK on the
// AWGN channel, the all-zero word sent, and for each structure T (a set of a bits from
// floor_search) frames whose noise is shifted toward T.
//
// At each Eb/N0 (sigma from the code's rate k/n):
//   1. candidates (see `candidates`): for each, the smallest uniform mean shift s (in signal
//      amplitudes, by bisection on [0, 3]) at which the noiseless word with its bits at 1 - s
//      fails to decode; candidates that never fail are left out;
//   2. a pilot of 256 frames per remaining candidate at that shift; the max_structures with the
//      largest pilot estimates (then the largest proxy) are sampled;
//   3. three cross-entropy rounds (frames / 8 each) move each bit's shift s_j to the weighted mean
//      of the noise on that bit over the frames that failed on the structure (smoothing 0.7);
//   4. N frames with noise n ~ q = N(mu, sigma^2 I), mu_j = -s_j on T's bits and 0 elsewhere,
//      each weighted by p(n) / q(n) = exp((sum s_j^2 + 2 sum s_j n_j) / (2 sigma^2));
//   5. a failure with wrong bits W is attributed to the sampled structure (any member of any
//      sampled orbit) most similar to it, |W and T| / |W or T| (Jaccard's index), shared equally
//      on ties: I = 1 / ties for T, else 0;
//   6. P_T = (1/N) sum w I, its standard error from the sample variance of w I, and its effective
//      sample size (sum w I)^2 / sum (w I)^2. The orbit's multiplicity M multiplies both.
// The events "a failure attributed to T" are disjoint over T, so the sum over structures
// estimates the probability of a failure on one of them: a lower estimate of the FER. The
// interval is the normal one, estimate +- z * standard error (clipped at 0). A point is marked
// unreliable when its estimate is 0 or when a structure carrying >= 5% of it has an effective
// sample size below the minimum (the weights of a few frames dominate: a poor bias).
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <vector>

#include "tannery/floor/search.hpp"
#include "tannery/sim/simulator.hpp"

namespace tannery {

struct FloorEstimateSettings {
  DecoderSettings decoder;
  std::vector<double> sweep;     // Eb/N0 in dB
  std::uint64_t frames = 20000;  // biased frames per structure and point
  // Structures whose shift is looked for (step 1): half with the fewest odd checks b (then a),
  // half the smallest by a + b.
  std::size_t candidates = 256;
  // Structures sampled per point: the most likely candidates by the rough proxy
  // M * Q(s * sqrt(a) / sigma) (the probability of the shifted direction alone).
  std::size_t max_structures = 8;
  std::optional<double> shift;  // one shift for every structure instead of step 1 (0: no bias)
  double min_ess = 30;
  std::uint64_t seed = 1;
  unsigned threads = 0;  // 0: one per core
};

// Step 1's outcome for one structure (for the report): its shift, or none found up to 3.
struct StructureBias {
  std::size_t structure = 0;  // index in the list given
  std::optional<double> shift;
  double proxy = 0;
};

struct FloorEstimatePoint {
  PointResult point;                  // parameter, counts and importance
  std::vector<StructureBias> biases;  // every structure, in the list's order
};

using EstimateProgress =
    std::function<void(std::size_t point, std::uint64_t done, std::uint64_t total)>;

// structures: the candidates (e.g. a search's codewords and trapping sets); each sampled one
// becomes a StructureEstimate of the point. Throws Error for an empty list, a set with a bit
// out of range or bad settings.
std::vector<FloorEstimatePoint> floor_estimate(std::shared_ptr<const Code> code,
                                               const std::vector<FoundStructure>& structures,
                                               const FloorEstimateSettings& settings,
                                               const EstimateProgress& progress = {});

}  // namespace tannery
