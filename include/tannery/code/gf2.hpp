// Linear algebra over GF(2) for parity-check matrices: rank, dimension and a systematic encoder.
//
// The encoder works on the sparse graph first and only falls back to dense bit-packed
// elimination for a small remainder: checks are peeled into a triangular system the way an
// erasure decoder peels (a check with one undetermined bit determines it); when peeling
// stalls, one bit is declared
// free (the bit in most live checks, or one from a lowest-degree check: both are tried and the
// smaller remainder kept). The checks left without a pivot form a dense system over the free bits
// (64-bit words), reduced to row-echelon form. Free bits not pivoted there carry the information.
// For standard LDPC codes the dense remainder is tiny, so a 32 400 x 64 800 matrix takes well
// under a second (see the README for the measurement).
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "tannery/code/code.hpp"

namespace tannery {

// Dense bit matrix, rows packed into 64-bit words (bit j of a row is word j/64, bit j%64).
class BitMatrix {
 public:
  BitMatrix() = default;
  BitMatrix(std::size_t rows, std::size_t cols);

  std::size_t rows() const noexcept { return rows_; }
  std::size_t cols() const noexcept { return cols_; }
  std::size_t words_per_row() const noexcept { return words_; }
  std::uint64_t* row(std::size_t r) noexcept { return data_.data() + r * words_; }
  const std::uint64_t* row(std::size_t r) const noexcept { return data_.data() + r * words_; }
  bool get(std::size_t r, std::size_t c) const noexcept {
    return (row(r)[c >> 6] >> (c & 63)) & 1u;
  }
  void set(std::size_t r, std::size_t c) noexcept {
    row(r)[c >> 6] |= std::uint64_t{1} << (c & 63);
  }
  void flip(std::size_t r, std::size_t c) noexcept {
    row(r)[c >> 6] ^= std::uint64_t{1} << (c & 63);
  }

  // Reduced row-echelon form in place; returns the pivot column of each of the first rank rows.
  // O(rows * rank * words).
  std::vector<std::size_t> reduce();

 private:
  std::size_t rows_ = 0, cols_ = 0, words_ = 0;
  std::vector<std::uint64_t> data_;
};

// Rank of H, the dimension k = n - rank, and a systematic encoder.
class Encoder {
 public:
  // Analyses H; time roughly O(E + dense remainder), memory O(E + remainder rows x free bits)
  // while it runs and O(E + remainder rows^2) kept.
  // information: the positions that must carry the information bits (e.g. the first k, where
  // an encoder with the systematic part first puts them); empty: chosen by the analysis. Throws
  // Error when they are no information set (not k of them, or the other columns of H do not
  // have full rank).
  explicit Encoder(const Code& code, std::span<const std::uint32_t> information = {});

  std::size_t n() const noexcept { return n_; }
  std::size_t k() const noexcept { return info_positions_.size(); }
  std::size_t rank() const noexcept { return n_ - k(); }
  // Size of the dense part left after peeling: the gap bits it solves for (one per independent
  // leftover check), and all free bits (information and gap). 0 checks: encoding is linear in
  // the number of edges; otherwise O(E + gap x leftover checks).
  std::size_t dense_checks() const noexcept { return gap_cols_.size(); }
  std::size_t free_bits() const noexcept { return free_cols_.size(); }
  // Codeword positions that carry the information bits verbatim, increasing.
  const std::vector<std::uint32_t>& info_positions() const noexcept { return info_positions_; }
  // Information bits of a decided word (n values 0, 1 or 2 = undecided) that differ from the k
  // sent; an undecided bit is an error whatever was sent.
  std::size_t info_errors(std::span<const std::uint8_t> decided,
                          std::span<const std::uint8_t> sent) const;

  // info: k bytes (0/1) -> codeword: n bytes (0/1) with H c = 0 and c[info_positions[i]] = info[i].
  // O(E + gap x leftover checks); allocates only a per-thread scratch row on first use.
  void encode(std::span<const std::uint8_t> info, std::span<std::uint8_t> codeword) const;
  // The same for up to 64 frames at once, bit-sliced: bit l of info[i] / codeword[v] belongs to
  // frame l. O(E + gap x leftover checks / 2) word operations for all of them.
  void encode_lanes(std::span<const std::uint64_t> info, std::span<std::uint64_t> codeword) const;

 private:
  std::size_t n_ = 0;
  std::vector<std::uint32_t> info_positions_;
  // Triangular part: check pivot_rows_[i] determines variable pivot_cols_[i], in this order.
  std::vector<std::uint32_t> pivot_cols_;
  std::vector<std::uint32_t> pivot_start_;  // pivot i's other variables in pivot_others_
  std::vector<std::uint32_t> pivot_others_;
  // Dense part (the approximate lower-triangular form of Richardson & Urbanke, "Efficient
  // encoding of low-density parity-check codes", 2001): the checks left after peeling
  // (leftover_start_/leftover_vars_, all their variables), evaluated with the gap bits at 0,
  // give syndromes s; gap bit gap_cols_[j] is the parity of the s selected by row j of
  // gap_solve_ (the inverse of the leftover checks' dependence on the gap bits).
  std::vector<std::uint32_t> free_cols_;  // all free variables: information and gap bits
  std::vector<std::uint32_t> gap_cols_;
  std::vector<std::uint32_t> leftover_start_;
  std::vector<std::uint32_t> leftover_vars_;
  BitMatrix gap_solve_;

  // Codeword from its information bits (one word per position: a bit or 64 bit-sliced frames).
  template <class Word>
  void complete(std::span<Word> codeword) const;
  // Pivot bits from the free bits, in triangular order.
  template <class Word>
  void substitute(std::span<Word> codeword) const;
};

}  // namespace tannery
