// Results files as JSON documents, for the readers and writers of files that extend them
// (shard files: tannery/report/shards.hpp). Not installed.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

#include "tannery/report/results.hpp"

namespace tannery {

// Text as JSON; throws Error naming source ("not valid JSON (byte B)").
nlohmann::json parse_json_text(std::string_view text, const std::string& source);

// The results file of a run as a document with the given "format".
nlohmann::json results_document(const RunRecord& run, std::string_view format = "tannery-results");
// Reads a document written by results_document with that format; throws Error naming source.
RunRecord parse_results_document(const nlohmann::json& j, const std::string& source,
                                 std::string_view format = "tannery-results");

}  // namespace tannery
