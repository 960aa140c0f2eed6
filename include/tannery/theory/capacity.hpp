// Channel capacities and the limits they put on a code of a given rate.
#pragma once

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

}  // namespace tannery
