#include "tannery/report/compare.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <nlohmann/json.hpp>

#include "tannery/error.hpp"

namespace tannery {

namespace {

bool same(double a, double b) {
  return std::abs(a - b) <= 1e-9 * std::max(1.0, std::abs(a));
}

// Failed-frame indices are usable for pairing only when none was dropped by the cap.
bool has_all_failures(const PointResult& p) {
  return p.failed_frames.size() == p.frame_errors;
}

// A counted point's BER and the variance of that estimate from per-frame (clustered) bit errors.
std::pair<double, double> ber_moments(const PointResult& p) {
  const double nf = static_cast<double>(p.frames),
               k = p.frames ? static_cast<double>(p.bits) / nf : 1;
  const double mean = static_cast<double>(p.bit_errors) / nf;
  const double var =
      p.frames > 1 ? std::max(0.0, (p.bit_error_squares - nf * mean * mean) / (nf - 1)) : 0;
  return {mean / k, var / nf / (k * k)};
}

// One-sided z-test that the current BER is larger, with per-frame (clustered) variances.
double ber_p(const PointResult& cur, const PointResult& ref) {
  const auto moments = ber_moments;
  if (cur.frames == 0 || ref.frames == 0) return 1;
  const auto [bc, vc] = moments(cur);
  const auto [br, vr] = moments(ref);
  if (vc + vr <= 0) return bc > br ? 0.0 : 1.0;
  return normal_tail((bc - br) / std::sqrt(vc + vr));
}

std::string setting_differences(const RunRecord& a, const RunRecord& b) {
  std::vector<std::string> d;
  if (a.code.matrix_sha256 != b.code.matrix_sha256) d.push_back("code (matrix SHA-256)");
  if (!(a.config.decoder == b.config.decoder)) {
    d.push_back(
        fmt::format("decoder ({} vs {})", describe(a.config.decoder), describe(b.config.decoder)));
  }
  if (!(a.config.channel == b.config.channel)) d.push_back("channel settings");
  if (a.config.seed != b.config.seed)
    d.push_back(fmt::format("seed ({} vs {})", a.config.seed, b.config.seed));
  if (a.config.all_zero != b.config.all_zero) d.push_back("all-zero mode");
  if (a.config.chunk_frames != b.config.chunk_frames) d.push_back("chunk size");
  if (a.tool_version != b.tool_version)
    d.push_back(fmt::format("tool version ({} vs {})", a.tool_version, b.tool_version));
  std::string out;
  for (const auto& s : d) out += (out.empty() ? "" : ", ") + s;
  return out;
}

// One-sided z-test that the current estimate is larger, for points where either side is
// importance-sampled: standard errors from the estimates (binomial ones for counted points).
double estimate_p(double current, double current_sd, double reference, double reference_sd) {
  const double sd = std::sqrt(current_sd * current_sd + reference_sd * reference_sd);
  if (!(sd > 0)) return current > reference ? 0.0 : 1.0;
  return normal_tail((current - reference) / sd);
}

std::pair<double, double> fer_and_sd(const PointResult& p) {
  if (p.importance) return {p.importance->fer, p.importance->fer_sd};
  const double f = p.fer(), n = static_cast<double>(std::max<std::uint64_t>(p.frames, 1));
  return {f, std::sqrt(f * (1 - f) / n)};
}

std::pair<double, double> ber_and_sd(const PointResult& p) {
  if (p.importance) return {p.importance->ber, p.importance->ber_sd};
  if (p.frames == 0) return {0, 0};
  const auto [ber, variance] = ber_moments(p);
  return {ber, std::sqrt(variance)};
}

}  // namespace

std::optional<double> fer_crossing(const std::vector<PointResult>& points, double target,
                                   bool higher_is_better) {
  std::vector<const PointResult*> sorted;
  for (const auto& p : points) sorted.push_back(&p);
  std::sort(sorted.begin(), sorted.end(), [&](auto* a, auto* b) {
    return higher_is_better ? a->parameter < b->parameter : a->parameter > b->parameter;
  });
  for (std::size_t i = 1; i < sorted.size(); ++i) {
    const PointResult &a = *sorted[i - 1], &b = *sorted[i];
    if (a.fer() >= target && b.fer() < target) {
      if (b.fer() <= 0) return b.parameter;  // no error at b: the crossing is at b at the latest
      const double la = std::log10(a.fer()), lb = std::log10(b.fer()), lt = std::log10(target);
      return a.parameter + (b.parameter - a.parameter) * (la - lt) / (la - lb);
    }
  }
  return std::nullopt;
}

namespace {

// One-sided Cochran-Mantel-Haenszel test over 2x2 tables (errors/frames of the current and the
// reference run per point): is the current run's error probability larger at the points taken
// together? A normal approximation (Mantel and Haenszel 1959, from memory); 1 when no point has
// variance.
double mantel_haenszel_p(const std::vector<PointComparison>& points) {
  double excess = 0, variance = 0;
  for (const auto& pc : points) {
    const double a = static_cast<double>(pc.current.frame_errors);
    const double n1 = static_cast<double>(pc.current.frames),
                 n2 = static_cast<double>(pc.reference.frames);
    const double m1 = a + static_cast<double>(pc.reference.frame_errors), total = n1 + n2;
    if (total < 2) continue;
    excess += a - n1 * m1 / total;
    variance += n1 * n2 * m1 * (total - m1) / (total * total * (total - 1));
  }
  if (variance <= 0) return excess > 0 ? 0.0 : 1.0;
  return normal_tail(excess / std::sqrt(variance));
}

// Whether either run has an importance-sampled point (their counts are of biased frames).
bool any_importance_sampled(const Comparison& c) {
  return std::any_of(c.points.begin(), c.points.end(), [](const PointComparison& pc) {
    return pc.current.importance || pc.reference.importance;
  });
}

}  // namespace

Comparison compare_runs(const RunRecord& cur, const RunRecord& ref, const CompareOptions& o) {
  if (cur.config.channel.kind != ref.config.channel.kind ||
      cur.config.channel.measure != ref.config.channel.measure) {
    throw Error("the two runs sweep different channel parameters; nothing to compare");
  }
  if (!cur.code.matrix_sha256.empty() && !ref.code.matrix_sha256.empty() &&
      cur.code.matrix_sha256 != ref.code.matrix_sha256) {
    throw Error(fmt::format(
        "the two runs simulate different codes (matrix SHA-256 {}... vs {}...); nothing to compare",
        cur.code.matrix_sha256.substr(0, 12), ref.code.matrix_sha256.substr(0, 12)));
  }
  Comparison c;
  c.unit = snr_swept(cur.config.channel.kind) ? "dB" : parameter_key(cur.config.channel);
  const std::string differences = setting_differences(cur, ref);
  if (!differences.empty()) c.warnings.push_back("settings differ: " + differences);
  for (const auto& p : cur.points) {
    auto it = std::find_if(ref.points.begin(), ref.points.end(),
                           [&](const auto& r) { return same(r.parameter, p.parameter); });
    if (it == ref.points.end()) {
      c.only_current.push_back(p.parameter);
      continue;
    }
    PointComparison pc;
    pc.parameter = p.parameter;
    pc.current = p;
    pc.reference = *it;
    c.points.push_back(std::move(pc));
  }
  for (const auto& r : ref.points) {
    if (std::none_of(cur.points.begin(), cur.points.end(),
                     [&](const auto& p) { return same(r.parameter, p.parameter); })) {
      c.only_reference.push_back(r.parameter);
    }
  }
  if (c.points.empty()) throw Error("the two runs have no sweep point in common");

  // Frames depend only on (seed, point, frame), not on the chunk size: the same seed and data
  // mode mean the same frames.
  const bool same_seed =
      cur.config.seed == ref.config.seed && cur.config.all_zero == ref.config.all_zero;
  const bool pairable =
      same_seed && std::all_of(c.points.begin(), c.points.end(), [](const PointComparison& p) {
        return has_all_failures(p.current) && has_all_failures(p.reference);
      });
  const bool estimated = any_importance_sampled(c);
  c.mode = o.mode;
  if (estimated && c.mode != CompareMode::automatic && c.mode != CompareMode::unpaired)
    throw Error(
        "importance-sampled points can only be compared unpaired (their counts are of biased "
        "frames)");
  if (estimated) c.mode = CompareMode::unpaired;
  if (c.mode == CompareMode::automatic) {
    c.mode = same_seed && differences.empty()
                 ? CompareMode::exact
                 : (pairable ? CompareMode::paired : CompareMode::unpaired);
  }
  if (c.mode == CompareMode::paired && !pairable) {
    throw Error(
        "a paired comparison needs the same seed and data mode and complete failed-frame lists in "
        "both files");
  }
  // Two tests per point and, with more than one point, one over all points together.
  const bool combined = c.mode != CompareMode::exact && c.points.size() > 1 && !estimated;
  c.tests = 2 * c.points.size() + (combined ? 1 : 0);
  c.level = (1 - o.confidence) / static_cast<double>(c.tests);
  for (auto& pc : c.points) {
    const PointResult &p = pc.current, &r = pc.reference;
    pc.p_ber = ber_p(p, r);
    if (p.importance || r.importance) {
      pc.test = "z (importance-sampled)";
      const auto [fc, sfc] = fer_and_sd(p);
      const auto [fr, sfr] = fer_and_sd(r);
      const auto [bc, sbc] = ber_and_sd(p);
      const auto [br, sbr] = ber_and_sd(r);
      pc.p_fer = estimate_p(fc, sfc, fr, sfr);
      pc.p_ber = estimate_p(bc, sbc, br, sbr);
      pc.regression = pc.p_fer < c.level || pc.p_ber < c.level;
      pc.note = pc.regression ? (pc.p_fer < c.level ? "FER worse" : "BER worse")
                              : "no evidence of a regression";
      continue;
    }
    if (c.mode == CompareMode::exact) {
      pc.test = "exact";
      const bool equal = p.frames == r.frames && p.frame_errors == r.frame_errors &&
                         p.bit_errors == r.bit_errors &&
                         p.iteration_histogram == r.iteration_histogram;
      // The same frames decoded twice: any higher error rate is a real loss, not noise.
      const bool worse = p.fer() > r.fer() || p.ber() > r.ber();
      pc.regression = !equal && worse;
      pc.note = equal ? "identical counts"
                      : (worse ? "counts differ (worse)" : "counts differ (better or equal rates)");
      continue;
    }
    if (c.mode == CompareMode::paired) {
      pc.test = "paired McNemar";
      pc.overlap = std::min(p.frames, r.frames);
      auto within = [&](const std::vector<std::uint64_t>& v) {
        std::vector<std::uint64_t> out;
        for (auto f : v)
          if (f < pc.overlap) out.push_back(f);
        return out;
      };
      const auto a = within(p.failed_frames), b = within(r.failed_frames);
      std::vector<std::uint64_t> only_a, only_b;
      std::set_difference(a.begin(), a.end(), b.begin(), b.end(), std::back_inserter(only_a));
      std::set_difference(b.begin(), b.end(), a.begin(), a.end(), std::back_inserter(only_b));
      pc.only_current = only_a.size();
      pc.only_reference = only_b.size();
      pc.p_fer = binomial_half_upper_p(pc.only_current, pc.only_current + pc.only_reference);
    } else {
      pc.test = "Fisher exact";
      pc.p_fer = fisher_greater_p(p.frame_errors, p.frames, r.frame_errors, r.frames);
    }
    pc.regression = pc.p_fer < c.level || pc.p_ber < c.level;
    pc.note = pc.regression ? (pc.p_fer < c.level ? "FER worse" : "BER worse")
                            : "no evidence of a regression";
  }
  if (combined) {
    if (c.mode == CompareMode::paired) {
      c.combined_test = "paired McNemar over all points";
      std::uint64_t a = 0, b = 0;
      for (const auto& pc : c.points) a += pc.only_current, b += pc.only_reference;
      c.p_combined = binomial_half_upper_p(a, a + b);
    } else {
      c.combined_test = "Cochran-Mantel-Haenszel over all points";
      c.p_combined = mantel_haenszel_p(c.points);
    }
  }
  if (o.tolerance) {
    // The tolerance alone decides; the point tests are shown for information.
    for (auto& pc : c.points) pc.regression = false;
    const bool higher_better = snr_swept(cur.config.channel.kind);
    const std::string unit = c.unit == "dB" ? " dB" : "";
    c.current_crossing = fer_crossing(cur.points, o.at_fer, higher_better);
    c.reference_crossing = fer_crossing(ref.points, o.at_fer, higher_better);
    if (!c.reference_crossing) {
      throw Error(fmt::format(
          "cannot apply the tolerance: the reference curve does not cross FER {:g} between its "
          "points",
          o.at_fer));
    }
    if (!c.current_crossing) {
      const bool never_reaches = std::all_of(cur.points.begin(), cur.points.end(),
                                             [&](const auto& p) { return p.fer() >= o.at_fer; });
      const bool always_below = std::all_of(cur.points.begin(), cur.points.end(),
                                            [&](const auto& p) { return p.fer() < o.at_fer; });
      if (never_reaches) {
        c.regression = true;
        c.reasons.push_back(
            fmt::format("the current curve never reaches FER {:g} in its sweep (the reference does "
                        "at {:.4f}{})",
                        o.at_fer, *c.reference_crossing, unit));
      } else if (always_below) {
        c.reasons.push_back(fmt::format(
            "the current curve is below FER {:g} at every point (the reference reaches it at "
            "{:.4f}{})",
            o.at_fer, *c.reference_crossing, unit));
      } else {
        throw Error(fmt::format(
            "cannot apply the tolerance: the current curve does not cross FER {:g} once between "
            "its points",
            o.at_fer));
      }
    } else {
      c.shift = higher_better ? *c.current_crossing - *c.reference_crossing
                              : *c.reference_crossing - *c.current_crossing;
      c.regression = *c.shift > *o.tolerance;
      c.reasons.push_back(fmt::format(
          "at FER {:g} the current curve is {:+.4f}{} behind the reference (tolerance {:g}{})",
          o.at_fer, *c.shift, unit, *o.tolerance, unit));
    }
  } else {
    for (const auto& pc : c.points) {
      if (pc.regression) {
        c.regression = true;
        c.reasons.push_back(fmt::format("point {:g}: {}", pc.parameter, pc.note));
      }
    }
    if (c.p_combined && *c.p_combined < c.level) {
      c.regression = true;
      c.reasons.push_back(fmt::format("all points together: worse ({}, p = {:.3g})",
                                      c.combined_test, *c.p_combined));
    }
  }
  // A point the reference has and the current run lacks was not checked: never a pass.
  for (double p : c.only_reference) {
    c.regression = true;
    c.reasons.push_back(
        fmt::format("point {:g} of the reference is missing from the current run", p));
  }
  return c;
}

std::string comparison_text(const Comparison& c, const ChannelSpec& channel,
                            const CompareOptions& o) {
  std::string out;
  for (const auto& w : c.warnings) out += "warning: " + w + "\n";
  out += fmt::format(
      "test: {} ({}), one-sided, level {:.3g} per test ({:g}% confidence, Bonferroni over {} "
      "tests)\n",
      name_of(c.mode),
      c.mode == CompareMode::exact
          ? "counts must match"
          : (c.mode == CompareMode::paired
                 ? "McNemar on discordant frames"
                 : (any_importance_sampled(c)
                        ? "z on importance-sampled estimates, Fisher exact on "
                          "counted FER, clustered z on BER"
                        : "Fisher exact on FER, clustered z on BER")),
      c.level, o.confidence * 100, c.tests);
  out += fmt::format("{:>9}  {:>31}  {:>31}  {:>16}  {:>9}  {:>9}  {}\n",
                     parameter_heading(channel), "current FER [interval]",
                     "reference FER [interval]", "discordant c/r", "p(FER)", "p(BER)", "verdict");
  for (const auto& pc : c.points) {
    const PointStats a = point_stats(pc.current, o.confidence),
                     b = point_stats(pc.reference, o.confidence);
    const std::string discordant =
        pc.test == "paired McNemar"
            ? fmt::format("{}/{} of {}", pc.only_current, pc.only_reference, pc.overlap)
            : "-";
    out += fmt::format(
        "{:>9.4g}  {:9.3e} [{:9.3e},{:9.3e}]  {:9.3e} [{:9.3e},{:9.3e}]  {:>16}  {:>9.3g}  "
        "{:>9.3g}  {}\n",
        pc.parameter, pc.current.fer(), a.fer.low, a.fer.high, pc.reference.fer(), b.fer.low,
        b.fer.high, discordant, pc.p_fer, pc.p_ber,
        o.tolerance ? pc.note + " (not used: tolerance mode)"
                    : (pc.regression ? "REGRESSION: " + pc.note : pc.note));
  }
  if (c.p_combined) {
    out += fmt::format("all points: {}, p = {:.3g}{}\n", c.combined_test, *c.p_combined,
                       o.tolerance ? " (not used: tolerance mode)" : "");
  }
  for (double p : c.only_current) out += fmt::format("{:>9.4g}  only in the current run\n", p);
  for (double p : c.only_reference) out += fmt::format("{:>9.4g}  only in the reference\n", p);
  for (const auto& r : c.reasons) out += r + "\n";
  out += c.regression ? "result: REGRESSION\n" : "result: no regression\n";
  return out;
}

std::string comparison_json(const Comparison& c, const CompareOptions& o) {
  nlohmann::json j;
  j["mode"] = name_of(c.mode);
  j["confidence"] = o.confidence;
  j["level_per_test"] = c.level;
  j["regression"] = c.regression;
  j["warnings"] = c.warnings;
  j["reasons"] = c.reasons;
  j["only_current"] = c.only_current;
  j["only_reference"] = c.only_reference;
  j["tests"] = c.tests;
  if (c.p_combined) j["combined"] = {{"test", c.combined_test}, {"p", *c.p_combined}};
  j["points"] = nlohmann::json::array();
  for (const auto& pc : c.points) {
    j["points"].push_back({{"parameter", pc.parameter},
                           {"test", pc.test},
                           {"current_fer", pc.current.fer()},
                           {"reference_fer", pc.reference.fer()},
                           {"current_ber", pc.current.ber()},
                           {"reference_ber", pc.reference.ber()},
                           {"p_fer", pc.p_fer},
                           {"p_ber", pc.p_ber},
                           {"only_current", pc.only_current},
                           {"only_reference", pc.only_reference},
                           {"overlap", pc.overlap},
                           {"regression", pc.regression},
                           {"note", pc.note}});
  }
  if (c.shift) {
    j["tolerance"] = {{"at_fer", o.at_fer},
                      {"allowed", *o.tolerance},
                      {"unit", c.unit},
                      {"shift", *c.shift},
                      {"current_crossing", *c.current_crossing},
                      {"reference_crossing", *c.reference_crossing}};
  }
  return j.dump(1) + "\n";
}

}  // namespace tannery
