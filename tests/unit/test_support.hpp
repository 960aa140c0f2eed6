// Helpers shared by the unit tests: shipped codes, random sparse codes, dense reference algebra.
#pragma once

#include <unistd.h>

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "tannery/code/code.hpp"
#include "tannery/code/construct.hpp"
#include "tannery/io/matrix_io.hpp"

namespace tannery::test {

inline const std::vector<std::string>& shipped_codes() {
  static const std::vector<std::string> names = {"hamming-7-4.tanner",       "hamming-15-11.tanner",
                                                 "repetition-5.tanner",      "parity-8.tanner",
                                                 "regular-3-6-n2016.tanner", "qc-rate-half-z54.qc"};
  return names;
}
inline Code shipped(const std::string& file) {
  return read_code_file(std::string(TANNERY_CODES_DIR) + "/" + file);
}

// Random m x n matrix, each entry 1 with probability about density (seeded, reproducible).
inline Code random_code(std::size_t m, std::size_t n, double density, std::uint64_t seed) {
  SplitMix rng(seed);
  std::vector<std::vector<std::uint32_t>> checks(m);
  const auto threshold = static_cast<std::uint64_t>(density * 18446744073709551615.0);
  for (std::size_t c = 0; c < m; ++c) {
    for (std::size_t v = 0; v < n; ++v) {
      if (rng.next() < threshold) checks[c].push_back(static_cast<std::uint32_t>(v));
    }
  }
  return Code::from_checks(n, checks);
}

// Rank over GF(2) by plain Gaussian elimination on rows of bools: an independent reference.
inline std::size_t naive_rank(const Code& code) {
  std::vector<std::vector<bool>> rows(code.m(), std::vector<bool>(code.n(), false));
  for (std::size_t c = 0; c < code.m(); ++c) {
    for (auto v : code.check_variables(c)) rows[c][v] = true;
  }
  std::size_t rank = 0;
  for (std::size_t col = 0; col < code.n() && rank < rows.size(); ++col) {
    std::size_t p = rank;
    while (p < rows.size() && !rows[p][col]) ++p;
    if (p == rows.size()) continue;
    std::swap(rows[p], rows[rank]);
    for (std::size_t r = 0; r < rows.size(); ++r) {
      if (r != rank && rows[r][col]) {
        for (std::size_t j = 0; j < code.n(); ++j) rows[r][j] = rows[r][j] != rows[rank][j];
      }
    }
    ++rank;
  }
  return rank;
}

}  // namespace tannery::test

#include <cmath>

namespace tannery::test {

// Standard normal samples by Box-Muller on SplitMix uniforms (test-only noise source).
class Gaussian {
 public:
  explicit Gaussian(std::uint64_t seed) : rng_(seed) {}
  double operator()() {
    const double u1 = (static_cast<double>(rng_.next() >> 11) + 1.0) * 0x1.0p-53;  // (0, 1]
    const double u2 = static_cast<double>(rng_.next() >> 11) * 0x1.0p-53;
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(6.283185307179586 * u2);
  }

 private:
  SplitMix rng_;
};

// Channel LLRs of a BPSK-modulated codeword (0 -> +1) over AWGN with noise deviation sigma.
inline std::vector<double> awgn_llrs(const std::vector<std::uint8_t>& word, double sigma,
                                     Gaussian& g) {
  std::vector<double> llr(word.size());
  for (std::size_t i = 0; i < word.size(); ++i) {
    const double y = (word[i] ? -1.0 : 1.0) + sigma * g();
    llr[i] = 2.0 * y / (sigma * sigma);
  }
  return llr;
}

}  // namespace tannery::test

#include "decode/simd_control.hpp"
#include "tannery/decode/decoder.hpp"

namespace tannery::test {

// Hard decisions, posteriors and outcomes of decoding a batch with fresh settings.
struct Decoded {
  std::vector<std::uint8_t> hard;
  std::vector<double> posterior;
  std::vector<FrameOutcome> outcome;
};
// Not inlined: GCC 12 otherwise warns (-Wstringop-overflow) about the outcome vector on a size it
// propagates from a caller, a known false positive.
[[gnu::noinline]] inline Decoded decode_all(const Code& code, const DecoderSettings& s,
                                            const std::vector<double>& llr) {
  const std::size_t frames = llr.size() / code.n();
  Decoded d{std::vector<std::uint8_t>(llr.size()), std::vector<double>(llr.size()),
            std::vector<FrameOutcome>(frames)};
  make_decoder(code, s)->decode(llr, d.hard, d.posterior, d.outcome);
  return d;
}

// count LLRs mean + spread * N(0, 1), seeded.
inline std::vector<double> gaussian_llrs(std::size_t count, std::uint64_t seed, double mean,
                                         double spread) {
  Gaussian g(seed);
  std::vector<double> llr(count);
  for (auto& x : llr) x = mean + spread * g();
  return llr;
}

// A path for a scratch file of this test process (in the system's temporary directory).
inline std::string temp_path(const std::string& name) {
  return (std::filesystem::temp_directory_path() /
          ("tannery-" + std::to_string(::getpid()) + "-" + name))
      .string();
}

// Restores automatic SIMD target choice when a test ends, even on failure.
struct TargetGuard {
  ~TargetGuard() {
    force_simd_target("");
    compress_simd_checks_above();
  }
};

}  // namespace tannery::test
