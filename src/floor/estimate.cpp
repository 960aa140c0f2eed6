#include "tannery/floor/estimate.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <numeric>
#include <tuple>

#include "tannery/base/stats.hpp"
#include "tannery/base/thread_pool.hpp"
#include "tannery/channel/channel.hpp"
#include "tannery/code/gf2.hpp"
#include "tannery/error.hpp"
#include "tannery/sim/random.hpp"

namespace tannery {

namespace {

constexpr std::size_t kBatch = 64;                // frames per task
constexpr double kMaxShift = 3;                   // bisection range of the shift
constexpr int kBisectionSteps = 14;               // shift to 3 / 2^14
constexpr std::size_t kMaxStructures = 1u << 20;  // structure index in the noise stream id
constexpr double kLeadingShare = 0.05;            // structures that must be reliable
constexpr std::uint64_t kPilotFrames = 256;     // per candidate, to choose the structures
constexpr std::uint64_t kPilotStart = std::uint64_t{1} << 44;  // frame index of the pilots
constexpr int kCrossEntropyRounds = 3;            // refinements of the shifts before the estimate
constexpr double kSmoothing = 0.7;                // weight of a round's update

// Every member of the sampled structures' orbits, and for each bit the members holding it.
class Attribution {
 public:
  Attribution(std::size_t n, std::size_t members) : by_bit_(n), overlap_(members, 0) {}
  void add_member(std::span<const std::uint32_t> set, std::size_t owner, bool representative) {
    const std::size_t id = owner_.size();
    owner_.push_back(owner);
    size_.push_back(static_cast<std::uint32_t>(set.size()));
    representative_.push_back(representative);
    for (auto v : set) by_bit_[v].push_back(static_cast<std::uint32_t>(id));
  }
  void finish() { overlap_.assign(owner_.size(), 0); }
  // The share of a failure with these wrong bits attributed to structure `owner`'s
  // representative: 1 / (members tied for the most similar) when it is one of them, similarity
  // being |W and T| / |W or T| (Jaccard's index: a failure equal to a member is its alone).
  double share(std::span<const std::uint32_t> wrong, std::size_t owner) {
    for (auto v : wrong) {
      for (auto id : by_bit_[v]) {
        if (overlap_[id]++ == 0) touched_.push_back(id);
      }
    }
    auto similarity = [&](std::uint32_t id) {
      const double common = overlap_[id];
      return common / (static_cast<double>(wrong.size() + size_[id]) - common);
    };
    double best = 0;
    for (auto id : touched_) best = std::max(best, similarity(id));
    std::size_t ties = 0;
    bool mine = false;
    for (auto id : touched_) {
      if (similarity(id) == best) {
        ++ties;
        if (owner_[id] == owner && representative_[id]) mine = true;
      }
    }
    for (auto id : touched_) overlap_[id] = 0;
    touched_.clear();
    return mine ? 1.0 / static_cast<double>(ties) : 0.0;
  }

