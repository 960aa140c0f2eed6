#include "tannery/code/code.hpp"

#include <fmt/format.h>
#include <algorithm>

#include "tannery/error.hpp"

namespace tannery {

namespace {
// Refuse sizes whose index arrays would not fit the 32-bit edge and node ids.
constexpr std::size_t kMaxEdges = std::size_t{1} << 31;
}  // namespace

Code Code::from_checks(std::size_t n, const std::vector<std::vector<std::uint32_t>>& checks) {
  if (n >= kMaxEdges || checks.size() >= kMaxEdges) {
    throw Error(
        fmt::format("code too large: n = {}, m = {} (limit {})", n, checks.size(), kMaxEdges - 1));
  }
  Code code;
  code.n_ = n;
  code.m_ = checks.size();
  std::size_t total = 0;
  for (const auto& row : checks) total += row.size();
  if (total >= kMaxEdges) throw Error(fmt::format("code too large: {} edges", total));
  code.check_start_.reserve(code.m_ + 1);
  code.edge_var_.reserve(total);
  code.edge_check_.reserve(total);
  std::vector<std::uint32_t> row;
  for (std::size_t c = 0; c < code.m_; ++c) {
    row = checks[c];
    std::sort(row.begin(), row.end());
    for (std::size_t i = 0; i < row.size(); ++i) {
      if (row[i] >= n) {
        throw Error(fmt::format("check {} has variable {} but the code has only n = {} variables",
                                c, row[i], n));
      }
      if (i > 0 && row[i] == row[i - 1]) {
        throw Error(fmt::format("check {} lists variable {} twice", c, row[i]));
      }
      code.edge_var_.push_back(row[i]);
      code.edge_check_.push_back(static_cast<std::uint32_t>(c));
    }
    code.check_start_.push_back(static_cast<std::uint32_t>(code.edge_var_.size()));
  }
  // Variable-major index by counting sort; edges come out in increasing check order.
  code.var_start_.assign(n + 1, 0);
  for (std::uint32_t v : code.edge_var_) ++code.var_start_[v + 1];
  for (std::size_t v = 0; v < n; ++v) code.var_start_[v + 1] += code.var_start_[v];
  code.var_edge_.resize(total);
  std::vector<std::uint32_t> fill(code.var_start_.begin(), code.var_start_.end() - 1);
  for (std::size_t e = 0; e < total; ++e) {
    code.var_edge_[fill[code.edge_var_[e]]++] = static_cast<std::uint32_t>(e);
  }
  return code;
}

Code Code::from_quasi_cyclic(const QuasiCyclic& base) {
  const std::size_t z = base.lifting;
  if (z == 0) throw Error("lifting size Z must be at least 1");
  if (base.shifts.size() != base.block_rows * base.block_cols) {
    throw Error("base table size does not match its block dimensions");
  }
  std::vector<std::vector<std::uint32_t>> checks(base.block_rows * z);
  for (std::size_t i = 0; i < base.block_rows; ++i) {
    for (std::size_t j = 0; j < base.block_cols; ++j) {
      const std::int64_t s = base.shift(i, j);
      if (s < 0) continue;
      if (static_cast<std::size_t>(s) >= z) {
        throw Error(fmt::format("base table entry ({}, {}) has shift {} >= Z = {}", i, j, s, z));
      }
      for (std::size_t r = 0; r < z; ++r) {
        checks[i * z + r].push_back(
            static_cast<std::uint32_t>(j * z + (r + static_cast<std::size_t>(s)) % z));
      }
    }
  }
  Code code = from_checks(base.block_cols * z, checks);
  code.qc_ = base;
  return code;
}

std::vector<std::vector<std::uint32_t>> Code::checks() const {
  std::vector<std::vector<std::uint32_t>> rows(m_);
  for (std::size_t c = 0; c < m_; ++c) {
    auto vars = check_variables(c);
    rows[c].assign(vars.begin(), vars.end());
  }
  return rows;
}

std::size_t syndrome_weight(const Code& code, std::span<const std::uint8_t> word) {
  TANNERY_ASSERT(word.size() == code.n());
  std::size_t weight = 0;
  for (std::size_t c = 0; c < code.m(); ++c) {
    std::uint8_t parity = 0;
    for (std::uint32_t v : code.check_variables(c)) parity ^= word[v];
    weight += parity & 1u;
  }
  return weight;
}

}  // namespace tannery
