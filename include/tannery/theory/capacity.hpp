// Channel capacities, the limits they put on a code of a given rate, and the finite-length
// limit of a code of a given length and dimension (normal approximation).
#pragma once

#include <cstddef>
#include <utility>

#include "tannery/channel/channel.hpp"

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

// Finite-length limits.
// Normal approximation of the finite-length limit (Polyanskiy, Poor, Verdu 2010):
// log2 M* ~ n C - sqrt(n V) Qinv(eps) + log2(n) / 2. Returns the smallest FER achievable by a
// code of length n with k information bits at the channel parameter.
double normal_approximation_fer(ChannelKind kind, double parameter_value, std::size_t n,
                                std::size_t k);
// Capacity and dispersion (bits, bits^2) of BPSK-AWGN at sigma, the BSC at p, the BEC at epsilon.
std::pair<double, double> capacity_dispersion(ChannelKind kind, double value);

}  // namespace tannery
