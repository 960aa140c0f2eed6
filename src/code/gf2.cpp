#include "tannery/code/gf2.hpp"

#include <algorithm>
#include <bit>

#include "tannery/error.hpp"

namespace tannery {

BitMatrix::BitMatrix(std::size_t rows, std::size_t cols)
    : rows_(rows), cols_(cols), words_((cols + 63) / 64), data_(rows * ((cols + 63) / 64), 0) {}

std::vector<std::size_t> BitMatrix::reduce() {
  std::vector<std::size_t> pivots;
  std::size_t rank = 0;
  for (std::size_t col = 0; col < cols_ && rank < rows_; ++col) {
    std::size_t r = rank;
    while (r < rows_ && !get(r, col)) ++r;
    if (r == rows_) continue;
    const std::size_t w0 = col >> 6;
    if (r != rank) std::swap_ranges(row(r) + w0, row(r) + words_, row(rank) + w0);
    const std::uint64_t* p = row(rank);
    // Bits left of col are zero in the pivot row, so only words from w0 on need XOR.
    for (std::size_t i = 0; i < rows_; ++i) {
      if (i == rank || !get(i, col)) continue;
      std::uint64_t* q = row(i);
      for (std::size_t w = w0; w < words_; ++w) q[w] ^= p[w];
    }
    pivots.push_back(col);
    ++rank;
  }
  return pivots;
}

namespace {

enum class Role : std::uint8_t { undecided, free, pivot };

}  // namespace

Encoder::Encoder(const Code& code) : n_(code.n()) {
  const std::size_t n = code.n(), m = code.m();
  std::vector<Role> role(n, Role::undecided);
  std::vector<std::uint32_t> row_degree(m), col_degree(n);
  std::vector<bool> active(m, true);
  std::vector<std::uint32_t> leftover, stack;
  std::size_t max_degree = 0;
  for (std::size_t c = 0; c < m; ++c) max_degree = std::max(max_degree, code.check_degree(c));
  std::vector<std::vector<std::uint32_t>> buckets(max_degree + 1);
  std::size_t lowest = max_degree + 1;  // no bucket below this holds a live entry

  auto file_row = [&](std::uint32_t r) {
    const std::uint32_t d = row_degree[r];
    if (d == 0) {
      active[r] = false;
      leftover.push_back(r);
    } else if (d == 1) {
      stack.push_back(r);
    } else {
      buckets[d].push_back(r);
      lowest = std::min<std::size_t>(lowest, d);
    }
  };
  // Marks variable v decided (free or pivot) and updates the degrees of the checks holding it.
  auto decide = [&](std::uint32_t v, Role r) {
    role[v] = r;
    for (std::uint32_t e : code.variable_edges(v)) {
      const std::uint32_t c = code.edge_check(e);
      if (!active[c]) continue;
      --row_degree[c];
      file_row(c);
    }
  };
  auto retire = [&](std::uint32_t c) {
    active[c] = false;
    for (std::uint32_t v : code.check_variables(c)) {
      if (role[v] == Role::undecided) --col_degree[v];
    }
  };

  for (std::size_t v = 0; v < n; ++v) col_degree[v] = static_cast<std::uint32_t>(code.variable_degree(v));
  for (std::size_t c = 0; c < m; ++c) {
    row_degree[c] = static_cast<std::uint32_t>(code.check_degree(c));
    file_row(static_cast<std::uint32_t>(c));
  }

  pivot_start_.push_back(0);
  for (;;) {
    if (!stack.empty()) {
      const std::uint32_t c = stack.back();
      stack.pop_back();
      if (!active[c] || row_degree[c] != 1) continue;
      std::uint32_t target = 0;
      for (std::uint32_t v : code.check_variables(c)) {
        if (role[v] == Role::undecided) target = v;
        else pivot_others_.push_back(v);
      }
      retire(c);
      pivot_cols_.push_back(target);
      pivot_start_.push_back(static_cast<std::uint32_t>(pivot_others_.size()));
      decide(target, Role::pivot);
      continue;
    }
    // Peeling stalled: take a live check of lowest degree and free all but one of its bits,
    // keeping as pivot the bit that appears in the fewest other live checks.
    std::uint32_t chosen = UINT32_MAX;
    while (lowest <= max_degree && chosen == UINT32_MAX) {
      auto& bucket = buckets[lowest];
      while (!bucket.empty()) {
        const std::uint32_t c = bucket.back();
        bucket.pop_back();
        if (active[c] && row_degree[c] == lowest) {
          chosen = c;
          break;
        }
      }
      if (chosen == UINT32_MAX) ++lowest;
    }
    if (chosen == UINT32_MAX) break;
    std::uint32_t keep = UINT32_MAX;
    for (std::uint32_t v : code.check_variables(chosen)) {
      if (role[v] == Role::undecided && (keep == UINT32_MAX || col_degree[v] < col_degree[keep])) {
        keep = v;
      }
    }
    for (std::uint32_t v : code.check_variables(chosen)) {
      if (role[v] == Role::undecided && v != keep) {
        free_cols_.push_back(v);
        decide(v, Role::free);
      }
    }
  }
  for (std::size_t v = 0; v < n; ++v) {
    if (role[v] == Role::undecided) {
      role[v] = Role::free;
      free_cols_.push_back(static_cast<std::uint32_t>(v));
    }
  }

  // Express each leftover check over the free bits by substituting the triangular part in
  // reverse order, 64 leftover checks at a time (one bit lane each).
  std::vector<std::uint32_t> free_index(n, UINT32_MAX);
  for (std::size_t f = 0; f < free_cols_.size(); ++f) free_index[free_cols_[f]] = static_cast<std::uint32_t>(f);
  BitMatrix dense(leftover.size(), free_cols_.size());
  std::vector<std::uint64_t> lanes(n);
  for (std::size_t base = 0; base < leftover.size(); base += 64) {
    std::fill(lanes.begin(), lanes.end(), 0);
    const std::size_t count = std::min<std::size_t>(64, leftover.size() - base);
    for (std::size_t b = 0; b < count; ++b) {
      for (std::uint32_t v : code.check_variables(leftover[base + b])) lanes[v] ^= std::uint64_t{1} << b;
    }
    for (std::size_t i = pivot_cols_.size(); i-- > 0;) {
      const std::uint64_t w = lanes[pivot_cols_[i]];
      if (w == 0) continue;
      lanes[pivot_cols_[i]] = 0;
      for (std::uint32_t j = pivot_start_[i]; j < pivot_start_[i + 1]; ++j) lanes[pivot_others_[j]] ^= w;
    }
    for (std::size_t f = 0; f < free_cols_.size(); ++f) {
      for (std::uint64_t w = lanes[free_cols_[f]]; w != 0; w &= w - 1) {
        dense.set(base + static_cast<std::size_t>(std::countr_zero(w)), f);
      }
    }
  }
  const std::vector<std::size_t> gap_pivots = dense.reduce();
  gap_rows_ = BitMatrix(gap_pivots.size(), free_cols_.size());
  std::vector<bool> is_gap(free_cols_.size(), false);
  for (std::size_t j = 0; j < gap_pivots.size(); ++j) {
    std::copy_n(dense.row(j), dense.words_per_row(), gap_rows_.row(j));
    gap_rows_.flip(j, gap_pivots[j]);  // keep only the other free bits of the equation
    gap_cols_.push_back(free_cols_[gap_pivots[j]]);
    is_gap[gap_pivots[j]] = true;
  }
  for (std::size_t f = 0; f < free_cols_.size(); ++f) {
    if (!is_gap[f]) info_positions_.push_back(free_cols_[f]);
  }
  std::sort(info_positions_.begin(), info_positions_.end());
}

void Encoder::encode(std::span<const std::uint8_t> info, std::span<std::uint8_t> codeword) const {
  TANNERY_ASSERT(info.size() == k() && codeword.size() == n_);
  std::fill(codeword.begin(), codeword.end(), std::uint8_t{0});
  for (std::size_t i = 0; i < info.size(); ++i) codeword[info_positions_[i]] = info[i] & 1u;
  // Gap bits depend on information bits only (row-echelon form has zeros at other pivots).
  for (std::size_t j = 0; j < gap_cols_.size(); ++j) {
    const std::uint64_t* row = gap_rows_.row(j);
    std::uint8_t parity = 0;
    for (std::size_t w = 0; w < gap_rows_.words_per_row(); ++w) {
      for (std::uint64_t bits = row[w]; bits != 0; bits &= bits - 1) {
        parity ^= codeword[free_cols_[w * 64 + static_cast<std::size_t>(std::countr_zero(bits))]];
      }
    }
    codeword[gap_cols_[j]] = parity;
  }
  for (std::size_t i = 0; i < pivot_cols_.size(); ++i) {
    std::uint8_t parity = 0;
    for (std::uint32_t j = pivot_start_[i]; j < pivot_start_[i + 1]; ++j) parity ^= codeword[pivot_others_[j]];
    codeword[pivot_cols_[i]] = parity;
  }
}

}  // namespace tannery
