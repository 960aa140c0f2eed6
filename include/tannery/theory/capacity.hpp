// Channel capacities, the limits they put on a code of a given rate, and the finite-length
// limit of a code of a given length and dimension (normal approximation).
#pragma once

#include <cstddef>
#include <utility>

#include "tannery/channel/channel.hpp"
#include "tannery/channel/modulation.hpp"

namespace tannery {

// Capacity of BPSK over AWGN (binary input, unquantised output) in bits per channel use, for
// noise deviation sigma: C = 1 - E[log2(1 + exp(-2Y / sigma^2))], Y ~ N(1, sigma^2), by
// composite Simpson integration over +-14 sigma (error far below 1e-12).
double biawgn_capacity(double sigma);
// Smallest Eb/N0 (dB) at which the BPSK-AWGN capacity reaches rate R, 0 < R < 1.
double biawgn_shannon_limit_ebn0_db(double rate);
double binary_entropy(double p);          // h2(p) in bits
double bsc_capacity(double p);            // 1 - h2(p)
double bec_capacity(double epsilon);      // 1 - epsilon
double bsc_limit_crossover(double rate);  // largest p with 1 - h2(p) >= R (p <= 1/2)
// Bit error rate of uncoded BPSK over AWGN: Q(sqrt(2 Eb/N0)).
double uncoded_bpsk_ber(double ebn0_db);

// Capacities of a constellation (unit average energy, equally likely points) at Es/N0 in dB,
// noise variance 1 / (2 Es/N0) per real dimension, in bits per symbol:
// coded modulation  C = m - E[log2 sum_x' p(y|x') / p(y|x)]  (the mutual information of the
//                   symbols, what a receiver decoding symbols can reach),
// bicm              C = sum over label bits of I(bit; y)  (bit-interleaved coded modulation: the
//                   bits demapped one by one, tannery's receiver).
// On awgn by Gauss-Hermite quadrature (128 nodes per dimension; square QAM, whose two axes are
// independent PAMs, as twice its PAM exactly); on rayleigh the ergodic capacity with the
// amplitude known to the receiver, E over a^2 ~ Exp(1) of the AWGN capacity at a^2 Es/N0, by
// Gauss-Laguerre quadrature (128 nodes). Agrees with adaptive quadrature (scipy) to about 1e-8.
enum class CapacityKind { coded_modulation, bicm };
template <>
struct Names<CapacityKind> {
  static constexpr std::string_view setting = "capacity";
  static constexpr std::pair<CapacityKind, std::string_view> table[] = {
      {CapacityKind::coded_modulation, "coded-modulation"}, {CapacityKind::bicm, "bicm"}};
};
double modulation_capacity(const Constellation& c, CapacityKind kind, ChannelKind channel,
                           double esn0_db);
// Smallest Eb/N0 (dB) at which that capacity reaches `rate` information bits per symbol
// (0 < rate < bits per symbol): Es/N0 = Eb/N0 + 10 log10(rate).
double modulation_shannon_limit_ebn0_db(const Constellation& c, CapacityKind kind,
                                        ChannelKind channel, double rate);

// Finite-length limits.
// Normal approximation of the finite-length limit (Polyanskiy, Poor, Verdu 2010):
// log2 M* ~ n C - sqrt(n V) Qinv(eps) + log2(n) / 2. Returns the smallest FER achievable by a
// code of length n with k information bits at the channel parameter.
double normal_approximation_fer(ChannelKind kind, double parameter_value, std::size_t n,
                                std::size_t k);
// Capacity and dispersion (bits, bits^2) of BPSK-AWGN at sigma, the BSC at p, the BEC at epsilon.
std::pair<double, double> capacity_dispersion(ChannelKind kind, double value);

}  // namespace tannery
