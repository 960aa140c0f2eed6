// The settings of a simulation as tables of fields: one entry per setting with its key (in
// scenario and results files and as a Python keyword), its command-line flag and its help text,
// bound to the member it sets. Every reader and writer of settings walks these tables, so a
// setting has one name, one default (the member's initialiser) and one description everywhere:
//
//   for_each_field<DecoderSettings>([&](const auto& field) {
//     std::cout << field.key << " = " << settings.*field.member;  // ...
//   });
#pragma once

#include <optional>
#include <string_view>
#include <tuple>

#include "tannery/sim/simulator.hpp"

namespace tannery {

template <class S, class T>
struct Field {
  using Settings = S;
  using Value = T;
  std::string_view key;   // scenario and results files, Python keywords
  std::string_view flag;  // command line ('' : set by a command-specific option); a "--no-..."
                          // flag sets a bool to false
  std::string_view help;  // with units
  T S::*member;
};

template <class S>
struct Fields;

template <class T>
inline constexpr bool is_optional = false;
template <class T>
inline constexpr bool is_optional<std::optional<T>> = true;
template <class T>
struct optional_value {
  using type = T;
};
template <class T>
struct optional_value<std::optional<T>> {
  using type = T;
};
template <class T>
using optional_value_t = typename optional_value<T>::type;

template <class S, class F>
constexpr void for_each_field(F&& f) {
  std::apply([&](const auto&... field) { (f(field), ...); }, Fields<S>::all);
}

template <>
struct Fields<DecoderSettings> {
  using S = DecoderSettings;
  static constexpr std::tuple all{
      Field<S, Algorithm>{"algorithm", "--algorithm",
                          "sum-product (exact check rule), min-sum, normalized-min-sum (alpha), "
                          "offset-min-sum (beta), bit-flip (hard decisions, BSC), ml "
                          "(exhaustive, k <= 24)",
                          &S::algorithm},
      Field<S, Schedule>{"schedule", "--schedule",
                         "flooding (all checks, then all variables) or layered (check by check)",
                         &S::schedule},
      Field<S, int>{"iterations", "--iterations", "maximum decoder iterations per frame",
                    &S::iterations},
      Field<S, bool>{"early_stop", "--no-early-stop",
                     "always run every iteration (as fixed-iteration hardware does) instead of "
                     "stopping at a zero syndrome",
                     &S::early_stop},
      Field<S, double>{"alpha", "--alpha", "normalization factor of normalized-min-sum, in (0, 1]",
                       &S::alpha},
      Field<S, double>{"beta", "--beta", "offset of offset-min-sum (LLR units, >= 0)", &S::beta},
      Field<S, int>{"flip_threshold", "--flip-threshold",
                    "bit-flip: other checks that must disagree to flip a message (0: strict "
                    "majority)",
                    &S::flip_threshold},
      Field<S, Kernel>{"kernel", "--kernel",
                       "auto (simd where it implements the algorithm and schedule, else "
                       "reference), reference (scalar double precision, the definition) or simd "
                       "(batched float32 or integer lanes, one frame per lane)",
                       &S::kernel},
      Field<S, std::optional<Quantization>>{
          "quantize", "--quantize",
          "fixed-point decoding: B.F or B.F:M:P = channel LLRs on B bits with F fractional "
          "bits, messages on M bits (default B), posteriors on P bits (default B+2); min-sum "
          "family, layered",
          &S::quantization},
  };
};

// The algorithm a decoder parameter belongs to (alpha, beta, flip_threshold); giving it for
// another algorithm is a slip every reader of settings refuses.
constexpr std::optional<Algorithm> parameter_owner(std::string_view key) {
  if (key == "alpha") return Algorithm::normalized_min_sum;
  if (key == "beta") return Algorithm::offset_min_sum;
  if (key == "flip_threshold") return Algorithm::bit_flip;
  return std::nullopt;
}

template <>
struct Fields<ChannelSpec> {
  using S = ChannelSpec;
  static constexpr std::tuple all{
      // The command line gives kind and fading_block together: --channel rayleigh:block:8.
      Field<S, ChannelKind>{"kind", "",
                            "awgn, rayleigh, bsc (crossover p) or bec (erasure "
                            "probability)",
                            &S::kind},
      Field<S, std::uint32_t>{"fading_block", "",
                              "rayleigh: symbols per fading amplitude (1: fast fading)",
                              &S::fading_block},
      Field<S, Modulation>{"modulation", "--modulation",
                           "bpsk, qpsk, 16qam, 64qam, 256qam, 4pam, 8pam (Gray labels, unit "
                           "energy) or a constellation file (lines LABEL I [Q])",
                           &S::modulation},
      Field<S, Demapper>{"demapper", "--demapper",
                         "bit LLRs: exact (log-sum-exp over the constellation) or max-log",
                         &S::demapper},
      Field<S, Interleaver>{"interleaver", "--interleaver",
                            "order of the sent code bits in the symbols: none, random:SEED or "
                            "block:ROWSxCOLS (written by rows, read by columns)",
                            &S::interleaver},
      Field<S, bool>{"ignore_fading", "--ignore-fading",
                     "rayleigh: the receiver demaps as if the amplitude were 1 (mismatch study)",
                     &S::ignore_fading},
      Field<S, std::string>{"puncture", "--puncture",
                            "puncture map file: lines 'punctured LIST' (not sent, LLR 0) or "
                            "'shortened LIST' (information bits known to be 0, not sent)",
                            &S::puncture},
      Field<S, SnrMeasure>{"snr", "--snr",
                           "awgn/rayleigh sweep measure: ebn0 (Eb/N0 in dB) or esn0 (Es/N0 in "
                           "dB)",
                           &S::measure},
      Field<S, bool>{"design_rate", "--design-rate",
                     "Eb/N0 with the design rate 1 - m/n instead of the true rate k/n",
                     &S::design_rate},
      Field<S, double>{"snr_offset_db", "--snr-offset",
                       "decoder's noise estimate is off: LLRs computed for an SNR this many dB "
                       "higher (awgn/rayleigh mismatch)",
                       &S::snr_offset_db},
      Field<S, std::optional<double>>{
          "assumed_crossover", "--assumed-p",
          "bsc: LLR magnitude log((1-p)/p) from this p instead of the true one",
          &S::assumed_crossover},
  };
};

template <>
struct Fields<StopRules> {
  using S = StopRules;
  static constexpr std::tuple all{
      Field<S, std::uint64_t>{"frame_errors", "--frame-errors",
                              "a point stops after at least this many frame errors",
                              &S::frame_errors},
      Field<S, std::uint64_t>{"max_frames", "--max-frames",
                              "a point stops after this many frames; the sweep stops at a "
                              "point with no error in that many",
                              &S::max_frames},
      Field<S, double>{"max_seconds", "--max-seconds",
                       "a point stops after this many seconds, 0 = no limit (wall clock: the "
                       "one rule that makes counts machine-dependent)",
                       &S::max_seconds},
      Field<S, double>{"stop_below_fer", "--stop-below",
                       "the sweep stops after a point whose FER is below this", &S::stop_below_fer},
  };
};

// The run settings of a simulation besides its decoder, channel, sweep and stop rules.
template <>
struct Fields<SimulationConfig> {
  using S = SimulationConfig;
  static constexpr std::tuple all{
      Field<S, std::uint64_t>{"seed", "--seed", "seed of the Philox streams", &S::seed},
      Field<S, std::uint32_t>{"chunk_frames", "--chunk",
                              "frames per chunk, the unit of work and of stop-rule evaluation "
                              "(0: automatic, 64; with the simd kernel up to 1024, by code "
                              "length, so batches refill in a chunk)",
                              &S::chunk_frames},
      Field<S, bool>{"all_zero", "--all-zero",
                     "send the all-zero codeword instead of random data: valid only for "
                     "symmetric channels and decoders (all here are), and it skips encoding",
                     &S::all_zero},
      Field<S, double>{"confidence", "--confidence", "level of the FER and BER intervals",
                       &S::confidence},
  };
};

}  // namespace tannery
