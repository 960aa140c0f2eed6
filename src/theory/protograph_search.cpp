// Protograph design: the design rules and the annealing search over base matrices.
#include <fmt/format.h>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <numeric>

#include "tannery/base/thread_pool.hpp"
#include "tannery/channel/channel.hpp"
#include "tannery/error.hpp"
#include "tannery/theory/capacity.hpp"
#include "tannery/theory/protograph.hpp"

namespace tannery {

namespace {

// The fixed parity part of an encodable protograph: column k of the last `rows` columns.
std::uint8_t parity_entry(std::size_t rows, std::size_t i, std::size_t k) {
  if (k == 0) return i == 0 || i + 2 == rows || i + 1 == rows;
  return i + 1 == k || i == k;
}

// Union-find over check types, for the degree-2 cycle rule.
std::size_t root(std::vector<std::size_t>& parent, std::size_t x) {
  while (parent[x] != x) x = parent[x] = parent[parent[x]];
  return x;
}

}  // namespace

std::string protograph_design_violation(const Protograph& p, bool encodable) {
  for (std::size_t j = 0; j < p.cols; ++j) {
    const std::size_t d = p.variable_degree(j);
    if (d == 0) return fmt::format("column {} has no edge", j + 1);
    if (p.is_punctured(j) && d < 2)
      return fmt::format("punctured column {} has degree 1: nothing can determine it", j + 1);
  }
  for (std::size_t i = 0; i < p.rows; ++i) {
    if (p.check_degree(i) < 2) return fmt::format("row {} has degree < 2", i + 1);
  }
  std::vector<std::size_t> degree_one_on(p.rows, 0), parent(p.rows);
  std::iota(parent.begin(), parent.end(), std::size_t{0});
  for (std::size_t j = 0; j < p.cols; ++j) {
    const std::size_t d = p.variable_degree(j);
    std::vector<std::size_t> ends;
    for (std::size_t i = 0; i < p.rows; ++i)
      for (std::uint8_t k = 0; k < p.at(i, j); ++k) ends.push_back(i);
    if (d == 1) {
      const std::size_t i = ends[0];
      bool precoded = false;
      for (std::size_t q : p.punctured) precoded |= p.at(i, q) > 0;
      if (p.is_punctured(j) || !precoded) {
        return fmt::format(
            "column {} has degree 1 but its check (row {}) joins no punctured column", j + 1,
            i + 1);
      }
      if (++degree_one_on[i] > 1) return fmt::format("row {} holds two degree-1 columns", i + 1);
    }
    if (d == 2) {
      const std::size_t a = root(parent, ends[0]), b = root(parent, ends[1]);
      if (a == b) {
        return fmt::format("the degree-2 columns up to column {} form a cycle among the checks",
                           j + 1);
      }
      parent[a] = b;
    }
  }
  if (encodable) {
    if (p.rows < 4) return "an encodable parity part needs at least 4 rows";
    for (std::size_t k = 0; k < p.rows; ++k) {
      for (std::size_t i = 0; i < p.rows; ++i) {
        if (p.at(i, p.cols - p.rows + k) != parity_entry(p.rows, i, k)) {
          return fmt::format(
              "column {} is not the encodable parity part (a weight-3 column, then a dual "
              "diagonal)",
              p.cols - p.rows + k + 1);
        }
      }
    }
  }
  return {};
}

namespace {

// encodable_weight_bound of a protograph known to have the encodable parity part.
std::size_t weight_bound(const Protograph& p) {
  std::size_t best = std::numeric_limits<std::size_t>::max();
  for (std::size_t j = 0; j + p.rows < p.cols; ++j) {
    std::size_t weight = 1;
    for (std::size_t i = 0; i < p.rows; ++i) weight += p.at(i, j) * (2 * p.rows - 2 - i);
    best = std::min(best, weight);
  }
  return best;
}

}  // namespace

std::size_t encodable_weight_bound(const Protograph& p) {
  if (p.cols <= p.rows || !protograph_design_violation(p, true).empty())
    throw Error("encodable weight bound: the protograph has no encodable parity part");
  return weight_bound(p);
}

namespace {

constexpr double kInfinite = std::numeric_limits<double>::infinity();

// Protograph EXIT threshold as Eb/N0 in dB, to about 0.002 dB, for comparing candidates of one
// shape; +inf when it does not converge even 8 dB above the Shannon limit.
class QuickThreshold {
 public:
  explicit QuickThreshold(double rate)
      : rate_(rate), limit_db_(biawgn_shannon_limit_ebn0_db(rate)) {}
  double operator()(const Protograph& p) const {
    double good = awgn_sigma(limit_db_ + 8, SnrMeasure::ebn0, rate_);
    double bad = 1.02 * awgn_sigma(limit_db_, SnrMeasure::ebn0, rate_);
    if (!protograph_exit_converges(p, good, kIterations)) return kInfinite;
    while (bad - good > 2e-4) {
      const double mid = 0.5 * (good + bad);
      (protograph_exit_converges(p, mid, kIterations) ? good : bad) = mid;
    }
    return 10 * std::log10(1 / (2 * rate_ * good * good));
  }

