// Channels: AWGN and Rayleigh fading (with any modulation, tannery/channel/link.hpp), the binary
// symmetric channel, the binary erasure channel. Conventions: BPSK maps bit 0 to +1;
// L = log P(0)/P(1), positive means 0.
#pragma once

#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <utility>

#include "tannery/channel/modulation.hpp"
#include "tannery/names.hpp"

namespace tannery {

// rayleigh: y = a x + n, the amplitude a Rayleigh distributed with E[a^2] = 1 (the magnitude of
// a circular complex Gaussian gain, its phase known to the receiver), n as on AWGN.
enum class ChannelKind { awgn, rayleigh, bsc, bec };
// How the AWGN sweep parameter is given: Eb/N0 or Es/N0, in dB.
enum class SnrMeasure { ebn0, esn0 };

template <>
struct Names<ChannelKind> {
  static constexpr std::string_view setting = "channel";
  static constexpr std::pair<ChannelKind, std::string_view> table[] = {
      {ChannelKind::awgn, "awgn"},
      {ChannelKind::rayleigh, "rayleigh"},
      {ChannelKind::bsc, "bsc"},
      {ChannelKind::bec, "bec"}};
};
// Channels swept by a signal-to-noise ratio in dB (AWGN, Rayleigh); the others by a probability.
constexpr bool snr_swept(ChannelKind kind) {
  return kind == ChannelKind::awgn || kind == ChannelKind::rayleigh;
}
template <>
struct Names<SnrMeasure> {
  static constexpr std::string_view setting = "snr";
  static constexpr std::pair<SnrMeasure, std::string_view> table[] = {{SnrMeasure::ebn0, "ebn0"},
                                                                      {SnrMeasure::esn0, "esn0"}};
};

// Noise standard deviation per real dimension for unit-energy symbols carrying R information
// bits each: sigma^2 = 1 / (2 R 10^(Eb/N0 / 10)) for Eb/N0, and 1 / (2 10^(Es/N0 / 10)) for
// Es/N0 (R = the code rate for BPSK).
double awgn_sigma(double snr_db, SnrMeasure measure, double rate);
double esn0_db_from_ebn0(double ebn0_db, double rate);

// A channel at one operating point: AWGN and Rayleigh by the noise sigma, BSC by crossover p,
// BEC by erasure probability. The decoder may assume a different (mismatched) value for its LLRs.
// Made only through the functions below, which refuse values no simulation can represent (a sigma
// of 0 or one whose LLR scale 2 / sigma^2 overflows), so a point always means a real channel.
class ChannelPoint {
 public:
  // BPSK over AWGN with noise standard deviation sigma per real dimension (unit-energy
  // symbols); LLRs computed for assumed_sigma (default sigma).
  static ChannelPoint awgn(double sigma, std::optional<double> assumed_sigma = {});
  // Rayleigh fading with noise sigma per real dimension, the same for the LLRs.
  static ChannelPoint rayleigh(double sigma, std::optional<double> assumed_sigma = {});
  // Crossover probability p in [0, 0.5]; LLR magnitude from assumed_p (default p).
  static ChannelPoint bsc(double p, std::optional<double> assumed_p = {});
  // Erasure probability epsilon in [0, 1].
  static ChannelPoint bec(double epsilon);

  ChannelKind kind() const noexcept { return kind_; }
  // sigma (AWGN, Rayleigh), p (BSC) or epsilon (BEC)
  double value() const noexcept { return value_; }
  double assumed_value() const noexcept { return assumed_; }  // what the LLRs assume

 private:
  ChannelPoint(ChannelKind kind, double value, double assumed)
      : kind_(kind), value_(value), assumed_(assumed) {}
  ChannelKind kind_;
  double value_, assumed_;
};

// How a sweep is read, what is sent and what the LLRs assume: the settings of a simulated link.
struct ChannelSpec {
  ChannelKind kind = ChannelKind::awgn;
  SnrMeasure measure = SnrMeasure::ebn0;  // AWGN, Rayleigh: sweep values are Eb/N0 or Es/N0 in dB
  bool design_rate = false;               // Eb/N0 with 1 - m/n instead of the true k/n
  double snr_offset_db = 0;  // AWGN, Rayleigh: LLRs computed for an SNR this much higher
  std::optional<double>
      assumed_crossover;  // BSC: LLR magnitude from this p instead of the true one
  Modulation modulation;  // AWGN, Rayleigh
  Demapper demapper = Demapper::exact;
  Interleaver interleaver;         // the order in which sent code bits fill the symbols
  std::uint32_t fading_block = 1;  // Rayleigh: symbols per fading amplitude (1: fast fading)
  bool ignore_fading = false;      // Rayleigh: the receiver assumes amplitude 1 (mismatch)
  std::string puncture;            // puncture map file ('' : every code bit sent)
  bool operator==(const ChannelSpec&) const = default;
};

// The channel model as the command line writes it: awgn, rayleigh:fast, rayleigh:block:B, bsc,
// bec (kind and fading_block); nullopt for other text.
std::optional<std::pair<ChannelKind, std::uint32_t>> parse_channel_model(std::string_view text);
std::string channel_model(const ChannelSpec& spec);
// The link in words: "rayleigh:block:4, 64qam (exact demapper, interleaver random:3)" (the
// channel alone for BPSK), with the puncture map file when there is one.
std::string describe(const ChannelSpec& spec);

// Throws Error for settings that do not fit the channel kind (an SNR offset on the BSC...).
void validate(const ChannelSpec& channel);

// The operating point of sweep value `parameter` (Eb/N0 or Es/N0 in dB, p or epsilon) under
// these settings; rate is the information bits per transmitted symbol, used by Eb/N0 (k/n for
// BPSK with every code bit sent; see Link::snr_rate). Error naming the value when it is
// outside the channel's range or the noise it gives cannot be represented.
ChannelPoint channel_point(const ChannelSpec& spec, double parameter, double rate);

// Validates a sweep value: p in [0, 0.5], epsilon in [0, 1], Eb/N0 finite. Throws Error.
void check_channel_parameter(ChannelKind kind, double parameter);

// The LLR factor of a channel: 2 / sigma_assumed^2 (AWGN and Rayleigh BPSK, times the received
// value and the amplitude),
// log((1 - p)/p) for the assumed p (BSC; +-Inf at p = 0 or 1), +Inf (BEC).
double llr_magnitude(const ChannelPoint& channel);

// Transmits one codeword and computes its channel LLRs from one noise value per bit: a standard
// Gaussian z for AWGN, a uniform u in [0, 1) for BSC/BEC (the caller's RNG).
// AWGN: y = (1 - 2c) + sigma z, L = 2 y / sigma_assumed^2; BSC: the bit flips when u < p,
// L = +-log((1-p)/p); BEC: erased (L = 0) when u < epsilon, else L = +-Inf. Not Rayleigh (a
// Link transmits that).
void transmit(const ChannelPoint& channel, std::span<const std::uint8_t> codeword,
              std::span<const double> gaussian_or_uniform, std::span<double> llr);

}  // namespace tannery
