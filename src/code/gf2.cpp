#include "tannery/code/gf2.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <bit>
#include <numeric>
#include <type_traits>

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

// How to continue when peeling stalls: free the bit found in the most live checks (ideal for
// codes with a dual-diagonal parity part), or a bit of a live check of lowest degree (better
// for random regular codes).
enum class Stall { widest_column, lowest_row };

// Result of peeling: check pivot i determines variable cols[i] from the variables
// others[start[i] .. start[i+1]); leftover checks are the equations no pivot took.
struct Triangulation {
  std::vector<std::uint32_t> cols, start{0}, others, free_cols, leftover;
};

// Lazy bucket queue of node ids by a degree that only decreases; stale entries are skipped.
class Buckets {
 public:
  explicit Buckets(std::size_t max_degree) : lists_(max_degree + 1) {}
  void push(std::size_t degree, std::uint32_t id) { lists_[degree].push_back(id); }
  // Pops a live id of the highest (or lowest) degree; valid(id, degree) says whether it is live.
  template <class Valid>
  std::uint32_t pop(bool highest, Valid valid) {
    for (std::size_t step = 0; step < lists_.size(); ++step) {
      const std::size_t d = highest ? lists_.size() - 1 - step : step;
      auto& list = lists_[d];
      while (!list.empty()) {
        const std::uint32_t id = list.back();
        list.pop_back();
        if (valid(id, d)) return id;
      }
    }
    return UINT32_MAX;
  }

 private:
  std::vector<std::vector<std::uint32_t>> lists_;
};

// given: positions declared free before peeling starts (wanted as information bits).
Triangulation peel(const Code& code, Stall stall, std::span<const std::uint32_t> given) {
  const std::size_t n = code.n(), m = code.m();
  Triangulation t;
  std::vector<Role> role(n, Role::undecided);
  std::vector<std::uint32_t> row_degree(m), col_degree(n), stack;
  std::vector<bool> active(m, true);
  Buckets cols(code.max_variable_degree()), rows(code.max_check_degree());

  auto file_row = [&](std::uint32_t c) {
    const std::uint32_t d = row_degree[c];
    if (d == 0) {
      active[c] = false;
      t.leftover.push_back(c);
    } else if (d == 1) {
      stack.push_back(c);
    } else if (stall == Stall::lowest_row) {
      rows.push(d, c);
    }
  };
  // Marks variable v decided and updates the degrees of the live checks holding it.
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
      if (role[v] == Role::undecided && --col_degree[v] > 0) cols.push(col_degree[v], v);
    }
  };
  for (std::size_t v = 0; v < n; ++v) {
    col_degree[v] = static_cast<std::uint32_t>(code.variable_degree(v));
    cols.push(col_degree[v], static_cast<std::uint32_t>(v));
  }
  for (std::size_t c = 0; c < m; ++c) {
    row_degree[c] = static_cast<std::uint32_t>(code.check_degree(c));
    file_row(static_cast<std::uint32_t>(c));
  }
  for (std::uint32_t v : given) {
    t.free_cols.push_back(v);
    decide(v, Role::free);
  }
  auto live_col = [&](std::uint32_t v, std::size_t d) {
    return role[v] == Role::undecided && col_degree[v] == d;
  };
  auto live_row = [&](std::uint32_t c, std::size_t d) { return active[c] && row_degree[c] == d; };
  for (;;) {
    if (!stack.empty()) {
      const std::uint32_t c = stack.back();
      stack.pop_back();
      if (!active[c] || row_degree[c] != 1) continue;
      std::uint32_t target = 0;
      for (std::uint32_t v : code.check_variables(c)) {
        if (role[v] == Role::undecided)
          target = v;
        else
          t.others.push_back(v);
      }
      retire(c);
      t.cols.push_back(target);
      t.start.push_back(static_cast<std::uint32_t>(t.others.size()));
      decide(target, Role::pivot);
      continue;
    }
    // Stalled: free one bit, then peel again. Freeing one bit at a time lets a check that drops
    // to one undetermined bit be peeled before another free bit leaves it with none (which would
    // grow the dense part).
    std::uint32_t widest = UINT32_MAX;
    if (stall == Stall::widest_column) {
      widest = cols.pop(true, live_col);
    } else if (const std::uint32_t c = rows.pop(false, live_row); c != UINT32_MAX) {
      for (std::uint32_t v : code.check_variables(c)) {
        if (role[v] == Role::undecided &&
            (widest == UINT32_MAX || col_degree[v] > col_degree[widest]))
          widest = v;
      }
      rows.push(row_degree[c], c);  // still live; it will be peeled or picked again
    }
    if (widest == UINT32_MAX) break;
    t.free_cols.push_back(widest);
    decide(widest, Role::free);
  }
  for (std::size_t v = 0; v < n; ++v) {
    if (role[v] == Role::undecided) t.free_cols.push_back(static_cast<std::uint32_t>(v));
  }
  return t;
}

}  // namespace

