#include "tannery/code/code.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <numeric>

#include "tannery/error.hpp"

namespace tannery {

namespace {
// Refuse sizes whose index arrays would not fit the 32-bit edge and node ids.
constexpr std::size_t kMaxEdges = std::size_t{1} << 31;

// Base tables up to this many blocks are looked for (a lifting of a tiny Z over a long code is of
// no use as a base table).
constexpr std::size_t kMaxBaseBlocks = std::size_t{1} << 22;

// H as a lifting with circulants of size z, if it is one: every z x z block all zero or a
// circulant permutation (row r of the block has its one in column (r + s) mod z).
std::optional<QuasiCyclic> lifting_of(const Code& code, std::size_t z) {
  QuasiCyclic base{code.m() / z, code.n() / z, z, {}};
  base.shifts.assign(base.block_rows * base.block_cols, -1);
  std::vector<std::uint32_t> count(base.shifts.size(), 0);
  for (std::size_t c = 0; c < code.m(); ++c) {
    const std::size_t i = c / z, r = c % z;
    for (std::uint32_t v : code.check_variables(c)) {
      const std::size_t j = v / z, q = v % z, b = i * base.block_cols + j;
      const auto s = static_cast<std::int64_t>((q + z - r) % z);
      if (base.shifts[b] == -1) base.shifts[b] = s;
      if (base.shifts[b] != s) return std::nullopt;  // not one circulant (or two ones in a row)
      ++count[b];
    }
  }
  for (std::size_t b = 0; b < count.size(); ++b) {
    if (base.shifts[b] != -1 && count[b] != z) return std::nullopt;  // a row of the block is empty
  }
  return base;
}

}  // namespace

std::optional<QuasiCyclic> find_quasi_cyclic(const Code& code) {
  if (code.m() == 0 || code.n() == 0 || code.edges() == 0) return std::nullopt;
  const std::size_t g = std::gcd(code.m(), code.n());
  for (std::size_t z = g; z >= 2; --z) {
    if (g % z != 0 || (code.m() / z) * (code.n() / z) > kMaxBaseBlocks) continue;
    if (auto base = lifting_of(code, z)) return base;
  }
  return std::nullopt;
}

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
  for (std::size_t c = 0; c < code.m_; ++c)
    code.max_check_degree_ = std::max(code.max_check_degree_, code.check_degree(c));
  for (std::size_t v = 0; v < n; ++v)
    code.max_variable_degree_ = std::max(code.max_variable_degree_, code.variable_degree(v));
  code.qc_ = find_quasi_cyclic(code);
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
