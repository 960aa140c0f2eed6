// Binary-input channels: BPSK over AWGN, the binary symmetric channel, the binary erasure
// channel. Conventions: BPSK maps bit 0 to +1; L = log P(0)/P(1), positive means 0.
#pragma once

#include <cstdint>
#include <optional>
#include <span>
#include <string_view>

#include "tannery/names.hpp"

namespace tannery {

enum class ChannelKind { awgn, bsc, bec };
// How the AWGN sweep parameter is given: Eb/N0 or Es/N0, in dB.
enum class SnrMeasure { ebn0, esn0 };

template <>
struct Names<ChannelKind> {
  static constexpr std::string_view setting = "channel";
  static constexpr std::pair<ChannelKind, std::string_view> table[] = {
      {ChannelKind::awgn, "awgn"}, {ChannelKind::bsc, "bsc"}, {ChannelKind::bec, "bec"}};
};
template <>
struct Names<SnrMeasure> {
  static constexpr std::string_view setting = "snr";
  static constexpr std::pair<SnrMeasure, std::string_view> table[] = {{SnrMeasure::ebn0, "ebn0"},
                                                                      {SnrMeasure::esn0, "esn0"}};
};

// Noise standard deviation per real dimension for unit-energy BPSK:
// sigma^2 = 1 / (2 R 10^(Eb/N0 / 10)) for Eb/N0, and 1 / (2 10^(Es/N0 / 10)) for Es/N0.
double awgn_sigma(double snr_db, SnrMeasure measure, double rate);
double esn0_db_from_ebn0(double ebn0_db, double rate);

// A channel at one operating point: AWGN by sigma, BSC by crossover p, BEC by erasure
// probability. The decoder may assume a different (mismatched) value for its LLRs.
struct ChannelPoint {
  ChannelKind kind = ChannelKind::awgn;
  double value = 0;          // sigma (AWGN), p (BSC) or epsilon (BEC)
  double assumed_value = 0;  // what the LLR computation assumes (equal unless mismatched)
};

// Validates a sweep value: p in [0, 0.5], epsilon in [0, 1], Eb/N0 finite. Throws Error.
void check_channel_parameter(ChannelKind kind, double parameter);

// The LLR factor of a channel: 2 / sigma_assumed^2 (AWGN, times the received value),
// log((1 - p)/p) for the assumed p (BSC; +-Inf at p = 0 or 1), +Inf (BEC).
double llr_magnitude(const ChannelPoint& channel);

// Transmits one codeword and computes its channel LLRs from one noise value per bit: a standard
// Gaussian z for AWGN, a uniform u in [0, 1) for BSC/BEC (the caller's RNG).
// AWGN: y = (1 - 2c) + sigma z, L = 2 y / sigma_assumed^2; BSC: the bit flips when u < p,
// L = +-log((1-p)/p); BEC: erased (L = 0) when u < epsilon, else L = +-Inf.
void transmit(const ChannelPoint& channel, std::span<const std::uint8_t> codeword,
              std::span<const double> gaussian_or_uniform, std::span<double> llr);

}  // namespace tannery
