#include "tannery/code/construct.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "../io/text_reader.hpp"
#include "tannery/error.hpp"

namespace tannery {

Code construct_regular(std::size_t n, std::size_t dv, std::size_t dc, std::uint64_t seed) {
  if (dv < 1 || dc < 2 || n < dc) throw Error("regular code needs dv >= 1, dc >= 2 and n >= dc");
  if ((n * dv) % dc != 0) {
    throw Error(fmt::format("n * dv = {} is not divisible by dc = {}", n * dv, dc));
  }
  const std::size_t m = n * dv / dc, edges = n * dv;
  // Edge e belongs to variable e / dv; check_of[e] is a random arrangement of check sockets.
  std::vector<std::uint32_t> check_of(edges);
  for (std::size_t e = 0; e < edges; ++e) check_of[e] = static_cast<std::uint32_t>(e / dc);
  SplitMix rng(seed);
  for (std::size_t i = edges; i > 1; --i) std::swap(check_of[i - 1], check_of[rng.below(i)]);

  // Variables on each check, kept up to date while re-wiring.
  std::vector<std::vector<std::uint32_t>> members(m);
  for (std::size_t e = 0; e < edges; ++e)
    members[check_of[e]].push_back(static_cast<std::uint32_t>(e / dv));
  auto move = [&](std::size_t e, std::uint32_t to) {
    auto& from = members[check_of[e]];
    from.erase(std::find(from.begin(), from.end(), static_cast<std::uint32_t>(e / dv)));
    members[to].push_back(static_cast<std::uint32_t>(e / dv));
    check_of[e] = to;
  };
  // An edge of v is bad when its check repeats among v's checks, or when it shares a second
  // variable with another check of v (a 4-cycle).
  // stamp[u] says which scan last reached u and via[u] through which edge of the scanned variable.
  std::vector<std::uint64_t> stamp(n, 0);
  std::vector<std::size_t> via(n, 0);
  std::uint64_t scan = 0;
  auto bad_edge = [&](std::size_t v) -> std::ptrdiff_t {
    ++scan;
    for (std::size_t a = 0; a < dv; ++a) {
      for (std::size_t b = 0; b < a; ++b) {
        if (check_of[v * dv + a] == check_of[v * dv + b])
          return static_cast<std::ptrdiff_t>(v * dv + a);
      }
    }
    for (std::size_t a = 0; a < dv; ++a) {
      for (std::uint32_t u : members[check_of[v * dv + a]]) {
        if (u == v) continue;
        if (stamp[u] == scan && via[u] != a) return static_cast<std::ptrdiff_t>(v * dv + a);
        stamp[u] = scan;
        via[u] = a;
      }
    }
    return -1;
  };
  constexpr std::size_t kPasses = 200;
  for (std::size_t pass = 0;; ++pass) {
    std::size_t repaired = 0;
    for (std::size_t v = 0; v < n; ++v) {
      const std::ptrdiff_t e = bad_edge(v);
      if (e < 0) continue;
      // Swap check sockets with a random edge of another variable.
      const std::size_t other = rng.below(edges);
      if (other / dv == v) continue;
      const std::uint32_t c1 = check_of[static_cast<std::size_t>(e)], c2 = check_of[other];
      move(static_cast<std::size_t>(e), c2);
      move(other, c1);
      ++repaired;
    }
    if (repaired == 0) break;
    if (pass == kPasses) {
      throw Error(
          fmt::format("could not remove all 4-cycles from a ({}, {})-regular code of length {} "
                      "in {} passes; try a larger length or another seed",
                      dv, dc, n, kPasses));
    }
  }
  std::vector<std::vector<std::uint32_t>> checks(m);
  for (std::size_t e = 0; e < edges; ++e)
    checks[check_of[e]].push_back(static_cast<std::uint32_t>(e / dv));
  return Code::from_checks(n, checks);
}

Code construct_hamming(std::size_t r) {
  if (r < 2 || r > 20) throw Error(fmt::format("Hamming code needs 2 <= r <= 20, got {}", r));
  const std::size_t n = (std::size_t{1} << r) - 1;
  std::vector<std::vector<std::uint32_t>> checks(r);
  for (std::size_t j = 0; j < n; ++j) {
    for (std::size_t i = 0; i < r; ++i) {
      if (((j + 1) >> i) & 1u) checks[i].push_back(static_cast<std::uint32_t>(j));
    }
  }
  return Code::from_checks(n, checks);
}

Code construct_repetition(std::size_t n) {
  if (n < 2) throw Error("repetition code needs n >= 2");
  std::vector<std::vector<std::uint32_t>> checks;
  for (std::uint32_t i = 1; i < n; ++i) checks.push_back({0, i});
  return Code::from_checks(n, checks);
}

Code construct_single_parity(std::size_t n) {
  if (n < 2) throw Error("single parity-check code needs n >= 2");
  std::vector<std::uint32_t> all(n);
  for (std::size_t i = 0; i < n; ++i) all[i] = static_cast<std::uint32_t>(i);
  return Code::from_checks(n, {all});
}

Lifting lift_base_graph(std::size_t rows, std::size_t cols,
                        const std::vector<std::uint8_t>& pattern, std::size_t z,
                        std::uint64_t seed) {
  if (pattern.size() != rows * cols) throw Error("base pattern size does not match its dimensions");
  if (z < 2) throw Error("lifting size must be at least 2");
  QuasiCyclic base{rows, cols, z, std::vector<std::int64_t>(rows * cols, -1)};
  const auto zz = static_cast<std::int64_t>(z);
  auto mod = [zz](std::int64_t x) { return ((x % zz) + zz) % zz; };
  SplitMix rng(seed);
  // Counts, for a candidate shift at (i, j), the block 4-cycles and 6-cycles it closes with the
  // shifts already chosen.
  auto conflicts = [&](std::size_t i, std::size_t j, std::int64_t s, bool six) {
    std::size_t count = 0;
    for (std::size_t i2 = 0; i2 < rows; ++i2) {
      if (i2 == i || base.shift(i2, j) < 0) continue;
      for (std::size_t j2 = 0; j2 < cols; ++j2) {
        if (j2 == j || base.shift(i, j2) < 0) continue;
        // 4-cycle: (i,j) -> (i2,j) -> (i2,j2) -> (i,j2)
        if (base.shift(i2, j2) >= 0 &&
            mod(s - base.shift(i2, j) + base.shift(i2, j2) - base.shift(i, j2)) == 0) {
          count += 1000000;
        }
        if (!six) continue;
        // 6-cycle through a third block row i3: (i,j) (i2,j) (i2,j3) (i3,j3) (i3,j2) (i,j2)
        for (std::size_t i3 = 0; i3 < rows; ++i3) {
          if (i3 == i || i3 == i2 || base.shift(i3, j2) < 0) continue;
          for (std::size_t j3 = 0; j3 < cols; ++j3) {
            if (j3 == j || j3 == j2 || base.shift(i2, j3) < 0 || base.shift(i3, j3) < 0) continue;
            if (mod(s - base.shift(i2, j) + base.shift(i2, j3) - base.shift(i3, j3) +
                    base.shift(i3, j2) - base.shift(i, j2)) == 0) {
              ++count;
            }
          }
        }
      }
    }
    return count;
  };
  std::size_t six_cycles = 0;
  for (std::size_t j = 0; j < cols; ++j) {
    for (std::size_t i = 0; i < rows; ++i) {
      if (!pattern[i * cols + j]) continue;
      const std::int64_t offset = static_cast<std::int64_t>(rng.below(z));
      std::int64_t best = -1;
      std::size_t best_count = SIZE_MAX;
      for (std::int64_t t = 0; t < zz && best_count > 0; ++t) {
        const std::int64_t s = mod(offset + t);
        const std::size_t count = conflicts(i, j, s, true);
        if (count < best_count) best = s, best_count = count;
      }
      if (best_count >= 1000000) {
        throw Error(
            fmt::format("no circulant shift for base entry ({}, {}) avoids 4-cycles at Z = {}; "
                        "use a larger lifting size",
                        i + 1, j + 1, z));
      }
      base.shifts[i * cols + j] = best;
      six_cycles += best_count;
    }
  }
  return Lifting{base, six_cycles == 0 ? std::size_t{8} : std::size_t{6}};
}

std::vector<std::uint8_t> split_multiplicities(std::size_t rows, std::size_t cols,
                                               const std::vector<std::uint8_t>& multiplicity,
                                               std::size_t t) {
  const std::size_t width = cols * t;
  std::vector<std::uint8_t> pattern(rows * t * width, 0);
  for (std::size_t i = 0; i < rows; ++i) {
    for (std::size_t j = 0; j < cols; ++j) {
      const std::size_t k = multiplicity[i * cols + j];
      if (k > t)
        throw Error(
            fmt::format("base entry ({}, {}) has multiplicity {} > {}", i + 1, j + 1, k, t));
      for (std::size_t r = 0; r < t; ++r) {
        for (std::size_t q = 0; q < k; ++q) pattern[(i * t + r) * width + j * t + (r + q) % t] = 1;
      }
    }
  }
  return pattern;
}

std::size_t Protograph::variable_degree(std::size_t j) const noexcept {
  std::size_t d = 0;
  for (std::size_t i = 0; i < rows; ++i) d += at(i, j);
  return d;
}
std::size_t Protograph::check_degree(std::size_t i) const noexcept {
  std::size_t d = 0;
  for (std::size_t j = 0; j < cols; ++j) d += at(i, j);
  return d;
}
std::size_t Protograph::edges() const noexcept {
  std::size_t d = 0;
  for (std::uint8_t c : cells) d += c;
  return d;
}
bool Protograph::is_punctured(std::size_t j) const noexcept {
  return std::binary_search(punctured.begin(), punctured.end(), j);
}
double Protograph::design_rate() const noexcept {
  return (static_cast<double>(cols) - static_cast<double>(rows)) /
         static_cast<double>(cols - punctured.size());
}
void Protograph::validate() const {
  if (rows == 0 || cols == 0 || cells.size() != rows * cols)
    throw Error("protograph: the table is empty or not rows x cols");
  for (std::size_t j = 0; j < cols; ++j) {
    if (variable_degree(j) == 0)
      throw Error(fmt::format("protograph: column {} has no edge", j + 1));
  }
  for (std::size_t i = 0; i < rows; ++i) {
    if (check_degree(i) < 2)
      throw Error(fmt::format("protograph: row {} has degree {} (a check needs 2 or more)", i + 1,
                              check_degree(i)));
  }
  if (punctured.size() >= cols || !(design_rate() > 0 && design_rate() < 1)) {
    throw Error(fmt::format(
        "protograph: {} rows, {} columns and {} punctured give design rate {:.4g}, not in (0, 1)",
        rows, cols, punctured.size(), punctured.size() < cols ? design_rate() : 0.0));
  }
}

Protograph parse_protograph(std::string_view text, const std::string& source) {
  detail::reject_binary(text, source);
  detail::TextReader reader(text, source, '#');
  Protograph p;
  detail::Line line;
  std::size_t punctured_line = 0;
  std::vector<std::int64_t> punctured;
  while (reader.next(line)) {
    if (line.tokens.front() == "punctured") {
      if (punctured_line != 0)
        reader.fail(line.number,
                    fmt::format("second punctured line (the first is line {})", punctured_line));
      punctured_line = line.number;
      for (std::size_t t = 1; t < line.tokens.size(); ++t)
        punctured.push_back(reader.integer_in(line, line.tokens[t], 1, 1 << 20, "column"));
      continue;
    }
    if (p.rows > 0 && line.tokens.size() != p.cols) {
      reader.fail(line.number,
                  fmt::format("row has {} entries, the first has {}", line.tokens.size(), p.cols));
    }
    p.cols = line.tokens.size();
    for (std::string_view token : line.tokens) {
      p.cells.push_back(
          static_cast<std::uint8_t>(reader.integer_in(line, token, 0, 255, "base multiplicity")));
    }
    ++p.rows;
  }
  if (p.rows == 0) throw Error(fmt::format("{}: empty base graph", source));
  for (std::int64_t c : punctured) {
    if (static_cast<std::size_t>(c) > p.cols) {
      reader.fail(punctured_line,
                  fmt::format("punctured column {} is beyond the {} columns", c, p.cols));
    }
    p.punctured.push_back(static_cast<std::size_t>(c - 1));
  }
  std::sort(p.punctured.begin(), p.punctured.end());
  if (std::adjacent_find(p.punctured.begin(), p.punctured.end()) != p.punctured.end())
    reader.fail(punctured_line, "a punctured column is listed twice");
  return p;
}

std::string protograph_text(const Protograph& p) {
  std::string out;
  const int width = p.cells.empty() || *std::max_element(p.cells.begin(), p.cells.end()) < 10
                        ? 1
                        : (*std::max_element(p.cells.begin(), p.cells.end()) < 100 ? 2 : 3);
  for (std::size_t i = 0; i < p.rows; ++i) {
    for (std::size_t j = 0; j < p.cols; ++j)
      out += fmt::format("{}{:>{}}", j ? " " : "", p.at(i, j), width);
    out += '\n';
  }
  if (!p.punctured.empty()) {
    out += "punctured";
    for (std::size_t c : p.punctured) out += fmt::format(" {}", c + 1);
    out += '\n';
  }
  return out;
}

std::vector<std::size_t> degree_sequence(const std::map<std::size_t, double>& fractions,
                                         std::size_t n) {
  double total = 0;
  for (auto [d, f] : fractions) total += f;
  if (fractions.empty() || std::abs(total - 1) > 1e-6)
    throw Error(fmt::format("variable degree fractions must sum to 1 (they sum to {})", total));
  std::vector<std::size_t> degrees;
  degrees.reserve(n);
  double cumulative = 0;
  for (auto [d, f] : fractions) {
    cumulative += f;
    const double until =
        std::min(std::round(cumulative * static_cast<double>(n)), static_cast<double>(n));
    while (static_cast<double>(degrees.size()) < until) degrees.push_back(d);
  }
  degrees.resize(n, fractions.rbegin()->first);
  return degrees;
}

Code construct_peg(const std::vector<std::size_t>& degrees, std::size_t m, std::uint64_t seed) {
  const std::size_t n = degrees.size();
  if (m < 2 || n < 2) throw Error("PEG needs at least 2 variables and 2 checks");
  for (std::size_t d : degrees) {
    if (d < 1 || d > m)
      throw Error(fmt::format("variable degree {} is impossible with {} checks", d, m));
  }
  std::vector<std::size_t> order(n);
  for (std::size_t v = 0; v < n; ++v) order[v] = v;
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return degrees[a] < degrees[b]; });
  SplitMix rng(seed);
  std::vector<std::vector<std::uint32_t>> var_checks(n), check_vars(m);
  std::vector<std::uint64_t> seen_check(m, 0), seen_var(n, 0);
  std::uint64_t stamp = 0;
  std::vector<std::uint32_t> frontier, next, candidates;
  // Lowest current degree among the checks allowed by `allowed`, ties broken at random.
  auto pick = [&](auto allowed) {
    candidates.clear();
    std::size_t best = SIZE_MAX;
    for (std::uint32_t c = 0; c < m; ++c) {
      if (!allowed(c)) continue;
      if (check_vars[c].size() < best) best = check_vars[c].size(), candidates.clear();
      if (check_vars[c].size() == best) candidates.push_back(c);
    }
    return candidates.empty() ? UINT32_MAX : candidates[rng.below(candidates.size())];
  };
  for (std::size_t v : order) {
    for (std::size_t k = 0; k < degrees[v]; ++k) {
      auto not_mine = [&](std::uint32_t c) {
        return std::find(var_checks[v].begin(), var_checks[v].end(), c) == var_checks[v].end();
      };
      std::uint32_t chosen;
      if (k == 0) {
        chosen = pick(not_mine);
      } else {
        // Breadth-first from v; stop when the reached checks stop growing or cover them all.
        ++stamp;
        std::size_t reached = 0;
        frontier.assign(var_checks[v].begin(), var_checks[v].end());
        for (auto c : frontier) seen_check[c] = stamp, ++reached;
        seen_var[v] = stamp;
        for (;;) {
          next.clear();
          for (std::uint32_t c : frontier) {
            for (std::uint32_t u : check_vars[c]) {
              if (seen_var[u] == stamp) continue;
              seen_var[u] = stamp;
              for (std::uint32_t c2 : var_checks[u]) {
                if (seen_check[c2] == stamp || seen_check[c2] == stamp + 1) continue;
                seen_check[c2] = stamp + 1;  // reached at this new level
                next.push_back(c2);
              }
            }
          }
          if (next.empty() || reached + next.size() == m) break;
          for (auto c : next) seen_check[c] = stamp;
          reached += next.size();
          frontier.swap(next);
        }
        // Checks not reached before the last level: unreached ones, or (all covered) the last
        // level.
        chosen = pick([&](std::uint32_t c) { return seen_check[c] != stamp && not_mine(c); });
        if (chosen == UINT32_MAX) chosen = pick(not_mine);  // every check is at distance <= 2
        ++stamp;                                            // stamp + 1 marks are now stale
      }
      var_checks[v].push_back(chosen);
      check_vars[chosen].push_back(static_cast<std::uint32_t>(v));
    }
  }
  return Code::from_checks(n, check_vars);
}

}  // namespace tannery