 private:
  static constexpr int kIterations = 2000;
  double rate_, limit_db_;
};

double uniform(SplitMix& rng) {
  return static_cast<double>(rng.next() >> 11) * 0x1p-53;
}

struct Shape {
  std::size_t rows, cols, max_multiplicity;
  bool encodable;
  std::vector<std::size_t> punctured;
  std::size_t max_variable_degree = 0;  // 0: no bound
  std::size_t min_weight = 0;           // encodable: 0 = no bound

  bool keeps_rules(const Protograph& p) const {
    if (max_variable_degree) {
      for (std::size_t j = 0; j < cols; ++j)
        if (p.variable_degree(j) > max_variable_degree) return false;
    }
    if (!protograph_design_violation(p, encodable).empty()) return false;
    return min_weight == 0 || weight_bound(p) >= min_weight;
  }

  Protograph empty() const {
    Protograph p{rows, cols, std::vector<std::uint8_t>(rows * cols, 0), punctured};
    if (encodable) {
      for (std::size_t k = 0; k < rows; ++k)
        for (std::size_t i = 0; i < rows; ++i)
          p.cells[i * cols + cols - rows + k] = parity_entry(rows, i, k);
    }
    return p;
  }
  std::size_t free_columns() const { return encodable ? cols - rows : cols; }
};

Protograph random_start(const Shape& shape, const QuickThreshold& quick, SplitMix& rng) {
  // Each free column gets a degree uniform in 3..hi (hi: the bound, else 8, at most what the
  // rows hold) spread over random rows; lower degrees come from the annealing's moves.
  const std::size_t capacity = shape.rows * shape.max_multiplicity;
  const std::size_t hi =
      std::min(capacity, shape.max_variable_degree ? shape.max_variable_degree : std::size_t{8});
  const std::size_t lo = std::min<std::size_t>(3, hi);
  for (int attempt = 0; attempt < 20000; ++attempt) {
    Protograph p = shape.empty();
    for (std::size_t j = 0; j < shape.free_columns(); ++j) {
      std::size_t degree = lo + rng.below(hi - lo + 1);
      while (degree > 0) {
        std::uint8_t& cell = p.cells[rng.below(shape.rows) * shape.cols + j];
        if (cell < shape.max_multiplicity) ++cell, --degree;
      }
    }
    if (shape.keeps_rules(p) && std::isfinite(quick(p))) return p;
  }
  throw Error(
      "found no random protograph of this shape that keeps the design rules and decodes; try "
      "more rows, a larger --max-multiplicity, fewer punctured columns or a lower --min-weight");
}

// One step: a random free entry set to another value, or one edge moved within its column.
// The protograph itself when 10 000 tries find no neighbour that keeps the rules.
Protograph neighbour(const Protograph& p, const Shape& shape, SplitMix& rng) {
  for (int attempt = 0; attempt < 10000; ++attempt) {
    Protograph q = p;
    const std::size_t j = rng.below(shape.free_columns());
    const std::size_t i = rng.below(shape.rows);
    std::uint8_t& cell = q.cells[i * shape.cols + j];
    if (rng.below(2) == 0) {
      const auto other = static_cast<std::uint8_t>(rng.below(shape.max_multiplicity));
      cell = other >= cell ? other + 1 : other;  // uniform over the other values 0..T
    } else {
      const std::size_t i2 = rng.below(shape.rows);
      std::uint8_t& to = q.cells[i2 * shape.cols + j];
      if (i2 == i || cell == 0 || to >= shape.max_multiplicity) continue;
      --cell;
      ++to;
    }
    if (shape.keeps_rules(q)) return q;
  }
  return p;
}

struct RoundResult {
  Protograph best;
  double best_db = kInfinite;
  std::size_t evaluations = 0;
};

RoundResult anneal(const ProtographSearchSettings& s, const Shape& shape,
                   const QuickThreshold& quick, std::size_t round) {
  SplitMix rng(s.seed * 0x9e3779b97f4a7c15ull + round);
  rng.next();
  RoundResult r;
  Protograph current = s.start ? *s.start : random_start(shape, quick, rng);
  double current_db = quick(current);
  r.best = current;
  r.best_db = current_db;
  for (std::size_t step = 0; step < s.steps; ++step) {
    const double fraction =
        s.steps > 1 ? static_cast<double>(step) / static_cast<double>(s.steps - 1) : 1.0;
    const double temperature = 0.3 * std::pow(0.01, fraction);
    Protograph candidate = neighbour(current, shape, rng);
    const double db = quick(candidate);
    ++r.evaluations;
    const double u = uniform(rng);  // drawn every step, so the stream does not depend on db
    if (db < current_db || (std::isfinite(db) && u < std::exp(-(db - current_db) / temperature))) {
      current = std::move(candidate);
      current_db = db;
      if (current_db < r.best_db) {
        r.best = current;
        r.best_db = current_db;
      }
    }
  }
  return r;
}

}  // namespace

ProtographSearchResult search_protograph(const ProtographSearchSettings& s,
                                         const ProtographProgress& progress) {
  Shape shape{s.rows, 0, s.max_multiplicity, s.encodable, {}};
  if (s.start) {
    const Protograph& p = *s.start;
    p.validate();
    shape = Shape{p.rows, p.cols, s.max_multiplicity, s.encodable, p.punctured};
    const std::string why = protograph_design_violation(p, s.encodable);
    if (!why.empty())
      throw Error(fmt::format("the starting protograph breaks a design rule: {}", why));
    for (std::uint8_t c : p.cells) {
      if (c > s.max_multiplicity) {
        throw Error(fmt::format("the starting protograph has multiplicity {} > the maximum {}", c,
                                s.max_multiplicity));
      }
    }
  } else {
    if (!(s.rate > 0 && s.rate < 1)) throw Error("protograph search: --rate must be in (0, 1)");
    if (s.rows < 1 || s.rows > 64) throw Error("protograph search: --rows must be in 1..64");
    const double cols =
        (static_cast<double>(s.rows) - s.rate * static_cast<double>(s.punctured)) / (1 - s.rate);
    if (std::abs(cols - std::round(cols)) > 1e-9 ||
        std::round(cols) <= static_cast<double>(s.rows)) {
      throw Error(fmt::format(
          "rate {} with {} rows and {} punctured columns needs (M - R P) / (1 - R) = {:.4g} "
          "columns, not a whole number above the rows; choose other rows",
          s.rate, s.rows, s.punctured, cols));
    }
    shape.cols = static_cast<std::size_t>(std::round(cols));
    if (shape.cols > 256) throw Error("protograph search: more than 256 columns");
    for (std::size_t j = 0; j < s.punctured; ++j) shape.punctured.push_back(j);
  }
  if (s.max_multiplicity < 1 || s.max_multiplicity > 16)
    throw Error("protograph search: --max-multiplicity must be in 1..16");
  if (s.steps < 1) throw Error("protograph search: at least one step per round");
  if (s.encodable && shape.rows < 4) throw Error("an encodable parity part needs at least 4 rows");
  if (s.encodable && shape.punctured.size() + shape.rows >= shape.cols)
    throw Error("the punctured columns leave no room beside the encodable parity part");
  shape.max_variable_degree = s.max_variable_degree;
  if (s.min_weight && !s.encodable)
    throw Error("protograph search: a minimum weight bound needs the encodable parity part");
  shape.min_weight = s.min_weight;
  if (s.start && !shape.keeps_rules(*s.start)) {
    throw Error(
        "the starting protograph has a column above the maximum variable degree or an "
        "encodable weight bound below the minimum");
  }
  const QuickThreshold quick(static_cast<double>(shape.cols - shape.rows) /
                             static_cast<double>(shape.cols - shape.punctured.size()));

  ThreadPool pool(s.threads);
  const auto started = std::chrono::steady_clock::now();
  std::vector<RoundResult> rounds;
  ProtographSearchResult out;
  for (;;) {
    const std::size_t batch =
        s.rounds ? std::min<std::size_t>(pool.size(), s.rounds - rounds.size()) : pool.size();
    std::vector<RoundResult> results(batch);
    const std::size_t first = rounds.size();
    pool.run(batch,
             [&](std::size_t k, unsigned) { results[k] = anneal(s, shape, quick, first + k); });
    for (auto& r : results) rounds.push_back(std::move(r));
    double best_db = kInfinite;
    std::size_t evaluations = 0;
    for (const RoundResult& r : rounds)
      best_db = std::min(best_db, r.best_db), evaluations += r.evaluations;
    if (progress) progress(rounds.size(), evaluations, best_db);
    const double elapsed =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    if (s.rounds ? rounds.size() == s.rounds : elapsed >= s.budget_seconds) break;
  }
  for (std::size_t k = 0; k < rounds.size(); ++k) {
    out.evaluations += rounds[k].evaluations;
    if (rounds[k].best_db < rounds[out.best_round].best_db) out.best_round = k;
  }
  out.rounds = rounds.size();
  out.best = rounds[out.best_round].best;
  out.threshold = protograph_threshold(out.best, ChannelKind::awgn);
  if (s.start) out.start_threshold = protograph_threshold(*s.start, ChannelKind::awgn);
  return out;
}

}  // namespace tannery
