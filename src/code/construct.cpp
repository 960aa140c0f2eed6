#include "tannery/code/construct.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <numeric>
#include <tuple>

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

namespace {

// A block cycle condition: sum of coefficient * shift over groups of tied entries = 0 mod Z.
struct Condition {
  int length_class;                                           // 0, 1, 2: cycles of length 4, 6, 8
  std::vector<std::pair<std::uint32_t, std::int64_t>> terms;  // (group, coefficient), no zeros
};

constexpr std::int64_t kWeights[3] = {std::int64_t{1} << 40, std::int64_t{1} << 20, 1};

// Every simple block cycle of length 4, 6, 8 of the pattern (rows r0 < the others, first column
// below the last, so each once), plus each 4-cycle walked twice, as conditions over entry groups.
std::vector<Condition> cycle_conditions(std::size_t rows, std::size_t cols,
                                        const std::vector<std::uint8_t>& pattern,
                                        const std::vector<std::uint32_t>& group_of) {
  std::vector<std::vector<std::uint32_t>> row_cols(rows), col_rows(cols);
  for (std::size_t i = 0; i < rows; ++i)
    for (std::size_t j = 0; j < cols; ++j)
      if (pattern[i * cols + j]) {
        row_cols[i].push_back(static_cast<std::uint32_t>(j));
        col_rows[j].push_back(static_cast<std::uint32_t>(i));
      }
  std::vector<Condition> out;
  std::vector<std::uint32_t> path_rows, path_cols;
  std::vector<char> row_used(rows, 0), col_used(cols, 0);
  auto emit = [&](std::size_t length_class, std::int64_t factor) {
    Condition c{static_cast<int>(length_class), {}};
    const std::size_t l = path_cols.size();
    auto add = [&](std::size_t r, std::size_t col, std::int64_t sign) {
      const std::uint32_t g = group_of[r * cols + col];
      auto it = std::find_if(c.terms.begin(), c.terms.end(), [g](auto& t) { return t.first == g; });
      if (it == c.terms.end())
        c.terms.push_back({g, sign * factor});
      else
        it->second += sign * factor;
    };
    for (std::size_t k = 0; k < l; ++k) {
      add(path_rows[k], path_cols[k], +1);
      add(path_rows[(k + 1) % l], path_cols[k], -1);
    }
    std::erase_if(c.terms, [](auto& t) { return t.second == 0; });
    out.push_back(std::move(c));
  };
  // Depth-first: the path is r0 c0 r1 c1 ... r_k; it closes when a column of r_k meets r0.
  auto extend = [&](auto&& self) -> void {
    const std::uint32_t r = path_rows.back(), r0 = path_rows.front();
    for (std::uint32_t c : row_cols[r]) {
      if (col_used[c]) continue;
      path_cols.push_back(c);
      col_used[c] = 1;
      for (std::uint32_t next : col_rows[c]) {
        if (next == r) continue;
        if (next == r0) {
          if (path_cols.size() >= 2 && path_cols.front() < path_cols.back()) {
            emit(path_cols.size() - 2, 1);
            if (path_cols.size() == 2) emit(2, 2);  // the 4-cycle walked twice: length 8
          }
          continue;
        }
        if (next < r0 || row_used[next] || path_cols.size() == 4) continue;
        path_rows.push_back(next);
        row_used[next] = 1;
        self(self);
        row_used[next] = 0;
        path_rows.pop_back();
      }
      col_used[c] = 0;
      path_cols.pop_back();
    }
  };
  for (std::uint32_t r0 = 0; r0 < rows; ++r0) {
    path_rows.assign(1, r0);
    row_used[r0] = 1;
    extend(extend);
    row_used[r0] = 0;
  }
  return out;
}

std::int64_t modulo(std::int64_t x, std::int64_t z) {
  return ((x % z) + z) % z;
}

// Calls f(x) for every x in [0, z) with k x + rest = 0 mod z.
template <class F>
void for_each_solution(std::int64_t k, std::int64_t rest, std::int64_t z, F f) {
  k = modulo(k, z);
  const std::int64_t target = modulo(-rest, z);
  // Extended Euclid: g = gcd(k, z) = k u + z v.
  std::int64_t g = z, u = 0, g1 = k, u1 = 1;
  while (g1 != 0) {
    const std::int64_t q = g / g1;
    std::tie(g, g1) = std::pair{g1, g - q * g1};
    std::tie(u, u1) = std::pair{u1, u - q * u1};
  }
  if (target % g != 0) return;
  const std::int64_t period = z / g;
  const std::int64_t x0 = modulo((target / g) % period * modulo(u, period), period);
  for (std::int64_t t = 0; t < g; ++t) f(x0 + t * period);
}

}  // namespace

