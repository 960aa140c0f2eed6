// Comparing a run against a stored reference curve, with statistics instead of eyeballing.
//
// Modes: exact (same seed, settings and build: counts should be identical; differing counts are a
// regression only when an error rate is higher), paired (same seed, failed-frame indices
// recorded: exact McNemar test on the frames only one run failed), unpaired (otherwise: Fisher's
// exact test on the FER, a clustered z-test on the BER). Per-point tests are one-sided ("is the
// current run worse?"); with several points one more test takes them together (paired: McNemar
// on the summed discordant counts; unpaired: Cochran-Mantel-Haenszel), so a small loss at every
// point is caught. All run at level (1 - confidence) divided by the number of tests (Bonferroni),
// so the false-alarm rate of a whole comparison stays at or below its nominal level. With a
// tolerance, the verdict is instead whether the current curve reaches the target FER more than
// that far (in sweep units, dB for AWGN) behind the reference; a current curve that never
// reaches it is a regression. Points of the reference missing from the current run fail.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "tannery/names.hpp"
#include "tannery/report/results.hpp"

namespace tannery {

enum class CompareMode { automatic, exact, paired, unpaired };
template <>
struct Names<CompareMode> {
  static constexpr std::string_view setting = "mode";
  static constexpr std::pair<CompareMode, std::string_view> table[] = {
      {CompareMode::automatic, "automatic"},
      {CompareMode::exact, "exact"},
      {CompareMode::paired, "paired"},
      {CompareMode::unpaired, "unpaired"}};
};

struct CompareOptions {
  double confidence = 0.95;
  CompareMode mode = CompareMode::automatic;
  std::optional<double> tolerance;  // sweep units (dB for AWGN)
  double at_fer = 1e-2;             // FER at which the tolerance is measured
};

struct PointComparison {
  double parameter = 0;
  PointResult current, reference;
  std::string test;             // "exact", "paired McNemar", "Fisher exact"
  double p_fer = 1, p_ber = 1;  // one-sided p-values that the current run is worse
  std::uint64_t overlap = 0, only_reference = 0, only_current = 0;  // paired test
  bool regression = false;
  std::string note;
};

struct Comparison {
  CompareMode mode = CompareMode::unpaired;
  double level = 0.05;  // per-test significance level after the Bonferroni split
  std::vector<std::string> warnings;
  std::vector<PointComparison> points;
  std::vector<double> only_current, only_reference;  // parameters present in one file only
  std::size_t tests = 0;                             // tests sharing the level (Bonferroni)
  std::string combined_test;         // over all points together (more than one point)
  std::optional<double> p_combined;  // its one-sided p-value
  std::string unit;                  // of the sweep and the shift: "dB", "p" or "epsilon"
  std::optional<double> current_crossing, reference_crossing, shift;
  bool regression = false;
  std::vector<std::string> reasons;
};

// Throws Error when the runs cannot be compared (different channels or codes, no common point,
// or a tolerance check on a reference curve that does not cross the target FER).
Comparison compare_runs(const RunRecord& current, const RunRecord& reference,
                        const CompareOptions& options);

// Parameter at which a curve crosses the target FER, interpolating log10 FER linearly between
// the two points around the crossing; empty when it does not cross.
std::optional<double> fer_crossing(const std::vector<PointResult>& points, double target,
                                   bool higher_is_better);

std::string comparison_text(const Comparison& c, const ChannelSpec& channel,
                            const CompareOptions& options);
std::string comparison_json(const Comparison& c, const CompareOptions& options);

}  // namespace tannery
