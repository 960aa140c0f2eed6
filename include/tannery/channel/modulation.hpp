// Modulations and bit demapping: code bits to constellation points and received points back to
// bit LLRs. Conventions: unit average symbol energy; label bit 0 is the most significant bit of a
// point's label and carries the first code bit of the symbol; L = log P(0)/P(1).
//
//   const Constellation qam = Constellation::standard(ModulationKind::qam16);
//   // received in-phase and quadrature values, noise variance per real dimension sigma^2:
//   std::vector<double> llr(symbols * qam.bits());
//   demap(qam, Demapper::exact, in_phase, quadrature, {}, sigma * sigma, llr);
#pragma once

#include <complex>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tannery/names.hpp"

namespace tannery {

enum class ModulationKind { bpsk, qpsk, qam16, qam64, qam256, pam4, pam8, custom };
template <>
struct Names<ModulationKind> {
  static constexpr std::string_view setting = "modulation";
  static constexpr std::pair<ModulationKind, std::string_view> table[] = {
      {ModulationKind::bpsk, "bpsk"},     {ModulationKind::qpsk, "qpsk"},
      {ModulationKind::qam16, "16qam"},   {ModulationKind::qam64, "64qam"},
      {ModulationKind::qam256, "256qam"}, {ModulationKind::pam4, "4pam"},
      {ModulationKind::pam8, "8pam"},     {ModulationKind::custom, "custom"}};
};

// A modulation setting: a standard one by name, or a custom constellation file.
struct Modulation {
  ModulationKind kind = ModulationKind::bpsk;
  std::string file;  // custom only
  bool operator==(const Modulation&) const = default;
};
template <>
struct SettingText<Modulation> {
  static constexpr std::string_view setting = "modulation";
  static constexpr std::string_view syntax =
      "bpsk, qpsk, 16qam, 64qam, 256qam, 4pam, 8pam or a constellation file";
  static std::optional<Modulation> parse(std::string_view text);
  static std::string format(const Modulation& m);
};

// Exact log-MAP LLRs (log-sum-exp over the constellation) or the max-log approximation (the
// nearest point of each bit value).
enum class Demapper { exact, max_log };
template <>
struct Names<Demapper> {
  static constexpr std::string_view setting = "demapper";
  static constexpr std::pair<Demapper, std::string_view> table[] = {{Demapper::exact, "exact"},
                                                                    {Demapper::max_log, "max-log"}};
};

// The order in which sent code bits fill the symbols' labels: as they come, in a pseudo-random
// permutation drawn from a seed, or written into a rows x cols block by rows and read by columns.
struct Interleaver {
  enum Kind { none, random, block };
  Kind kind = none;
  std::uint64_t seed = 0;            // random
  std::uint32_t rows = 0, cols = 0;  // block
  bool operator==(const Interleaver&) const = default;
};
template <>
struct SettingText<Interleaver> {
  static constexpr std::string_view setting = "interleaver";
  static constexpr std::string_view syntax = "none, random:SEED or block:ROWSxCOLS";
  static std::optional<Interleaver> parse(std::string_view text);
  static std::string format(const Interleaver& i);
};
// order[j] is the sent bit carried by label slot j (symbol j / bits, label bit j % bits).
// Error when a block's rows x cols is not the number of bits.
std::vector<std::uint32_t> interleaver_order(const Interleaver& interleaver, std::size_t bits);

// A constellation: 2^bits points indexed by label, unit average energy. Real constellations
// (BPSK, PAM) use the in-phase dimension only. Square QAM with Gray labels is the product of two
// Gray PAMs (first half of the label on the in-phase axis, second half on the quadrature axis),
// and its exact and max-log LLRs separate into those of the two PAMs, which the demapper uses.
class Constellation {
 public:
  // Binary-reflected Gray labels: PAM level i from the top (+(M-1)d down to -(M-1)d) has label
  // i ^ (i >> 1), so BPSK sends 0 as +1, as everywhere in tannery.
  static Constellation standard(ModulationKind kind);
  // Text: one point per line, "LABEL I [Q]" with LABEL in binary (all labels of one length m,
  // each of the 2^m once); '#' starts a comment. Scaled to unit average energy. Error naming the
  // file and line.
  static Constellation parse(std::string_view text, const std::string& source);
  static Constellation read(const std::string& path);
  static Constellation of(const Modulation& m);  // standard, or read from m.file

  unsigned bits() const noexcept { return bits_; }
  std::size_t size() const noexcept { return points_.size(); }
  bool complex() const noexcept { return complex_; }  // uses the quadrature dimension
  std::complex<double> point(std::uint32_t label) const { return points_.at(label); }
  const std::vector<std::complex<double>>& points() const noexcept { return points_; }
  double scale() const noexcept { return scale_; }  // custom: factor applied for unit energy
  // Bits per dimension when the constellation is a Gray PAM or the product of two (square QAM,
  // QPSK): pam_levels() are the PAM's levels by label; 0 otherwise (custom).
  unsigned pam_bits() const noexcept { return pam_bits_; }
  const std::vector<double>& pam_levels() const noexcept { return pam_; }
  // The label-to-point table: "label  in-phase  quadrature" lines, labels in binary, 17
  // significant digits: a constellation file that parse() reads back to the same points (to
  // rounding).
  std::string table() const;

 private:
  std::vector<std::complex<double>> points_;
  unsigned bits_ = 1;
  bool complex_ = false;
  double scale_ = 1;
  unsigned pam_bits_ = 0;
  std::vector<double> pam_;
};

// Bit LLRs of received symbols y = a x + n (a the fading amplitude the receiver assumes, 1 when
// amplitude is empty; n Gaussian with variance noise_variance per real dimension):
// llr[s * bits + b] = log sum_{x: b=0} exp(-|y - a x|^2 / 2 sigma^2) - log sum_{x: b=1} (...)
// (exact), or the two largest terms' exponents (max-log). quadrature is empty for real
// constellations. BPSK: 2 a y / sigma^2 in double precision. Larger constellations are
// demapped in single precision (a vector of 16 symbols at a time with AVX-512), each metric
// rounded to a float: LLRs exact to about 1e-7 of the largest metric's magnitude. Exact LLRs
// scale each symbol's terms by its largest and clamp them at e^-80 so no sum underflows: beyond
// |L| ~ 78 they saturate near +-80 (error probabilities below 1e-34, which no decoder
// distinguishes). The same bits on every machine and SIMD target.
void demap(const Constellation& c, Demapper demapper, std::span<const double> in_phase,
           std::span<const double> quadrature, std::span<const double> amplitude,
           double noise_variance, std::span<double> llr);

}  // namespace tannery