Lifting lift_base_graph(std::size_t rows, std::size_t cols,
                        const std::vector<std::uint8_t>& pattern, std::size_t z, std::uint64_t seed,
                        const LiftOptions& options) {
  if (pattern.size() != rows * cols) throw Error("base pattern size does not match its dimensions");
  if (z < 2) throw Error("lifting size must be at least 2");
  const auto zz = static_cast<std::int64_t>(z);
  // Groups of entries sharing one shift: union-find over the `equal` pairs.
  std::vector<std::uint32_t> parent(rows * cols);
  std::iota(parent.begin(), parent.end(), 0u);
  auto find = [&](std::uint32_t x) {
    while (parent[x] != x) x = parent[x] = parent[parent[x]];
    return x;
  };
  auto entry_checked = [&](std::size_t e) {
    if (e >= rows * cols || !pattern[e])
      throw Error(fmt::format("lifting condition on entry {} that is not an edge", e));
    return static_cast<std::uint32_t>(e);
  };
  for (auto [a, b] : options.equal) parent[find(entry_checked(a))] = find(entry_checked(b));
  std::vector<std::uint32_t> group_of(rows * cols);
  for (std::size_t e = 0; e < rows * cols; ++e) group_of[e] = find(static_cast<std::uint32_t>(e));
  std::vector<std::int64_t> fixed(rows * cols, -1);  // per group
  for (auto [e, value] : options.fixed) fixed[group_of[entry_checked(e)]] = modulo(value, zz);
  std::vector<char> unit_only(rows * cols, 0);  // per group
  for (std::size_t e : options.units) unit_only[group_of[entry_checked(e)]] = 1;
  auto allowed = [&](std::uint32_t g, std::int64_t x) {
    return !unit_only[g] || std::gcd(x, zz) == 1;
  };

  const std::vector<Condition> conditions = cycle_conditions(rows, cols, pattern, group_of);
  std::vector<std::vector<std::uint32_t>> conditions_of(rows * cols);
  for (std::size_t c = 0; c < conditions.size(); ++c)
    for (auto [g, k] : conditions[c].terms)
      conditions_of[g].push_back(static_cast<std::uint32_t>(c));
  // Free groups in column order of their first entry (the greedy pass's order).
  std::vector<std::uint32_t> order;
  std::vector<char> seen(rows * cols, 0);
  for (std::size_t j = 0; j < cols; ++j) {
    for (std::size_t i = 0; i < rows; ++i) {
      const std::uint32_t g = group_of[i * cols + j];
      if (!pattern[i * cols + j] || seen[g]) continue;
      seen[g] = 1;
      if (fixed[g] < 0) order.push_back(g);
    }
  }
  auto sum_without = [&](const Condition& c, const std::vector<std::int64_t>& shift,
                         std::uint32_t skip, std::int64_t& k, bool& complete) {
    std::int64_t rest = 0;
    k = 0;
    complete = true;
    for (auto [g, coefficient] : c.terms) {
      if (g == skip) {
        k = coefficient;
      } else if (shift[g] < 0) {
        complete = false;
      } else {
        rest += coefficient * shift[g];
      }
    }
    return rest;
  };
  auto closed = [&](const Condition& c, const std::vector<std::int64_t>& shift) {
    std::int64_t sum = 0;
    for (auto [g, coefficient] : c.terms) sum += coefficient * shift[g];
    return modulo(sum, zz) == 0;
  };
  auto objective = [&](const std::vector<std::int64_t>& shift) {
    std::int64_t total = 0;
    for (const Condition& c : conditions)
      if (closed(c, shift)) total += kWeights[c.length_class];
    return total;
  };
  std::vector<std::int64_t> cost(z);
  // Coordinate descent: each free group takes the shift closing the fewest conditions (weighted)
  // given the others; stops when a pass changes nothing.
  auto descend = [&](std::vector<std::int64_t>& shift, SplitMix& rng) {
    for (int pass = 0; pass < options.passes; ++pass) {
      bool changed = false;
      for (std::size_t a = order.size(); a > 1; --a) std::swap(order[a - 1], order[rng.below(a)]);
      for (std::uint32_t g : order) {
        std::fill(cost.begin(), cost.end(), 0);
        for (std::uint32_t ci : conditions_of[g]) {
          const Condition& c = conditions[ci];
          std::int64_t k;
          bool complete;
          const std::int64_t rest = sum_without(c, shift, g, k, complete);
          for_each_solution(k, rest, zz,
                            [&](std::int64_t x) { cost[x] += kWeights[c.length_class]; });
        }
        std::int64_t best = shift[g];
        for (std::int64_t x = 0; x < zz; ++x)
          if (cost[x] < cost[best] && allowed(g, x)) best = x;
        if (best != shift[g]) shift[g] = best, changed = true;
      }
      if (!changed) break;
    }
  };

  // Start 0: the greedy pass (the shift from a random offset with the fewest 4- and 6-cycle
  // conditions closed among the entries chosen so far).
  SplitMix rng(seed);
  std::vector<std::int64_t> shift = fixed;
  for (std::uint32_t g : order) {
    const std::int64_t offset = static_cast<std::int64_t>(rng.below(z));
    std::int64_t best = -1, best_count = INT64_MAX;
    for (std::int64_t t = 0; t < zz && best_count > 0; ++t) {
      const std::int64_t s = modulo(offset + t, zz);
      if (!allowed(g, s)) continue;
      shift[g] = s;
      std::int64_t count = 0;
      for (std::uint32_t ci : conditions_of[g]) {
        const Condition& c = conditions[ci];
        if (c.length_class == 2) continue;
        std::int64_t k;
        bool complete;
        const std::int64_t rest = sum_without(c, shift, g, k, complete);
        if (complete && modulo(rest + k * s, zz) == 0) count += c.length_class == 0 ? 1000000 : 1;
      }
      if (count < best_count) best = s, best_count = count;
    }
    shift[g] = best;
  }
  SplitMix descent_rng(seed ^ 0x5851f42d4c957f2dull);
  descend(shift, descent_rng);
  // Every start's result with its objective; stable sort keeps the earlier start on ties.
  std::vector<std::pair<std::int64_t, std::vector<std::int64_t>>> results;
  results.emplace_back(objective(shift), shift);
  for (int restart = 1; restart <= (options.passes > 0 ? options.restarts : 0); ++restart) {
    SplitMix start_rng(seed + 0x9e3779b97f4a7c15ull * static_cast<std::uint64_t>(restart));
    shift = fixed;
    for (std::uint32_t g : order) {
      do shift[g] = static_cast<std::int64_t>(start_rng.below(z));
      while (!allowed(g, shift[g]));
    }
    descend(shift, start_rng);
    results.emplace_back(objective(shift), shift);
  }
  std::stable_sort(results.begin(), results.end(),
                   [](const auto& a, const auto& b) { return a.first < b.first; });
  auto table = [&](const std::vector<std::int64_t>& groups) {
    QuasiCyclic qc{rows, cols, z, std::vector<std::int64_t>(rows * cols, -1)};
    for (std::size_t e = 0; e < rows * cols; ++e)
      if (pattern[e]) qc.shifts[e] = groups[group_of[e]];
    return qc;
  };
  auto closed_counts = [&](const std::vector<std::int64_t>& groups) {
    std::array<std::size_t, 3> counts{};
    for (const Condition& c : conditions)
      if (closed(c, groups)) ++counts[static_cast<std::size_t>(c.length_class)];
    return counts;
  };
  const std::vector<std::int64_t>& best_shift = results.front().second;
  Lifting lift{table(best_shift), 6, closed_counts(best_shift), {}, {}};
  for (const auto& [value, groups] : results) {
    if (lift.candidates.size() == options.candidates) break;
    QuasiCyclic qc = table(groups);
    if (std::any_of(lift.candidates.begin(), lift.candidates.end(),
                    [&](const QuasiCyclic& q) { return q.shifts == qc.shifts; }))
      continue;
    lift.candidates.push_back(std::move(qc));
    lift.candidate_closed.push_back(closed_counts(groups));
  }
  if (lift.closed[0] > 0 && options.require_no_four_cycles) {
    throw Error(fmt::format(
        "no circulant shifts avoid every 4-cycle at Z = {} ({} block 4-cycles stay closed); use a "
        "larger lifting size",
        z, lift.closed[0]));
  }
  lift.girth_at_least = lift.closed[0] > 0 ? 4 : (lift.closed[1] > 0 ? 6 : 8);
  return lift;
}

