// Shard files and their merge: a run split into N independent jobs (a job array on a cluster
// without MPI). Shard I computes the chunks c = I (mod N) of every point to its own budget
// (Simulator::run_shard) and keeps every chunk's counts; merge_shards walks each point's chunks
// in order 0, 1, 2, ..., taking chunk c from shard c mod N, and applies the run's stop rules
// after each, so the merged results equal a single run's whenever every shard reached far
// enough. Otherwise it names the shard that must continue (its file resumes it).
//
// A shard file is a results document with "format": "tannery-shard", the shard's own totals
// per point (failed frames only in the chunk records), a "shard" object {index, count, frames,
// frame_errors} and per point "chunk_counts": one array per chunk, fields as "chunk_fields".
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "tannery/report/results.hpp"

namespace tannery {

struct ShardRecord {
  RunRecord run;  // settings, code and the shard's own totals per point
  ShardPlan plan;
  std::vector<ShardPoint> points;  // totals (as in run.points) and chunk counts
};

std::string shard_json(const ShardRecord& shard);
// Throws Error naming the source and the problem.
ShardRecord parse_shard_json(std::string_view text, const std::string& source);
// True when text is a shard file (its "format"), without checking the rest.
bool is_shard_json(std::string_view text);

// The default plan of shard index/count for a run: frames = max_frames / count and
// frame_errors = E/count + 2 sqrt(E/count) + 2 (E the run's frame-error target) per point, so
// the shards together usually pass the run's target without computing much beyond it.
ShardPlan default_shard_plan(const StopRules& stop, std::uint32_t index, std::uint32_t count);

struct MergeResult {
  RunRecord run;  // the merged run (interrupted when a point could not be completed)
  // Why the merge stopped short, one line per shard that must continue, naming its file.
  std::vector<std::string> shortfalls;
};
// Merges the shards (files names them in messages). Throws Error when they do not belong to one
// run: other settings, seed, code, build or number of shards, or a shard given twice.
MergeResult merge_shards(const std::vector<ShardRecord>& shards,
                         const std::vector<std::string>& files);

}  // namespace tannery
