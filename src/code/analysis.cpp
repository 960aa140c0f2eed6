#include "tannery/code/analysis.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <bit>
#include <limits>
#include <nlohmann/json.hpp>
#include <numeric>
#include <set>

#include "tannery/error.hpp"

namespace tannery {

DegreeProfile degree_profile(const Code& code) {
  DegreeProfile p;
  for (std::size_t v = 0; v < code.n(); ++v) ++p.variable[code.variable_degree(v)];
  for (std::size_t c = 0; c < code.m(); ++c) ++p.check[code.check_degree(c)];
  p.edges = code.edges();
  return p;
}

namespace {

// Breadth-first search over the bipartite graph (variables 0..n-1, checks n..n+m-1) that reuses
// its arrays between roots; only touched entries are reset.
class Searcher {
 public:
  explicit Searcher(const Code& code)
      : code_(code),
        depth_(code.n() + code.m(), kUnseen),
        paths_(code.n() + code.m(), 0),
        via_(code.n() + code.m(), 0) {}

  // Length of the shortest cycle through root, or SIZE_MAX, looking no further than cycles
  // shorter than bound.
  std::size_t shortest_cycle(std::uint32_t root, std::size_t bound) {
    start(root);
    std::size_t best = SIZE_MAX;
    for (std::size_t head = 0; head < order_.size(); ++head) {
      const std::uint32_t x = order_[head];
      const std::size_t t = depth_[x];
      if (2 * t + 2 >= std::min(best, bound)) break;
      for_each_neighbour(x, [&](std::uint32_t y, std::uint32_t edge) {
        if (edge == via_[x] && x != root) return;
        if (depth_[y] == kUnseen) {
          visit(y, t + 1, edge);
        } else if (depth_[y] >= t) {
          best = std::min<std::size_t>(best, t + depth_[y] + 1);
        }
      });
    }
    reset();
    return best;
  }

  // Number of cycles of length girth through root (girth being the graph's girth).
  std::uint64_t cycles_through(std::uint32_t root, std::size_t girth) {
    start(root);
    paths_[root] = 1;
    const std::size_t half = girth / 2;
    std::uint64_t pairs = 0;
    for (std::size_t head = 0; head < order_.size(); ++head) {
      const std::uint32_t x = order_[head];
      const std::size_t t = depth_[x];
      if (t == half) {
        pairs += paths_[x] * (paths_[x] - 1) / 2;
        continue;
      }
      for_each_neighbour(x, [&](std::uint32_t y, std::uint32_t) {
        if (depth_[y] == kUnseen) visit(y, t + 1, 0);
        if (depth_[y] == t + 1) paths_[y] += paths_[x];
      });
    }
    reset();
    return pairs;
  }

 private:
  static constexpr std::uint32_t kUnseen = std::numeric_limits<std::uint32_t>::max();

  template <class F>
  void for_each_neighbour(std::uint32_t x, F&& f) {
    const std::size_t n = code_.n();
    if (x < n) {
      for (std::uint32_t e : code_.variable_edges(x)) {
        f(static_cast<std::uint32_t>(n + code_.edge_check(e)), e);
      }
    } else {
      const std::size_t c = x - n;
      for (std::uint32_t e = code_.check_begin(c); e < code_.check_end(c); ++e) {
        f(code_.edge_variable(e), e);
      }
    }
  }
  void start(std::uint32_t root) {
    order_.clear();
    visit(root, 0, 0);
  }
  void visit(std::uint32_t y, std::size_t depth, std::uint32_t edge) {
    depth_[y] = static_cast<std::uint32_t>(depth);
    via_[y] = edge;
    order_.push_back(y);
  }
  void reset() {
    for (std::uint32_t x : order_) {
      depth_[x] = kUnseen;
      paths_[x] = 0;
    }
  }