Encoder::Encoder(const Code& code, std::span<const std::uint32_t> information) : n_(code.n()) {
  std::vector<bool> wanted(code.n(), false);
  for (std::uint32_t v : information) {
    if (v >= code.n() || wanted[v])
      throw Error(fmt::format("information position {} is out of range or repeated", v));
    wanted[v] = true;
  }
  // The dense remainder costs O(leftover^2 * free / 64); keep the peeling that leaves less. With
  // no positions asked for, peeling also starts from the first n - m bits known, as for a code
  // whose parity part comes last (an encodable lifted protograph peels completely but for one
  // check per parity system that way).
  Triangulation t = peel(code, Stall::widest_column, information);
  if (!t.leftover.empty()) {
    Triangulation other = peel(code, Stall::lowest_row, information);
    if (other.leftover.size() < t.leftover.size()) t = std::move(other);
  }
  if (!t.leftover.empty() && information.empty() && code.n() > code.m()) {
    std::vector<std::uint32_t> first(code.n() - code.m());
    std::iota(first.begin(), first.end(), 0u);
    Triangulation other = peel(code, Stall::widest_column, first);
    if (other.leftover.size() < t.leftover.size()) {
      t = std::move(other);
      for (std::uint32_t v : first) wanted[v] = true;  // and they stay the information bits
    }
  }
  pivot_cols_ = std::move(t.cols);
  pivot_start_ = std::move(t.start);
  pivot_others_ = std::move(t.others);
  free_cols_ = std::move(t.free_cols);
  // Wanted information bits last: the dense reduction takes its pivots (parity bits) from the
  // left, so they stay information bits whenever the others can be parity bits.
  std::stable_partition(free_cols_.begin(), free_cols_.end(),
                        [&](std::uint32_t v) { return !wanted[v]; });
  // Checks without any variable constrain nothing: leaving them out keeps the dense system (rows
  // x free bits) from growing with n x m for a huge, nearly empty H.
  std::vector<std::uint32_t> leftover;
  for (std::uint32_t c : t.leftover) {
    if (code.check_degree(c) > 0) leftover.push_back(c);
  }
  const std::size_t n = code.n();

  // Express each leftover check over the free bits by substituting the triangular part in
  // reverse order, 64 leftover checks at a time (one bit lane each).
  BitMatrix dense(leftover.size(), free_cols_.size());
  std::vector<std::uint64_t> lanes(n);
  for (std::size_t base = 0; base < leftover.size(); base += 64) {
    std::fill(lanes.begin(), lanes.end(), 0);
    const std::size_t count = std::min<std::size_t>(64, leftover.size() - base);
    for (std::size_t b = 0; b < count; ++b) {
      for (std::uint32_t v : code.check_variables(leftover[base + b]))
        lanes[v] ^= std::uint64_t{1} << b;
    }
    for (std::size_t i = pivot_cols_.size(); i-- > 0;) {
      const std::uint64_t w = lanes[pivot_cols_[i]];
      if (w == 0) continue;
      lanes[pivot_cols_[i]] = 0;
      for (std::uint32_t j = pivot_start_[i]; j < pivot_start_[i + 1]; ++j)
        lanes[pivot_others_[j]] ^= w;
    }
    for (std::size_t f = 0; f < free_cols_.size(); ++f) {
      for (std::uint64_t w = lanes[free_cols_[f]]; w != 0; w &= w - 1) {
        dense.set(base + static_cast<std::size_t>(std::countr_zero(w)), f);
      }
    }
  }
  const BitMatrix unreduced = dense;
  const std::vector<std::size_t> gap_pivots = dense.reduce();
  std::vector<bool> is_gap(free_cols_.size(), false);
  for (std::size_t f : gap_pivots) {
    gap_cols_.push_back(free_cols_[f]);
    is_gap[f] = true;
  }
  // [the leftover checks' columns of the gap bits | identity] in reduced row-echelon form: the
  // gap columns are independent, so its first rows are [identity | gap_solve_].
  const std::size_t gap = gap_pivots.size(), rows = leftover.size();
  if (gap > 0) {
    BitMatrix solve(rows, gap + rows);
    for (std::size_t r = 0; r < rows; ++r) {
      for (std::size_t j = 0; j < gap; ++j) {
        if (unreduced.get(r, gap_pivots[j])) solve.set(r, j);
      }
      solve.set(r, gap + r);
    }
    const std::vector<std::size_t> pivots = solve.reduce();
    gap_solve_ = BitMatrix(gap, rows);
    for (std::size_t j = 0; j < gap; ++j) {
      TANNERY_ASSERT(pivots[j] == j);
      for (std::size_t r = 0; r < rows; ++r) {
        if (solve.get(j, gap + r)) gap_solve_.set(j, r);
      }
    }
    leftover_start_.push_back(0);
    for (std::uint32_t c : leftover) {
      for (std::uint32_t v : code.check_variables(c)) leftover_vars_.push_back(v);
      leftover_start_.push_back(static_cast<std::uint32_t>(leftover_vars_.size()));
    }
  }
  for (std::size_t f = 0; f < free_cols_.size(); ++f) {
    if (!is_gap[f]) info_positions_.push_back(free_cols_[f]);
  }
  std::sort(info_positions_.begin(), info_positions_.end());
  if (!information.empty()) {
    std::size_t outside = 0;
    for (std::uint32_t p : info_positions_) outside += !wanted[p];
    if (info_positions_.size() != information.size() || outside > 0) {
      throw Error(
          info_positions_.size() != information.size()
              ? fmt::format("{} positions requested for the information bits, but this code has "
                            "k = {}",
                            information.size(), info_positions_.size())
              : fmt::format("the requested positions are no information set: {} of them are fixed "
                            "by the others through the checks (the columns of H outside them have "
                            "rank {} below rank(H) = {})",
                            outside, outside, rank()));
    }
  }
}