std::vector<ParitySystem> expand_parity_systems(const std::vector<ParitySystem>& systems,
                                                std::size_t factor) {
  std::vector<ParitySystem> out;
  for (const ParitySystem& s : systems) {
    for (std::size_t a = 0; a < factor; ++a) {
      ParitySystem copy;
      for (std::size_t r : s.rows) copy.rows.push_back(r * factor + a);
      for (std::size_t c : s.cols) copy.cols.push_back(c * factor + a);
      out.push_back(std::move(copy));
    }
  }
  return out;
}

LiftOptions parity_lift_options(const std::vector<ParitySystem>& systems, std::size_t cols,
                                bool final) {
  LiftOptions o;
  o.require_no_four_cycles = final;
  for (const ParitySystem& s : systems) {
    const std::size_t m = s.rows.size();
    auto entry = [&](std::size_t k, std::size_t c) { return s.rows[k] * cols + s.cols[c]; };
    for (std::size_t k = 1; k < m; ++k) {
      o.fixed.push_back({entry(k - 1, k), 0});
      o.fixed.push_back({entry(k, k), 0});
    }
    if (m < 4) throw Error("an encodable parity part needs at least 4 rows");
    o.fixed.push_back({entry(0, 0), 0});
    o.fixed.push_back({entry(m - 2, 0), 0});
    if (final)
      o.units.push_back(entry(m - 1, 0));
    else
      o.fixed.push_back({entry(m - 1, 0), 0});
  }
  return o;
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
