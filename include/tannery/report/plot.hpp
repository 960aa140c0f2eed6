// Error-rate curves as a standalone SVG: FER and/or BER against the channel parameter on a log
// axis with confidence bars, several runs overlaid with a legend, and as references the
// uncoded BPSK curve and the capacity limit for the code's rate.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "tannery/report/results.hpp"

namespace tannery {

struct PlotOptions {
  bool fer = true;
  bool ber = true;
  // Uncoded BPSK (BPSK-AWGN runs) and the capacity limit of the first run's link at its rate
  // (BPSK-AWGN, BSC, BEC; other modulations and Rayleigh: the BICM limit).
  bool references = true;
  // The finite-length limit for the first run's n and k (BPSK-AWGN, BSC, BEC, every bit sent).
  bool normal_approximation = false;
  std::optional<double> threshold;  // a vertical line at this sweep value (e.g. a DE threshold)
  // Beside each FER point, the (a, b) class of its most frequent failures (results' failure
  // anatomy; "cw" marks codewords) and the share of the point's failures it holds.
  bool failure_classes = false;
  std::string title;
};

struct PlotRun {
  std::string label;
  RunRecord run;
};

// Legend label of a run: decoder, schedule, kernel or fixed-point format, channel, code, e.g.
// "sum-product/flooding, simd kernel, awgn, regular-3-6-n2016".
std::string run_label(const RunRecord& run);

// Where a run's FER curve crosses `fer`, beside the limits at that FER, in the run's sweep
// parameter (dB for AWGN). `at`: log-linear interpolation between the last point at or above
// `fer` and the next point, both with errors; empty when the curve does not cross within the
// sweep. `normal_approximation`: where the normal approximation (Polyanskiy, Poor & Verdu 2010)
// for the bits the run sends per frame and the information bits they carry (punctured bits are
// not sent) reaches `fer` (binary-input AWGN; NaN otherwise, and for a punctured run in a file
// from before the bits sent were recorded). `limit`:
// the capacity limit at the run's rate, as the plot draws it (NaN when none applies).
struct FerCrossing {
  std::optional<double> at;
  double normal_approximation = 0;
  std::size_t sent_n = 0, sent_k = 0;  // the block it is computed for (bits sent, information)
  double limit = 0;
};
FerCrossing fer_crossing(const RunRecord& run, double fer);

// The SVG drawing; throws Error when the runs sweep different quantities (channels, Eb/N0 and
// Es/N0), which cannot share one axis.
std::string plot_svg(const std::vector<PlotRun>& runs, const PlotOptions& options);

}  // namespace tannery