std::size_t Encoder::info_errors(std::span<const std::uint8_t> decided,
                                 std::span<const std::uint8_t> sent) const {
  std::size_t errors = 0;
  for (std::size_t i = 0; i < k(); ++i) errors += decided[info_positions_[i]] != sent[i];
  return errors;
}

template <class Word>
void Encoder::substitute(std::span<Word> codeword) const {
  for (std::size_t i = 0; i < pivot_cols_.size(); ++i) {
    Word parity = 0;
    for (std::uint32_t j = pivot_start_[i]; j < pivot_start_[i + 1]; ++j)
      parity ^= codeword[pivot_others_[j]];
    codeword[pivot_cols_[i]] = parity;
  }
}

template <class Word>
void Encoder::complete(std::span<Word> codeword) const {
  substitute(codeword);
  if (gap_cols_.empty()) return;
  // With the gap bits at 0 the leftover checks' syndromes are what the gap bits must cancel.
  thread_local std::vector<Word> syndrome;
  syndrome.assign(leftover_start_.size() - 1, 0);
  for (std::size_t r = 0; r + 1 < leftover_start_.size(); ++r) {
    for (std::uint32_t j = leftover_start_[r]; j < leftover_start_[r + 1]; ++j)
      syndrome[r] ^= codeword[leftover_vars_[j]];
  }
  if constexpr (std::is_same_v<Word, std::uint8_t>) {
    // One frame: the syndromes packed 64 to a word, each gap bit the parity of a row AND them.
    thread_local std::vector<std::uint64_t> packed;
    packed.assign(gap_solve_.words_per_row(), 0);
    for (std::size_t r = 0; r < syndrome.size(); ++r)
      packed[r >> 6] |= std::uint64_t{syndrome[r] & 1u} << (r & 63);
    for (std::size_t j = 0; j < gap_cols_.size(); ++j) {
      const std::uint64_t* row = gap_solve_.row(j);
      std::uint64_t acc = 0;
      for (std::size_t w = 0; w < packed.size(); ++w) acc ^= row[w] & packed[w];
      codeword[gap_cols_[j]] = static_cast<std::uint8_t>(std::popcount(acc) & 1);
    }
  } else {
    for (std::size_t j = 0; j < gap_cols_.size(); ++j) {
      const std::uint64_t* row = gap_solve_.row(j);
      Word acc = 0;
      for (std::size_t w = 0; w < gap_solve_.words_per_row(); ++w) {
        for (std::uint64_t bits = row[w]; bits; bits &= bits - 1)
          acc ^= syndrome[w * 64 + static_cast<std::size_t>(std::countr_zero(bits))];
      }
      codeword[gap_cols_[j]] = acc;
    }
  }
  substitute(codeword);
}

void Encoder::encode(std::span<const std::uint8_t> info, std::span<std::uint8_t> codeword) const {
  TANNERY_ASSERT(info.size() == k() && codeword.size() == n_);
  std::fill(codeword.begin(), codeword.end(), std::uint8_t{0});
  for (std::size_t i = 0; i < info.size(); ++i) codeword[info_positions_[i]] = info[i] & 1u;
  complete(codeword);
}

void Encoder::encode_lanes(std::span<const std::uint64_t> info,
                           std::span<std::uint64_t> codeword) const {
  TANNERY_ASSERT(info.size() == k() && codeword.size() == n_);
  std::fill(codeword.begin(), codeword.end(), std::uint64_t{0});
  for (std::size_t i = 0; i < info.size(); ++i) codeword[info_positions_[i]] = info[i];
  complete(codeword);
}

}  // namespace tannery
