// Thresholds of protographs: protograph EXIT analysis on the BPSK-AWGN channel and exact erasure
// density evolution on the BEC.
#pragma once

#include <optional>

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

}  // namespace tannery
