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

// What is wrong with a point's failure anatomy as read from a file (classes within the limits,
// each example a set of a increasing positions below n when n > 0, no more failures than frame
// errors); empty when nothing is.
std::string failure_anatomy_problem(const PointResult& p, std::size_t n);

// The results file of a run as a document with the given "format".
nlohmann::json results_document(const RunRecord& run, std::string_view format = "tannery-results");
// Reads a document written by results_document with that format; throws Error naming source.
RunRecord parse_results_document(const nlohmann::json& j, const std::string& source,
                                 std::string_view format = "tannery-results");

}  // namespace tannery
