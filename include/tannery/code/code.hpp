// A binary linear code given by its parity-check matrix H, stored as a Tanner graph: one check
// node per row, one variable node per column, one edge per 1 of H.
//
// Edges are numbered check-major: the edges of check c are the contiguous ids
// [check_begin(c), check_end(c)), in increasing variable order. That numbering is stable and is
// the index of every per-edge message array in the decoders. A variable-major index lists, for
// each variable, the ids of its edges in increasing check order; check_starts(),
// edge_variables(), variable_starts() and variable_edge_ids() give the CSR and CSC arrays.
//
// A code comes from a file or a shipped name (load_code, io/code_lookup.hpp), from the rows of H
// (Code::from_checks), a quasi-cyclic base table (Code::from_quasi_cyclic) or a construction
// (code/construct.hpp); Encoder (code/gf2.hpp) gives its dimension k and encodes.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <vector>

namespace tannery {

// Quasi-cyclic structure of a code read from (or written as) a base table of circulant shifts.
// Block (i, j) with shift s >= 0 is the Z x Z identity whose row r has its 1 in column (r+s) mod Z;
// s = -1 is an all-zero block.
struct QuasiCyclic {
  std::size_t block_rows = 0;
  std::size_t block_cols = 0;
  std::size_t lifting = 0;           // Z
  std::vector<std::int64_t> shifts;  // block_rows x block_cols, row-major, -1 = zero block

  std::int64_t shift(std::size_t i, std::size_t j) const { return shifts[i * block_cols + j]; }
};

class Code {
 public:
  Code() = default;

  // Builds the graph from the variable indices of each check. Each list may be in any order;
  // an index >= n or a repeated index throws Error (naming the check). O(E log d) time.
  static Code from_checks(std::size_t n, const std::vector<std::vector<std::uint32_t>>& checks);
  // Expands a base table of circulant shifts (see QuasiCyclic); shifts must be -1 or in [0, Z).
  static Code from_quasi_cyclic(const QuasiCyclic& base);

  std::size_t n() const noexcept { return n_; }  // variables (code length)
  std::size_t m() const noexcept { return m_; }  // checks (rows of H)
  std::size_t edges() const noexcept { return edge_var_.size(); }

  std::uint32_t check_begin(std::size_t c) const noexcept { return check_start_[c]; }
  std::uint32_t check_end(std::size_t c) const noexcept { return check_start_[c + 1]; }
  std::size_t check_degree(std::size_t c) const noexcept { return check_end(c) - check_begin(c); }
  // Variables of check c, increasing; element i belongs to edge check_begin(c) + i.
  std::span<const std::uint32_t> check_variables(std::size_t c) const noexcept {
    return {edge_var_.data() + check_start_[c], check_degree(c)};
  }
  std::size_t variable_degree(std::size_t v) const noexcept {
    return var_start_[v + 1] - var_start_[v];
  }
  // Edge ids of variable v, in increasing check order.
  std::span<const std::uint32_t> variable_edges(std::size_t v) const noexcept {
    return {var_edge_.data() + var_start_[v], variable_degree(v)};
  }
  std::uint32_t edge_variable(std::size_t e) const noexcept { return edge_var_[e]; }
  std::size_t max_check_degree() const noexcept { return max_check_degree_; }
  std::size_t max_variable_degree() const noexcept { return max_variable_degree_; }

  // The graph as compressed sparse rows (CSR, check-major: check c's edges are
  // [check_starts()[c], check_starts()[c + 1]), edge e joins variable edge_variables()[e]) and
  // columns (CSC: variable v's edge ids are variable_edge_ids()[variable_starts()[v] ...
  // variable_starts()[v + 1]), in increasing check order), for code that walks H directly.
  std::span<const std::uint32_t> check_starts() const noexcept { return check_start_; }    // m + 1
  std::span<const std::uint32_t> edge_variables() const noexcept { return edge_var_; }     // E
  std::span<const std::uint32_t> edge_checks() const noexcept { return edge_check_; }      // E
  std::span<const std::uint32_t> variable_starts() const noexcept { return var_start_; }   // n + 1
  std::span<const std::uint32_t> variable_edge_ids() const noexcept { return var_edge_; }  // E
  std::uint32_t edge_check(std::size_t e) const noexcept { return edge_check_[e]; }

  // Present when the code was built from a base table, or when H, as read from any format, is
  // a lifting of one (find_quasi_cyclic).
  const std::optional<QuasiCyclic>& quasi_cyclic() const noexcept { return qc_; }

  // The checks as lists of variables (the form from_checks takes).
  std::vector<std::vector<std::uint32_t>> checks() const;

  bool operator==(const Code& other) const {
    return n_ == other.n_ && check_start_ == other.check_start_ && edge_var_ == other.edge_var_;
  }

 private:
  std::size_t n_ = 0;
  std::size_t m_ = 0;
  std::vector<std::uint32_t> check_start_{0};  // m + 1
  std::vector<std::uint32_t> edge_var_;        // E
  std::vector<std::uint32_t> edge_check_;      // E
  std::vector<std::uint32_t> var_start_{0};    // n + 1
  std::vector<std::uint32_t> var_edge_;        // E
  std::size_t max_check_degree_ = 0, max_variable_degree_ = 0;
  std::optional<QuasiCyclic> qc_;
};

// The base table of H when H is a lifting of one: every Z x Z block zero or a circulant
// permutation, for the largest Z >= 2 dividing m and n that fits (base tables of at most 2^22
// blocks are looked for). O(E) per candidate Z.
std::optional<QuasiCyclic> find_quasi_cyclic(const Code& code);

// Syndrome weight of a hard-decision word (one byte per bit, its lowest bit the value): the
// number of unsatisfied checks. O(E).
std::size_t syndrome_weight(const Code& code, std::span<const std::uint8_t> word);

}  // namespace tannery
