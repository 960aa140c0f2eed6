// Error-rate curves as a standalone SVG: FER and/or BER against the channel parameter on a log
// axis with confidence bars, several runs overlaid with a legend, and as references the
// uncoded BPSK curve and the capacity limit for the code's rate.
#pragma once

#include <string>
#include <vector>

#include "tannery/report/results.hpp"

namespace tannery {

struct PlotOptions {
  bool fer = true;
  bool ber = true;
  bool references = true;  // uncoded BPSK (AWGN) and the Shannon limit of the first run's rate
  std::string title;
};

struct PlotRun {
  std::string label;
  RunRecord run;
};

std::string plot_svg(const std::vector<PlotRun>& runs, const PlotOptions& options);

}  // namespace tannery