  const Code& code_;
  std::vector<std::uint32_t> depth_;
  std::vector<std::uint64_t> paths_;
  std::vector<std::uint32_t> via_;
  std::vector<std::uint32_t> order_;
};

}  // namespace

CycleCensus cycle_census(const Code& code) {
  Searcher search(code);
  std::size_t girth = SIZE_MAX;
  for (std::uint32_t v = 0; v < code.n(); ++v) {
    girth = std::min(girth, search.shortest_cycle(v, girth));
  }
  CycleCensus census;
  if (girth == SIZE_MAX) return census;
  census.girth = girth;
  std::uint64_t through = 0;
  for (std::uint32_t v = 0; v < code.n(); ++v) through += search.cycles_through(v, girth);
  census.count = through / (girth / 2);  // each cycle passes girth/2 variable nodes
  return census;
}

std::vector<CycleNode> shortest_cycle(const Code& code) {
  const CycleCensus census = cycle_census(code);
  if (!census.girth) return {};
  const std::size_t n = code.n(), nodes = n + code.m();
  auto neighbours = [&](std::uint32_t x) {
    std::vector<std::uint32_t> out;
    if (x < n) {
      for (std::uint32_t e : code.variable_edges(x))
        out.push_back(static_cast<std::uint32_t>(n + code.edge_check(e)));
    } else {
      for (std::uint32_t v : code.check_variables(x - n)) out.push_back(v);
    }
    return out;
  };
  std::vector<std::uint32_t> parent(nodes), depth(nodes);
  for (std::uint32_t root = 0; root < n; ++root) {
    std::fill(depth.begin(), depth.end(), UINT32_MAX);
    std::vector<std::uint32_t> queue{root};
    depth[root] = 0;
    parent[root] = root;
    for (std::size_t head = 0; head < queue.size(); ++head) {
      const std::uint32_t x = queue[head];
      for (std::uint32_t y : neighbours(x)) {
        if (y == parent[x]) continue;
        if (depth[y] == UINT32_MAX) {
          depth[y] = depth[x] + 1;
          parent[y] = x;
          queue.push_back(y);
        } else if (depth[x] + depth[y] + 1 == *census.girth) {
          // Two paths from the root meet: walk both back.
          std::vector<std::uint32_t> a, b;
          for (std::uint32_t u = x; u != root; u = parent[u]) a.push_back(u);
          for (std::uint32_t u = y; u != root; u = parent[u]) b.push_back(u);
          std::vector<CycleNode> cycle{CycleNode{false, root}};
          for (auto it = a.rbegin(); it != a.rend(); ++it)
            cycle.push_back(
                CycleNode{*it >= n, *it >= n ? *it - static_cast<std::uint32_t>(n) : *it});
          for (std::uint32_t u : b)
            cycle.push_back(CycleNode{u >= n, u >= n ? u - static_cast<std::uint32_t>(n) : u});
          return cycle;
        }
      }
    }
  }
  return {};
}

std::string tanner_dot(const Code& code, const std::vector<CycleNode>& highlight) {
  auto name = [](bool check, std::uint32_t i) { return fmt::format("{}{}", check ? 'c' : 'v', i); };
  std::vector<bool> hot_var(code.n(), false), hot_check(code.m(), false);
  std::set<std::pair<std::uint32_t, std::uint32_t>> hot_edges;  // (check, variable)
  for (std::size_t i = 0; i < highlight.size(); ++i) {
    const CycleNode a = highlight[i], b = highlight[(i + 1) % highlight.size()];
    (a.is_check ? hot_check : hot_var)[a.index] = true;
    if (a.is_check != b.is_check)
      hot_edges.emplace(a.is_check ? a.index : b.index, a.is_check ? b.index : a.index);
  }
  std::string out = "graph tanner {\n  layout=neato; overlap=false; splines=true;\n";
  out += "  node [fontname=\"sans-serif\", fontsize=10];\n";
  for (std::uint32_t v = 0; v < code.n(); ++v) {
    out += fmt::format("  {} [shape=circle{}];\n", name(false, v),
                       hot_var[v] ? ", color=\"#c0392b\", penwidth=2" : "");
  }
  for (std::uint32_t c = 0; c < code.m(); ++c) {
    out += fmt::format("  {} [shape=square, style=filled, fillcolor=\"#dddddd\"{}];\n",
                       name(true, c), hot_check[c] ? ", color=\"#c0392b\", penwidth=2" : "");
  }
  for (std::uint32_t c = 0; c < code.m(); ++c) {
    for (std::uint32_t v : code.check_variables(c)) {
      out += fmt::format("  {} -- {}{};\n", name(true, c), name(false, v),
                         hot_edges.count({c, v}) ? " [color=\"#c0392b\", penwidth=2.5]" : "");
    }
  }
  return out + "}\n";
}

RowRedundancy row_redundancy(const Code& code) {
  RowRedundancy r;
  std::vector<std::size_t> order(code.m());
  for (std::size_t c = 0; c < code.m(); ++c) {
    order[c] = c;
    if (code.check_degree(c) == 0) r.empty.push_back(c);
  }
  auto less = [&](std::size_t a, std::size_t b) {
    auto x = code.check_variables(a), y = code.check_variables(b);
    if (std::lexicographical_compare(x.begin(), x.end(), y.begin(), y.end())) return true;
    if (std::lexicographical_compare(y.begin(), y.end(), x.begin(), x.end())) return false;
    return a < b;
  };
  std::sort(order.begin(), order.end(), less);
  std::size_t group_first = order.empty() ? 0 : order[0];
  for (std::size_t i = 1; i < order.size(); ++i) {
    auto a = code.check_variables(order[i - 1]), b = code.check_variables(order[i]);
    if (!b.empty() && std::equal(a.begin(), a.end(), b.begin(), b.end())) {
      r.repeated.emplace_back(group_first, order[i]);
    } else {
      group_first = order[i];
    }
  }
  std::sort(r.repeated.begin(), r.repeated.end(),
            [](const auto& x, const auto& y) { return x.second < y.second; });
  return r;
}

std::optional<std::vector<std::uint64_t>> weight_enumerator(const Code& code,
                                                            const Encoder& encoder,
                                                            std::size_t max_dimension) {
  const std::size_t k = encoder.k(), n = code.n();
  if (k > std::min<std::size_t>(max_dimension, 30)) return std::nullopt;
  const std::size_t words = (n + 63) / 64;
  std::vector<std::uint64_t> basis(k * words, 0);
  std::vector<std::uint8_t> info(k, 0), word(n);
  for (std::size_t j = 0; j < k; ++j) {
    info[j] = 1;
    encoder.encode(info, word);
    info[j] = 0;
    for (std::size_t i = 0; i < n; ++i) {
      if (word[i]) basis[j * words + i / 64] |= std::uint64_t{1} << (i % 64);
    }
  }
  std::vector<std::uint64_t> counts(n + 1, 0), current(words, 0);
  counts[0] = 1;
  for (std::uint64_t step = 1; step < (std::uint64_t{1} << k); ++step) {
    const std::size_t j = static_cast<std::size_t>(std::countr_zero(step));  // Gray code flip
    std::size_t weight = 0;
    for (std::size_t w = 0; w < words; ++w) {
      current[w] ^= basis[j * words + w];
      weight += static_cast<std::size_t>(std::popcount(current[w]));
    }
    ++counts[weight];
  }
  return counts;
}

std::optional<std::size_t> minimum_distance(const std::vector<std::uint64_t>& enumerator) {
  for (std::size_t w = 1; w < enumerator.size(); ++w) {
    if (enumerator[w] != 0) return w;
  }
  return std::nullopt;
}

CodeReport inspect_code(const Code& code, std::size_t max_dimension) {
  const Encoder encoder(code);
  CodeReport r;
  r.n = code.n();
  r.m = code.m();
  r.rank = encoder.rank();
  r.k = encoder.k();
  r.edges = code.edges();
  r.degrees = degree_profile(code);
  r.cycles = cycle_census(code);
  r.redundancy = row_redundancy(code);
  r.enumerator = weight_enumerator(code, encoder, max_dimension);
  if (r.enumerator) r.distance = minimum_distance(*r.enumerator);
  r.info_positions = encoder.info_positions();
  r.encoder_dense_checks = encoder.dense_checks();
  r.encoder_free_bits = encoder.free_bits();
  std::vector<std::uint32_t> first(r.k);
  std::iota(first.begin(), first.end(), 0u);
  try {
    (void)Encoder(code, first);
    r.systematic_first_possible = r.k > 0;
  } catch (const Error&) {
    r.systematic_first_possible = false;
  }
  r.quasi_cyclic = code.quasi_cyclic();
  return r;
}

namespace {

nlohmann::json degree_json(const std::map<std::size_t, std::size_t>& counts) {
  nlohmann::json j = nlohmann::json::object();
  for (auto [d, c] : counts) j[std::to_string(d)] = c;
  return j;
}
nlohmann::json edge_fraction_json(const std::map<std::size_t, std::size_t>& counts,
                                  std::size_t edges) {
  nlohmann::json j = nlohmann::json::object();
  for (auto [d, c] : counts) {
    if (d > 0) j[std::to_string(d)] = static_cast<double>(d * c) / static_cast<double>(edges);
  }
  return j;
}

}  // namespace

std::string code_report_json(const CodeReport& r, const std::string& source) {
  using nlohmann::json;
  json j;
  j["source"] = source;
  j["n"] = r.n;
  j["m"] = r.m;
  j["rank"] = r.rank;
  j["k"] = r.k;
  j["rate"] = r.rate();
  j["design_rate"] = r.design_rate();
  j["edges"] = r.edges;
  j["density"] = r.n && r.m ? static_cast<double>(r.edges) / static_cast<double>(r.n * r.m) : 0.0;
  j["variable_degrees"] = degree_json(r.degrees.variable);
  j["check_degrees"] = degree_json(r.degrees.check);
  j["lambda"] = edge_fraction_json(r.degrees.variable, r.edges);
  j["rho"] = edge_fraction_json(r.degrees.check, r.edges);
  j["girth"] = r.cycles.girth ? json(*r.cycles.girth) : json(nullptr);
  j["shortest_cycles"] = r.cycles.girth ? json(r.cycles.count) : json(nullptr);
  j["redundant_rows"] = r.m - r.rank;
  j["empty_rows"] = r.redundancy.empty;
  j["repeated_rows"] = json::array();
  for (auto [a, b] : r.redundancy.repeated) j["repeated_rows"].push_back({a, b});
  j["min_distance"] = r.distance ? json(*r.distance) : json(nullptr);
  j["weight_enumerator"] = r.enumerator ? json(*r.enumerator) : json(nullptr);
  j["quasi_cyclic"] = r.quasi_cyclic ? json{{"block_rows", r.quasi_cyclic->block_rows},
                                            {"block_cols", r.quasi_cyclic->block_cols},
                                            {"lifting", r.quasi_cyclic->lifting}}
                                     : json(nullptr);
  // Where encode and decode put the information bits by default, all k of them; and whether
  // positions 0..k-1 could carry them instead (an encoder with the systematic part first).
  j["info_positions"] = r.info_positions;
  j["systematic_first_possible"] = r.systematic_first_possible;
  j["encoder"] = {{"dense_checks", r.encoder_dense_checks}, {"free_bits", r.encoder_free_bits}};
  return j.dump(2);
}

StructureClassifier::StructureClassifier(const Code& code)
    : code_(code), degree_(code.m(), 0), in_set_(code.n(), 0) {}

void StructureClassifier::clear(std::span<const std::uint32_t> variables) {
  for (std::uint32_t v : variables) {
    if (v < code_.n()) in_set_[v] = 0;
  }
  for (std::uint32_t ch : touched_) degree_[ch] = 0;
  touched_.clear();
}

void StructureClassifier::load(std::span<const std::uint32_t> variables) {
  const auto checks = code_.edge_checks();
  for (std::size_t i = 0; i < variables.size(); ++i) {
    const std::uint32_t v = variables[i];
    if (v >= code_.n() || in_set_[v]) {
      clear(variables.first(i));
      throw Error(
          fmt::format("structure: variable {} is out of range or repeated (n = {})", v, code_.n()));
    }
    in_set_[v] = 1;
    for (std::uint32_t e : code_.variable_edges(v)) {
      if (degree_[checks[e]]++ == 0) touched_.push_back(checks[e]);
    }
  }
}

StructureClass StructureClassifier::classify(std::span<const std::uint32_t> variables) {
  load(variables);
  StructureClass c;
  c.a = static_cast<std::uint32_t>(variables.size());
  for (std::uint32_t ch : touched_) c.b += degree_[ch] & 1u;
  clear(variables);
  return c;
}

StructureShape StructureClassifier::shape(std::span<const std::uint32_t> variables) {
  load(variables);
  StructureShape s;
  s.cls.a = static_cast<std::uint32_t>(variables.size());
  s.elementary = true;
  for (std::uint32_t ch : touched_) {
    if (degree_[ch] & 1u) s.odd_checks.push_back(ch);
    if (degree_[ch] > 2) s.elementary = false;
  }
  s.cls.b = static_cast<std::uint32_t>(s.odd_checks.size());
  std::sort(s.odd_checks.begin(), s.odd_checks.end());
  s.absorbing = !variables.empty();
  const auto checks = code_.edge_checks();
  for (std::uint32_t v : variables) {
    int balance = 0;  // even-degree checks minus odd-degree checks
    for (std::uint32_t e : code_.variable_edges(v)) balance += (degree_[checks[e]] & 1u) ? -1 : 1;
    if (balance <= 0) s.absorbing = false;
  }
  clear(variables);
  return s;
}

}  // namespace tannery