 private:
  std::vector<std::vector<std::uint32_t>> by_bit_;
  std::vector<std::size_t> owner_;
  std::vector<std::uint32_t> size_;
  std::vector<bool> representative_;
  std::vector<std::uint32_t> overlap_, touched_;
};

// Sums of one task of biased frames (reduced in task order, so results do not depend on
// threads).
struct TaskSums {
  double w = 0, w2 = 0, we = 0, we2 = 0;  // weighted hits, their squares; same for bit error rate
  std::uint64_t hits = 0, failures = 0, bit_errors = 0, coded_bit_errors = 0, iterations = 0;
  std::vector<std::uint64_t> histogram;
};

}  // namespace

std::vector<FloorEstimatePoint> floor_estimate(std::shared_ptr<const Code> shared,
                                               const std::vector<FoundStructure>& structures,
                                               const FloorEstimateSettings& settings,
                                               const EstimateProgress& progress) {
  const Code& code = *shared;
  const std::size_t n = code.n();
  if (structures.empty()) throw Error("floor estimate: no structure to bias toward");
  if (structures.size() > kMaxStructures)
    throw Error(fmt::format("floor estimate: at most {} structures", kMaxStructures));
  if (settings.sweep.empty()) throw Error("floor estimate: the sweep is empty");
  if (settings.sweep.size() > 4096) throw Error("floor estimate: at most 4096 sweep points");
  if (settings.frames < 2) throw Error("floor estimate: at least 2 frames per structure");
  if (settings.max_structures == 0 || settings.candidates == 0)
    throw Error("floor estimate: sample at least 1 structure");
  if (settings.shift && !(*settings.shift >= 0 && *settings.shift <= 10))
    throw Error("floor estimate: the shift must be in [0, 10] signal amplitudes");
  validate(settings.decoder, code);
  for (std::size_t i = 0; i < structures.size(); ++i) {
    const auto& v = structures[i].variables;
    if (v.empty() || !std::all_of(v.begin(), v.end(), [&](auto x) { return x < n; }))
      throw Error(fmt::format("floor estimate: structure {} is empty or has a bit beyond n = {}",
                              i + 1, n));
  }
  const Encoder encoder(code);
  const std::size_t k = encoder.k();
  if (k == 0) throw Error("floor estimate: the code has no information bits");
  const double rate = static_cast<double>(k) / static_cast<double>(n);
  const auto& qc = code.quasi_cyclic();
  const CyclicOrbits orbits(qc ? qc->lifting : 1);

  // Candidates: half of them the structures with the fewest odd checks (then bits), half the
  // smallest (fewest bits plus odd checks), in the list's order.
  std::vector<std::size_t> candidates(structures.size());
  std::iota(candidates.begin(), candidates.end(), 0);
  if (candidates.size() > settings.candidates && !settings.shift) {
    auto first = [&](std::size_t count, auto key) {
      std::vector<std::size_t> all = candidates;
      std::stable_sort(all.begin(), all.end(), [&](auto x, auto y) {
        return key(structures[x].shape.cls) < key(structures[y].shape.cls);
      });
      all.resize(count);
      return all;
    };
    auto chosen = first(settings.candidates / 2, [](StructureClass c) { return std::tuple(c.b, c.a); });
    const auto smallest = first(settings.candidates - chosen.size(), [](StructureClass c) {
      return std::tuple(c.a + c.b, c.b, c.a);
    });
    chosen.insert(chosen.end(), smallest.begin(), smallest.end());
    std::sort(chosen.begin(), chosen.end());
    chosen.erase(std::unique(chosen.begin(), chosen.end()), chosen.end());
    candidates = std::move(chosen);
  }
  std::vector<std::vector<std::uint32_t>> sets(structures.size());
  std::vector<std::uint64_t> multiplicity(structures.size());
  for (auto i : candidates) {
    auto [rep, size] = orbits.canonical(structures[i].variables);
    sets[i] = std::move(rep);
    multiplicity[i] = size;
  }

  ThreadPool pool(settings.threads);
  std::vector<std::unique_ptr<Decoder>> decoders;
  for (unsigned t = 0; t < pool.size(); ++t)
    decoders.push_back(make_decoder(shared, settings.decoder));
  std::vector<std::uint8_t> is_info(n, 0);
  for (auto v : encoder.info_positions()) is_info[v] = 1;

  std::vector<FloorEstimatePoint> out;
  for (std::size_t pi = 0; pi < settings.sweep.size(); ++pi) {
    const auto start = std::chrono::steady_clock::now();
    const double ebn0 = settings.sweep[pi];
    const double sigma = awgn_sigma(ebn0, SnrMeasure::ebn0, rate);
    const double s2 = sigma * sigma;
    FloorEstimatePoint point;
    point.point.parameter = ebn0;

    // Step 1: each candidate's shift, by bisection on the noiseless word.
    std::vector<StructureBias> biases(candidates.size());
    pool.run(candidates.size(), [&](std::size_t c, unsigned worker) {
      const std::size_t i = candidates[c];
      StructureBias& bias = biases[c];
      bias.structure = i;
      std::vector<double> llr(n);
      auto fails = [&](double s) {
        std::fill(llr.begin(), llr.end(), 2 / s2);
        for (auto v : sets[i]) llr[v] = 2 * (1 - s) / s2;
        const DecodedFrame f = decoders[worker]->decode(std::span<const double>(llr));
        return std::any_of(f.bits.begin(), f.bits.end(), [](auto b) { return b != 0; });
      };
      if (settings.shift) {
        bias.shift = *settings.shift;
      } else if (fails(kMaxShift)) {
        double lo = 0, hi = kMaxShift;
        for (int step = 0; step < kBisectionSteps; ++step) {
          const double mid = (lo + hi) / 2;
          (fails(mid) ? hi : lo) = mid;
        }
        bias.shift = hi;
      }
      if (bias.shift) {
        const double a = static_cast<double>(sets[i].size());
        bias.proxy =
            static_cast<double>(multiplicity[i]) * normal_tail(*bias.shift * std::sqrt(a) / sigma);
      }
    });
    // The structures sampled (biases' indices, by structure), their per-bit shifts and the
    // attribution of failures among every member of their orbits (one copy per thread).
    std::vector<std::size_t> order;
    std::vector<std::vector<double>> shifts;
    std::vector<Attribution> attributions;
    auto plan = [&](std::vector<std::size_t> chosen) {
      order = std::move(chosen);
      std::sort(order.begin(), order.end(),
                [&](auto x, auto y) { return biases[x].structure < biases[y].structure; });
      std::size_t members = 0;
      for (auto c : order) members += multiplicity[biases[c].structure];
      Attribution attribution(n, members);
      shifts.assign(order.size(), {});
      for (std::size_t o = 0; o < order.size(); ++o) {
        const auto& rep = sets[biases[order[o]].structure];
        for (std::size_t t = 0; t < std::max<std::size_t>(orbits.lifting(), 1); ++t) {
          auto member = orbits.shifted(rep, t);
          if (t > 0 && member == rep) break;  // the orbit repeats
          attribution.add_member(member, o, t == 0);
        }
        shifts[o].assign(rep.size(), *biases[order[o]].shift);
      }
      attribution.finish();
      attributions.assign(pool.size(), attribution);
    };
    struct Scratch {
      std::vector<double> llr, gauss, logw;
      std::vector<std::uint8_t> hard;
      std::vector<FrameOutcome> outcome;
      std::vector<std::uint32_t> wrong;
    };
    std::vector<Scratch> scratch(pool.size());
    // Frames first.. of structure o's stream into t (with the hits' weighted noise per bit in
    // hit_noise when given).
    auto run_frames = [&](std::size_t o, std::uint64_t first, std::size_t count, unsigned worker,
                          TaskSums& t, std::vector<double>* hit_noise) {
      const std::size_t i = biases[order[o]].structure;
      const auto& set = sets[i];
      const auto& shift = shifts[o];
      Scratch& sc = scratch[worker];
      sc.llr.resize(count * n);
      sc.gauss.resize(n);
      sc.logw.resize(count);
      sc.hard.resize(count * n);
      sc.outcome.resize(count);
      const auto stream = static_cast<std::uint32_t>(pi << 20 | i);
      for (std::size_t f = 0; f < count; ++f) {
        frame_gaussians(FrameId{settings.seed, stream, first + f}, sc.gauss);
        double* llr = sc.llr.data() + f * n;
        for (std::size_t v = 0; v < n; ++v) llr[v] = 2 * (1 + sigma * sc.gauss[v]) / s2;
        double logw = 0;
        for (std::size_t b = 0; b < set.size(); ++b) {
          const double noise = sigma * sc.gauss[set[b]] - shift[b];
          logw += shift[b] * shift[b] + 2 * shift[b] * noise;
          llr[set[b]] = 2 * (1 + noise) / s2;
        }
        sc.logw[f] = logw / (2 * s2);
      }
      decoders[worker]->decode(sc.llr, sc.hard, {}, sc.outcome);
      if (hit_noise) hit_noise->assign(set.size(), 0);
      for (std::size_t f = 0; f < count; ++f) {
        const std::uint8_t* hard = sc.hard.data() + f * n;
        const int it = sc.outcome[f].iterations;
        t.iterations += static_cast<std::uint64_t>(it);
        if (t.histogram.size() <= static_cast<std::size_t>(it)) t.histogram.resize(it + 1);
        ++t.histogram[it];
        sc.wrong.clear();
        for (std::size_t v = 0; v < n; ++v) {
          if (hard[v]) sc.wrong.push_back(static_cast<std::uint32_t>(v));
        }
        if (sc.wrong.empty()) continue;
        ++t.failures;
        t.coded_bit_errors += sc.wrong.size();
        const double share = attributions[worker].share(sc.wrong, o);
        if (share == 0) continue;
        // Information bits wrong, averaged over the orbit: the same failure on a shifted member
        // hits other positions, and information positions are not shift-invariant.
        std::uint64_t errors = 0;
        for (std::uint64_t shift_t = 0; shift_t < multiplicity[i]; ++shift_t) {
          for (auto v : orbits.shifted(sc.wrong, shift_t)) errors += is_info[v];
        }
        const double mean_errors =
            static_cast<double>(errors) / static_cast<double>(multiplicity[i]);
        ++t.hits;
        t.bit_errors += static_cast<std::uint64_t>(std::llround(mean_errors));
        const double w = share * std::exp(sc.logw[f]);
        const double we = w * mean_errors / static_cast<double>(k);
        t.w += w, t.w2 += w * w, t.we += we, t.we2 += we * we;
        if (hit_noise) {
          // Regenerated: the scratch noise holds only the last frame's samples.
          frame_gaussians(FrameId{settings.seed, stream, first + f}, sc.gauss);
          for (std::size_t b = 0; b < set.size(); ++b)
            (*hit_noise)[b] += w * (sigma * sc.gauss[set[b]] - shift[b]);
        }
      }
    };
    // Step 2: a pilot of kPilotFrames frames per breaking candidate at its uniform shift; the
    // max_structures largest pilot estimates are sampled (ties: the rough proxy, then the list's
    // order).
    std::vector<std::size_t> breaking;
    for (std::size_t c = 0; c < biases.size(); ++c) {
      if (biases[c].shift) breaking.push_back(c);
    }
    plan(breaking);
    const std::uint64_t pilot_batches = kPilotFrames / kBatch;
    std::vector<TaskSums> pilot_sums(settings.shift ? 0 : pilot_batches * order.size());
    pool.run(pilot_sums.size(), [&](std::size_t task, unsigned worker) {
      run_frames(task / pilot_batches, kPilotStart + (task % pilot_batches) * kBatch, kBatch,
                 worker, pilot_sums[task], nullptr);
    });
    std::vector<double> pilot_estimate(order.size(), 0);
    for (std::size_t task = 0; task < pilot_sums.size(); ++task)
      pilot_estimate[task / pilot_batches] += pilot_sums[task].w;
    std::vector<std::size_t> ranked(order.size());
    std::iota(ranked.begin(), ranked.end(), 0);
    std::stable_sort(ranked.begin(), ranked.end(), [&](auto x, auto y) {
      const double mx = pilot_estimate[x] * static_cast<double>(multiplicity[biases[order[x]].structure]),
                   my = pilot_estimate[y] * static_cast<double>(multiplicity[biases[order[y]].structure]);
      return mx != my ? mx > my : biases[order[x]].proxy > biases[order[y]].proxy;
    });
    if (ranked.size() > settings.max_structures) ranked.resize(settings.max_structures);
    std::vector<std::size_t> chosen;
    for (auto r : ranked) chosen.push_back(order[r]);
    plan(chosen);

    const std::uint64_t pilot = std::max<std::uint64_t>(kBatch, settings.frames / 8);
    const std::uint64_t pilot_tasks = (pilot + kBatch - 1) / kBatch;
    const std::uint64_t tasks_per = (settings.frames + kBatch - 1) / kBatch;
    const std::uint64_t total_tasks = tasks_per * order.size();
    const std::uint64_t work =
        (settings.shift ? 0 : kCrossEntropyRounds * pilot_tasks * order.size()) + total_tasks;
    std::atomic<std::uint64_t> done{0};
    auto tick = [&] {
      if (progress) progress(pi, done.load() * kBatch, work * kBatch);
    };
    for (int round = 0; round < (settings.shift ? 0 : kCrossEntropyRounds); ++round) {
      std::vector<TaskSums> sums(pilot_tasks * order.size());
      std::vector<std::vector<double>> noise(sums.size());
      pool.run(
          sums.size(),
          [&](std::size_t task, unsigned worker) {
            const std::size_t o = task / pilot_tasks;
            const std::uint64_t first =
                (std::uint64_t{1} << 40) * static_cast<std::uint64_t>(round + 1) +
                (task % pilot_tasks) * kBatch;
            run_frames(o, first, kBatch, worker, sums[task], &noise[task]);
            ++done;
          },
          std::chrono::milliseconds(500), tick);
      for (std::size_t o = 0; o < order.size(); ++o) {
        double w = 0;
        std::vector<double> mean(shifts[o].size(), 0);
        for (std::uint64_t t = o * pilot_tasks; t < (o + 1) * pilot_tasks; ++t) {
          w += sums[t].w;
          for (std::size_t b = 0; b < mean.size(); ++b) mean[b] += noise[t][b];
        }
        if (!(w > 0)) continue;  // no hit: keep the shifts
        for (std::size_t b = 0; b < mean.size(); ++b) {
          const double update = std::clamp(-mean[b] / w, 0.0, kMaxShift);
          shifts[o][b] = kSmoothing * update + (1 - kSmoothing) * shifts[o][b];
        }
      }
    }
    std::vector<TaskSums> sums(total_tasks);
    pool.run(
        total_tasks,
        [&](std::size_t task, unsigned worker) {
          const std::size_t o = task / tasks_per;
          const std::uint64_t first = (task % tasks_per) * kBatch;
          const std::size_t count =
              static_cast<std::size_t>(std::min<std::uint64_t>(kBatch, settings.frames - first));
          run_frames(o, first, count, worker, sums[task], nullptr);
          ++done;
        },
        std::chrono::milliseconds(500), tick);

    // Step 4: estimates per structure, then the point.
    PointResult& p = point.point;
    ImportanceEstimate est;
    double fer_var = 0, ber_var = 0;
    const double frames = static_cast<double>(settings.frames);
    for (std::size_t o = 0; o < order.size(); ++o) {
      const StructureBias& bias = biases[order[o]];
      TaskSums total;
      for (std::uint64_t t = o * tasks_per; t < (o + 1) * tasks_per; ++t) {
        const TaskSums& x = sums[t];
        total.w += x.w, total.w2 += x.w2, total.we += x.we, total.we2 += x.we2;
        total.hits += x.hits, total.failures += x.failures, total.bit_errors += x.bit_errors;
        total.coded_bit_errors += x.coded_bit_errors, total.iterations += x.iterations;
        if (p.iteration_histogram.size() < x.histogram.size())
          p.iteration_histogram.resize(x.histogram.size());
        for (std::size_t h = 0; h < x.histogram.size(); ++h)
          p.iteration_histogram[h] += x.histogram[h];
      }
      StructureEstimate se;
      se.variables = sets[bias.structure];
      se.cls = structures[bias.structure].shape.cls;
      se.multiplicity = multiplicity[bias.structure];
      se.shifts = shifts[o];
      se.frames = settings.frames;
      se.hits = total.hits;
      const double m = static_cast<double>(se.multiplicity);
      auto sd = [&](double sum, double squares) {
        const double mean = sum / frames;
        return std::sqrt(std::max(0.0, (squares / frames - mean * mean) / (frames - 1)));
      };
      se.fer = m * total.w / frames;
      se.fer_sd = m * sd(total.w, total.w2);
      se.ber = m * total.we / frames;
      se.ber_sd = m * sd(total.we, total.we2);
      se.ess = total.w2 > 0 ? total.w * total.w / total.w2 : 0;
      est.fer += se.fer, est.ber += se.ber;
      fer_var += se.fer_sd * se.fer_sd, ber_var += se.ber_sd * se.ber_sd;
      p.frames += settings.frames;
      p.frame_errors += total.failures;
      p.bit_errors += total.bit_errors;
      p.coded_bit_errors += total.coded_bit_errors;
      p.iterations += total.iterations;
      est.structures.push_back(std::move(se));
    }
    est.fer_sd = std::sqrt(fer_var);
    est.ber_sd = std::sqrt(ber_var);
    bool first = true;
    for (const auto& se : est.structures) {
      if (est.fer > 0 && se.fer >= kLeadingShare * est.fer) {
        est.ess = first ? se.ess : std::min(est.ess, se.ess);
        first = false;
      }
    }
    est.reliable = est.fer > 0 && est.ess >= settings.min_ess;
    p.bits = p.frames * k;
    p.coded_bits = p.frames * n;
    p.chunks = total_tasks;
    p.complete = true;
    p.stop_reason = "importance-sampled";
    p.importance = std::move(est);
    p.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    point.biases = std::move(biases);
    out.push_back(std::move(point));
  }
  return out;
}

}  // namespace tannery
