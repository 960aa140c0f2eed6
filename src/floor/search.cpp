#include "tannery/floor/search.hpp"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <map>
#include <set>
#include <tuple>

#include "tannery/base/thread_pool.hpp"
#include "tannery/error.hpp"
#include "tannery/sim/random.hpp"

namespace tannery {

std::vector<std::uint32_t> CyclicOrbits::shifted(std::span<const std::uint32_t> set,
                                                 std::size_t t) const {
  std::vector<std::uint32_t> out(set.begin(), set.end());
  if (z_ > 1 && t % z_ != 0) {
    for (auto& v : out) {
      const std::size_t block = v / z_, offset = v % z_;
      v = static_cast<std::uint32_t>(block * z_ + (offset + t) % z_);
    }
    std::sort(out.begin(), out.end());
  }
  return out;
}

std::pair<std::vector<std::uint32_t>, std::uint64_t> CyclicOrbits::canonical(
    std::span<const std::uint32_t> set) const {
  std::vector<std::uint32_t> sorted(set.begin(), set.end());
  std::sort(sorted.begin(), sorted.end());
  std::vector<std::uint32_t> best = sorted;
  std::uint64_t size = 1;
  bool period_found = false;
  for (std::size_t t = 1; t < z_; ++t) {
    auto s = shifted(sorted, t);
    if (s == sorted && !period_found) {
      size = t;  // the orbit repeats with period t (a divisor of Z)
      period_found = true;
    }
    if (s < best) best = std::move(s);
  }
  if (!period_found) size = std::max<std::size_t>(z_, 1);
  return {std::move(best), size};
}

std::size_t FloorSearchResult::smallest_codeword_weight() const {
  std::size_t w = 0;
  for (const auto& c : codewords) {
    if (w == 0 || c.variables.size() < w) w = c.variables.size();
  }
  return w;
}

std::vector<FoundStructure> FloorSearchResult::all() const {
  std::vector<FoundStructure> out = codewords;
  out.insert(out.end(), trapping_sets.begin(), trapping_sets.end());
  return out;
}

namespace {

constexpr std::uint32_t kNone = UINT32_MAX;
constexpr std::size_t kBatch = 64;  // frames per decoding task

struct Impulse {
  std::uint32_t first = 0, second = kNone;
};

// The structures found so far, one per orbit, in the order they were first found.
class Catalogue {
 public:
  Catalogue(const Code& code, std::size_t lifting) : classifier_(code), orbits_(lifting) {}

  // Adds a set (any order) unless its orbit is known or the set is neither a codeword nor an
  // absorbing set (kept anyway when a simulation's decoder failed on it); true when it was new.
  bool add(std::vector<std::uint32_t> set, StructureOrigin origin, double amplitude) {
    auto [rep, size] = orbits_.canonical(set);
    if (index_.count(rep)) return false;
    FoundStructure f;
    f.shape = classifier_.shape(rep);
    if (f.shape.cls.b > 0 && !f.shape.absorbing && origin != StructureOrigin::simulation)
      return false;
    f.variables = rep;
    f.multiplicity = size;
    f.origin = origin;
    f.amplitude = amplitude;
    index_.emplace(std::move(rep), found_.size());
    found_.push_back(std::move(f));
    return true;
  }
  const std::vector<FoundStructure>& found() const { return found_; }

