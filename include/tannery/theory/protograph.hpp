// Thresholds of protographs: protograph EXIT analysis on the BPSK-AWGN channel and exact erasure
// density evolution on the BEC.
#pragma once

#include <functional>
#include <optional>
#include <string>

#include "tannery/code/construct.hpp"
#include "tannery/theory/density_evolution.hpp"

namespace tannery {

// The J function of EXIT analysis: the mutual information between a bit and its LLR when the LLR
// is Gaussian and consistent (mean sigma^2 / 2, standard deviation sigma), J(sigma) =
// 1 - E[log2(1 + exp(-L))]. Computed once by numerical integration (composite Simpson over the
// Gaussian, step <= min(0.02, 0.2 / sigma)) on a grid of sigma in [0, 40] and interpolated, so
// J(sigma) and its complement 1 - J(sigma) keep about 10 significant digits at both ends;
// beyond sigma = 40 the complement (below 1e-87) is taken as that at 40.
double exit_j(double sigma);
double exit_j_complement(double sigma);  // 1 - J(sigma), accurate where J is near 1
// The inverse: the sigma with J(sigma) = information, or with 1 - J(sigma) = complement, both in
// [0, 1]; full information gives sigma = 40.
double exit_j_inverse(double information);
double exit_j_inverse_complement(double complement);

// Whether protograph EXIT analysis (Liva & Chiani, "Protograph LDPC codes design based on EXIT
// analysis", Globecom 2007) converges for BPSK on AWGN with noise deviation sigma: every edge type
// (i, j) carries the mutual information of its messages, variable nodes add J^-1(I)^2 over their
// other incoming edges and the channel (8 R Eb/N0 = 4 / sigma^2; 0 for punctured columns), check
// nodes do the same on 1 - I (the duality approximation), multiplicities counting each parallel
// edge; it converges when the a-posteriori information of every variable type exceeds
// 1 - 1e-7. Stops at `max_iterations` or when an iteration no longer raises it.
bool protograph_exit_converges(const Protograph& p, double sigma, int max_iterations = 10000);
// Whether exact erasure density evolution on the protograph (per edge type) drives the erasure
// probability of every variable type below 1e-12 at channel erasure probability epsilon
// (punctured columns: erased with probability 1).
bool protograph_bec_converges(const Protograph& p, double epsilon);

// The ensemble a protograph stands for when its lifts are indistinguishable from the unstructured
// ensemble's: every variable type of one degree, every check type of one degree, nothing
// punctured (a regular protograph). Otherwise none.
std::optional<Ensemble> protograph_ensemble(const Protograph& p);

// Threshold of a protograph, sum-product decoding. awgn: ThresholdMethod::exit (protograph EXIT
// analysis, bisection on sigma to `tolerance`), or discretized / gaussian on its ensemble when it
// reduces to one (regular, unpunctured; Error otherwise); bec: exact. rate, limit and gap_db are
// those of the design rate.
ThresholdResult protograph_threshold(const Protograph& p, ChannelKind kind,
                                     ThresholdMethod method = ThresholdMethod::exit,
                                     double tolerance = 1e-5);

// ---- design ------------------------------------------------------------------------------------

// Why a protograph breaks the design rules the search keeps, or empty when it keeps them:
// - every variable type has an edge and every check type degree >= 2; punctured types degree >= 2;
// - degree-1 variable types only as a precoder: sent, on a check that also joins a punctured type
//   and holds no other degree-1 type (the accumulator of AR4JA-like designs);
// - the degree-2 variable types form no cycle among the check types (common practice: a cycle
//   of degree-2 variables lifts to codewords whose weight grows only slowly with the length);
// - encodable (4 rows or more): the last `rows` columns are the parity part, a weight-3 column
//   (rows 1, M-1 and M, each 1) then a dual diagonal (column k in rows k and k + 1, counting from
//   1), which `construct lift --encodable` lifts so that peeling encodes it in linear time.
std::string protograph_design_violation(const Protograph& p, bool encodable);

// An upper bound on the minimum distance of every lifting `construct lift --encodable` makes of
// an encodable protograph, whatever its length: the weight (punctured bits counted) of a codeword
// made of one bit of an information column and the parity part's response. The parity part is
// lifted with shift 0 on the dual diagonal and on the weight-3 column's rows 1 and M-1, so a
// check defect in parity row i (from 0) is cleared by the dual diagonal down to row M-1
// (M - 1 - i bits), then one bit of the weight-3 column with the dual diagonal above row M-1
// (M - 1 bits): 1 + the sum over the column's edges of 2M - 2 - i (parallel edges lie in different
// copies of the parity part; overlapping responses only cancel). The smallest over the
// information columns; long codes need it large, hence many rows. Throws Error when the
// protograph breaks the encodable design rules.
std::size_t encodable_weight_bound(const Protograph& p);

struct ProtographSearchSettings {
  double rate = 0.5;
  std::size_t rows = 4;                 // check types M; columns N = (M - R P) / (1 - R)
  std::size_t max_multiplicity = 3;     // entries 0..T
  std::size_t punctured = 0;            // punctured variable types P: the first P columns
  bool encodable = false;               // fixed parity part (see protograph_design_violation)
  std::size_t max_variable_degree = 0;  // bound on column degrees (short codes); 0: none
  std::size_t min_weight = 0;  // encodable: smallest encodable_weight_bound allowed; 0: none
  std::uint64_t seed = 1;
  std::size_t rounds = 0;           // independent annealing rounds; 0: as many as the budget allows
  double budget_seconds = 60;       // rounds == 0: rounds start until this much time has passed
  std::size_t steps = 300;          // candidates evaluated per round
  unsigned threads = 0;             // 0: one per core; the result does not depend on it
  std::optional<Protograph> start;  // every round starts here instead of at random
};
struct ProtographSearchResult {
  Protograph best;
  ThresholdResult threshold;  // of best, to 1e-5 in sigma
  std::optional<ThresholdResult> start_threshold;
  std::size_t rounds = 0, evaluations = 0;
  std::size_t best_round = 0;
};
// (rounds done, evaluations, best Eb/N0 so far in dB), after each batch of rounds.
using ProtographProgress = std::function<void(std::size_t, std::size_t, double)>;
// Searches protographs of the given shape for the lowest protograph EXIT threshold on BPSK-AWGN
// by simulated annealing: each round starts from a random protograph that keeps the design rules
// (or from `start`), changes one entry or moves one edge within a column per step, and accepts a
// worse threshold with probability exp(-delta / temperature), the temperature falling from 0.3 dB
// to 0.003 dB over the round. Rounds run in parallel and are seeded by (seed, round), so the
// result is a function of the seed and the number of rounds (printed, to be given as `rounds`
// when the budget decided it).
ProtographSearchResult search_protograph(const ProtographSearchSettings& s,
                                         const ProtographProgress& progress = {});

}  // namespace tannery
