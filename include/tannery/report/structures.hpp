// Structures files: what `tannery floor search` found in a code (schema "tannery-structures",
// version 1), the input of `tannery floor estimate`.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "tannery/floor/estimate.hpp"
#include "tannery/floor/search.hpp"
#include "tannery/report/results.hpp"

namespace tannery {

inline constexpr int kStructuresVersion = 1;

struct StructuresRecord {
  std::string tool_version, created;
  CodeRecord code;
  DecoderSettings decoder;
  FloorSearchSettings settings;  // seeds are not recorded (they are in the structures found)
  FloorSearchResult result;
};

// The record of a search just run on the code `source` names (its provenance, this build).
StructuresRecord new_structures_record(const std::string& source, const Code& code,
                                       const FloorSearchSettings& settings,
                                       FloorSearchResult result);
// The results document of an importance-sampled estimate (all-zero word, chunks of 64 frames:
// the estimate's tasks; threads as used).
RunRecord estimate_run_record(const std::string& source, const Code& code,
                              const FloorEstimateSettings& settings, double confidence,
                              const std::vector<FloorEstimatePoint>& points);

std::string structures_json(const StructuresRecord& record);
// Parses a structures file for `code` (its matrix must be the one searched: Error otherwise,
// naming the source); each structure's shape is recomputed from the code.
StructuresRecord parse_structures_json(std::string_view text, const std::string& source,
                                       const Code& code);
// The report printed by `floor search`: codeword weights, then (a, b) classes with their counts.
std::string structures_text(const FloorSearchResult& result, std::size_t examples = 1);

}  // namespace tannery