 private:
  StructureClassifier classifier_;
  CyclicOrbits orbits_;
  std::map<std::vector<std::uint32_t>, std::size_t> index_;
  std::vector<FoundStructure> found_;
};

// One impulse's bisection over the amplitude ladder (decoding is taken to fail from some
// amplitude on): amplitudes below `low` decoded correctly, the one at `high` failed (high = the
// ladder's size: none yet); the next one tried is the middle. The failure kept is the one at the
// smallest failing amplitude tried.
struct ImpulseState {
  std::size_t low = 0, high = 0;
  std::size_t next() const { return (low + high) / 2; }
  bool done() const { return low >= high; }
  std::vector<std::uint32_t> wrong;  // failure's wrong bits (empty: none or too many)
  bool converged = false, too_large = false;
  double amplitude = 0;
};

// Beam search from a seed: each step takes every set one variable away from the beam's sets
// (a variable added next to an odd-degree check, or one removed), reports the absorbing sets and
// codewords among them, and keeps the `beam` best not seen before (fewest odd-degree checks,
// then fewest variables, then the smallest bits) as the next beam. Sets may get worse on the way
// (a single stuck bit, (1, 3), reaches a (3, 3) six-cycle through a (2, 4) pair).
void local_search(StructureClassifier& classifier, const Code& code,
                  std::vector<std::uint32_t> seed, unsigned steps, std::size_t beam,
                  std::uint32_t max_size, std::vector<std::vector<std::uint32_t>>& out) {
  using Set = std::vector<std::uint32_t>;
  std::sort(seed.begin(), seed.end());
  std::set<Set> seen{seed};
  std::vector<std::pair<StructureShape, Set>> current;
  current.emplace_back(classifier.shape(seed), seed);
  for (unsigned step = 0; step < steps && !current.empty(); ++step) {
    std::set<Set> candidates;
    for (const auto& [shape, set] : current) {
      for (std::uint32_t c : shape.odd_checks) {
        for (std::uint32_t v : code.check_variables(c)) {
          if (set.size() >= max_size || std::binary_search(set.begin(), set.end(), v)) continue;
          Set grown = set;
          grown.insert(std::upper_bound(grown.begin(), grown.end(), v), v);
          if (!seen.count(grown)) candidates.insert(std::move(grown));
        }
      }
      for (std::size_t i = 0; set.size() > 1 && i < set.size(); ++i) {
        Set trimmed = set;
        trimmed.erase(trimmed.begin() + static_cast<std::ptrdiff_t>(i));
        if (!seen.count(trimmed)) candidates.insert(std::move(trimmed));
      }
    }
    std::vector<std::pair<StructureShape, Set>> next;
    for (const auto& cand : candidates) {
      StructureShape shape = classifier.shape(cand);
      if (shape.absorbing || shape.cls.b == 0) out.push_back(cand);
      next.emplace_back(std::move(shape), cand);
    }
    std::sort(next.begin(), next.end(), [](const auto& x, const auto& y) {
      return std::tie(x.first.cls.b, x.first.cls.a, x.second) <
             std::tie(y.first.cls.b, y.first.cls.a, y.second);
    });
    if (next.size() > beam) next.resize(beam);
    for (const auto& [shape, set] : next) seen.insert(set);
    current = std::move(next);
  }
}

}  // namespace

FloorSearchResult floor_search(std::shared_ptr<const Code> shared,
                               const FloorSearchSettings& settings, const FloorProgress& progress) {
  const auto start = std::chrono::steady_clock::now();
  const Code& code = *shared;
  const std::size_t n = code.n();
  if (n == 0) throw Error("floor search: the code has no positions");
  if (!(settings.background > 0) || !(settings.dither >= 0 && settings.dither < 1))
    throw Error("floor search: the background must be > 0 and the dither in [0, 1)");
  if (settings.amplitudes.empty() ||
      !std::is_sorted(settings.amplitudes.begin(), settings.amplitudes.end()) ||
      !std::all_of(settings.amplitudes.begin(), settings.amplitudes.end(),
                   [](double a) { return a > 0 && a < 1e4; }))
    throw Error("floor search: impulse amplitudes must be increasing, each in (0, 10000)");
  validate(settings.decoder, code);

  FloorSearchResult result;
  result.n = n;
  const auto& qc = code.quasi_cyclic();
  result.lifting = qc ? qc->lifting : 0;
  const std::size_t z = qc ? qc->lifting : 1;
  result.impulse_order = settings.impulse_order ? settings.impulse_order : (n <= 4096 ? 2 : 1);
  if (result.impulse_order < 1 || result.impulse_order > 2)
    throw Error("floor search: impulses are single (1) or pairs (2)");

  // Impulses: one position per orbit (every position without cyclic structure), then pairs of a
  // first position with each position sharing a check with it.
  std::vector<Impulse> impulses;
  std::vector<std::uint32_t> firsts;
  for (std::size_t v = 0; v < n; v += z) firsts.push_back(static_cast<std::uint32_t>(v));
  for (auto v : firsts) impulses.push_back({v, kNone});
  if (result.impulse_order == 2) {
    const auto checks = code.edge_checks();
    for (auto v : firsts) {
      std::vector<std::uint32_t> partners;
      for (std::uint32_t e : code.variable_edges(v)) {
        for (std::uint32_t u : code.check_variables(checks[e])) {
          if (u != v && (z > 1 || u > v)) partners.push_back(u);
        }
      }
      std::sort(partners.begin(), partners.end());
      partners.erase(std::unique(partners.begin(), partners.end()), partners.end());
      for (auto u : partners) impulses.push_back({v, u});
    }
  }
  result.impulses = impulses.size();

  // The background: the noiseless all-zero word, with a fixed dither from the seed.
  std::vector<double> background(n);
  frame_uniforms(FrameId{settings.seed, 0, 0}, background);
  for (auto& b : background) b = settings.background * (1 + settings.dither * (2 * b - 1));

  ThreadPool pool(settings.threads);
  std::vector<std::unique_ptr<Decoder>> decoders;
  for (unsigned t = 0; t < pool.size(); ++t)
    decoders.push_back(make_decoder(shared, settings.decoder));

  std::vector<ImpulseState> states(impulses.size());
  for (auto& st : states) st.high = settings.amplitudes.size();
  std::atomic<std::uint64_t> done{0}, decodes{0};
  const std::uint64_t total = impulses.size();
  auto tick = [&] {
    if (progress) progress(done.load(), total, "impulses");
  };
  std::vector<std::size_t> active(impulses.size());
  for (std::size_t i = 0; i < active.size(); ++i) active[i] = i;
  // Per-thread buffers.
  struct Scratch {
    std::vector<double> llr;
    std::vector<std::uint8_t> hard;
    std::vector<FrameOutcome> outcome;
  };
  std::vector<Scratch> scratch(pool.size());
  while (!active.empty()) {
    const std::size_t tasks = (active.size() + kBatch - 1) / kBatch;
    pool.run(
        tasks,
        [&](std::size_t task, unsigned worker) {
          Scratch& s = scratch[worker];
          const std::size_t first = task * kBatch, count = std::min(kBatch, active.size() - first);
          s.llr.resize(count * n);
          s.hard.resize(count * n);
          s.outcome.resize(count);
          for (std::size_t f = 0; f < count; ++f) {
            ImpulseState& st = states[active[first + f]];
            const Impulse& imp = impulses[active[first + f]];
            double* llr = s.llr.data() + f * n;
            std::copy(background.begin(), background.end(), llr);
            const double value = settings.background * (1 - settings.amplitudes[st.next()]);
            llr[imp.first] = value;
            if (imp.second != kNone) llr[imp.second] = value;
          }
          decoders[worker]->decode(s.llr, s.hard, {}, s.outcome);
          decodes += count;
          for (std::size_t f = 0; f < count; ++f) {
            ImpulseState& st = states[active[first + f]];
            const std::uint8_t* hard = s.hard.data() + f * n;
            std::vector<std::uint32_t> wrong;
            bool too_large = false;
            for (std::size_t v = 0; v < n; ++v) {
              if (hard[v] == 0) continue;
              if (wrong.size() >= settings.max_size) {
                too_large = true;
                break;
              }
              wrong.push_back(static_cast<std::uint32_t>(v));
            }
            if (wrong.empty() && !too_large) {
              st.low = st.next() + 1;
            } else {
              st.high = st.next();
              st.amplitude = settings.amplitudes[st.high];
              st.converged = s.outcome[f].converged;
              st.too_large = too_large;
              st.wrong = too_large ? std::vector<std::uint32_t>{} : std::move(wrong);
            }
            if (st.done()) ++done;
          }
        },
        std::chrono::milliseconds(500), tick);
    std::vector<std::size_t> still;
    for (std::size_t i : active) {
      if (!states[i].done()) still.push_back(i);
    }
    active = std::move(still);
  }
  result.decodes = decodes.load();

  // The outcomes in impulse order (so the catalogue does not depend on threads).
  Catalogue catalogue(code, z);
  // Trapping-set seeds: every distinct non-codeword failure (its orbit once).
  std::vector<std::vector<std::uint32_t>> seeds;
  std::set<std::vector<std::uint32_t>> seeded;
  const CyclicOrbits orbits(z);
  auto add_seed = [&](const std::vector<std::uint32_t>& set) {
    if (seeded.insert(orbits.canonical(set).first).second) seeds.push_back(set);
  };
  for (std::size_t i = 0; i < impulses.size(); ++i) {
    const ImpulseState& st = states[i];
    if (st.too_large) ++result.larger_failures;
    if (st.wrong.empty()) {
      // An impulse the decoder always corrected still seeds the search with its own bits, so
      // the absorbing sets near every position are looked for whatever the decoder.
      if (!st.too_large) {
        ++result.unbroken;
        std::vector<std::uint32_t> bits{impulses[i].first};
        if (impulses[i].second != kNone) bits.push_back(impulses[i].second);
        std::sort(bits.begin(), bits.end());
        add_seed(bits);
      }
      continue;
    }
    const auto origin =
        impulses[i].second == kNone ? StructureOrigin::impulse : StructureOrigin::pair;
    catalogue.add(st.wrong, origin, st.amplitude);
    if (!st.converged) add_seed(st.wrong);
  }
  for (const auto& s : settings.seeds) {
    std::vector<std::uint32_t> set = s;
    std::sort(set.begin(), set.end());
    if (set.empty() || set.size() > settings.max_size) continue;
    catalogue.add(set, StructureOrigin::simulation, 0);
    add_seed(set);
  }

  // Local search from every seed, in parallel; outcomes added in seed order.
  if (settings.search_steps > 0 && !seeds.empty()) {
    std::vector<std::vector<std::vector<std::uint32_t>>> grown(seeds.size());
    std::vector<std::unique_ptr<StructureClassifier>> classifiers;
    for (unsigned t = 0; t < pool.size(); ++t)
      classifiers.push_back(std::make_unique<StructureClassifier>(code));
    std::atomic<std::uint64_t> searched{0};
    pool.run(
        seeds.size(),
        [&](std::size_t i, unsigned worker) {
          local_search(*classifiers[worker], code, seeds[i], settings.search_steps,
                       settings.search_beam, settings.max_size, grown[i]);
          ++searched;
        },
        std::chrono::milliseconds(500),
        [&] {
          if (progress) progress(searched.load(), seeds.size(), "local search");
        });
    for (const auto& sets : grown) {
      for (const auto& set : sets) catalogue.add(set, StructureOrigin::local_search, 0);
    }
  }

  for (const auto& f : catalogue.found()) {
    (f.shape.cls.b == 0 ? result.codewords : result.trapping_sets).push_back(f);
  }
  auto order = [](const FoundStructure& x, const FoundStructure& y) {
    return std::tie(x.shape.cls, x.variables) < std::tie(y.shape.cls, y.variables);
  };
  std::sort(result.codewords.begin(), result.codewords.end(), order);
  std::sort(result.trapping_sets.begin(), result.trapping_sets.end(), order);
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return result;
}

FloorScore floor_score(const Code& code) {
  FloorSearchSettings settings;
  settings.impulse_order = 1;  // single impulses: one per block column on a quasi-cyclic code
  const FloorSearchResult r = floor_search(std::make_shared<const Code>(code), settings);
  FloorScore score;
  score.codeword = r.smallest_codeword_weight();
  for (const FoundStructure& f : r.trapping_sets) {
    if (!f.shape.absorbing) continue;
    if (f.shape.cls < score.smallest) score.smallest = f.shape.cls, score.count = 0;
    if (f.shape.cls == score.smallest) score.count += f.multiplicity;
  }
  return score;
}

LiftingChoice choose_lifting_by_floor(Lifting& lift) {
  if (lift.candidates.empty()) throw Error("no candidate liftings to choose from");
  // Larger is better; no codeword found ranks above any weight.
  auto key = [](const FloorScore& s) {
    return std::tuple(s.codeword == 0 ? SIZE_MAX : s.codeword, s.smallest.a, s.smallest.b,
                      -static_cast<double>(s.count));
  };
  LiftingChoice choice;
  for (std::size_t i = 0; i < lift.candidates.size(); ++i) {
    choice.scores.push_back(floor_score(Code::from_quasi_cyclic(lift.candidates[i])));
    if (key(choice.scores[i]) > key(choice.scores[choice.chosen])) choice.chosen = i;
  }
  lift.base = lift.candidates[choice.chosen];
  lift.closed = lift.candidate_closed[choice.chosen];
  lift.girth_at_least = lift.closed[0] > 0 ? 4 : (lift.closed[1] > 0 ? 6 : 8);
  return choice;
}

}  // namespace tannery
