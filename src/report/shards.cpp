#include "tannery/report/shards.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <nlohmann/json.hpp>

#include "results_document.hpp"
#include "tannery/error.hpp"

namespace tannery {

namespace {

using json = nlohmann::json;

constexpr const char* kFormat = "tannery-shard";

// The fields of a chunk record, in order; the histogram as (iterations, frames) pairs.
const std::vector<std::string> kChunkFields = {
    "chunk",
    "frames",
    "frame_errors",
    "bit_errors",
    "bits",
    "coded_bit_errors",
    "coded_bits",
    "undetected_errors",
    "bit_error_squares",
    "iteration_histogram_pairs",
    "failed_frames",
    "failure_classes (a, b, frames, oscillating, examples)",
    "larger_failures"};

json chunk_record(const ChunkCounts& c) {
  const PointResult& p = c.counts;
  json pairs = json::array();
  for (std::size_t it = 0; it < p.iteration_histogram.size(); ++it) {
    if (p.iteration_histogram[it] > 0)
      pairs.push_back(it), pairs.push_back(p.iteration_histogram[it]);
  }
  json classes = json::array();
  for (const auto& [cls, count] : p.failure_classes)
    classes.push_back(json::array({cls.a, cls.b, count.frames, count.oscillating, count.examples}));
  return json::array({c.chunk, p.frames, p.frame_errors, p.bit_errors, p.bits, p.coded_bit_errors,
                      p.coded_bits, p.undetected_errors, p.bit_error_squares, pairs,
                      p.failed_frames, classes, p.larger_failures});
}

ChunkCounts parse_chunk_record(const json& a, const std::string& where) {
  auto bad = [&](const std::string& what) { throw Error(fmt::format("{}: {}", where, what)); };
  if (!a.is_array() || a.size() != kChunkFields.size())
    bad(fmt::format("a chunk record must be an array of {} values", kChunkFields.size()));
  auto count = [&](std::size_t i) {
    if (!a[i].is_number_unsigned()) bad(fmt::format("'{}' is not a count", kChunkFields[i]));
    return a[i].get<std::uint64_t>();
  };
  ChunkCounts c;
  PointResult& p = c.counts;
  c.chunk = count(0);
  p.frames = count(1);
  p.frame_errors = count(2);
  p.bit_errors = count(3);
  p.bits = count(4);
  p.coded_bit_errors = count(5);
  p.coded_bits = count(6);
  p.undetected_errors = count(7);
  if (!a[8].is_number() || !(a[8].get<double>() >= 0) || !std::isfinite(a[8].get<double>()))
    bad("bit_error_squares must be a finite number >= 0");
  p.bit_error_squares = a[8].get<double>();
  const json& pairs = a[9];
  if (!pairs.is_array() || pairs.size() % 2 != 0)
    bad("the iteration histogram must be (iterations, frames) pairs");
  std::uint64_t histogram_frames = 0;
  for (std::size_t i = 0; i < pairs.size(); i += 2) {
    if (!pairs[i].is_number_unsigned() || !pairs[i + 1].is_number_unsigned())
      bad("the iteration histogram holds a value that is not a count");
    const auto it = pairs[i].get<std::uint64_t>(), frames = pairs[i + 1].get<std::uint64_t>();
    if (it > 100'000 || frames > p.frames - std::min(p.frames, histogram_frames))
      bad("the iteration histogram does not fit the chunk's frames");
    if (p.iteration_histogram.size() <= it) p.iteration_histogram.resize(it + 1, 0);
    p.iteration_histogram[it] += frames;
    p.iterations += it * frames;
    histogram_frames += frames;
  }
  if (histogram_frames != p.frames) bad("the iteration histogram does not count every frame");
  if (p.frame_errors > p.frames || p.bit_errors > p.bits || p.coded_bit_errors > p.coded_bits ||
      p.undetected_errors > p.frame_errors)
    bad("more errors than trials");
  const json& failed = a[10];
  if (!failed.is_array()) bad("failed_frames is not a list");
  for (const json& f : failed) {
    if (!f.is_number_unsigned()) bad("failed_frames holds a value that is not a frame index");
    const auto frame = f.get<std::uint64_t>();
    if (!p.failed_frames.empty() && frame <= p.failed_frames.back())
      bad("failed frames are not listed in increasing order without repeats");
    p.failed_frames.push_back(frame);
  }
  if (p.failed_frames.size() > p.frame_errors) bad("more failed frames than frame errors");
  const json& classes = a[11];
  if (!classes.is_array()) bad("failure_classes is not a list");
  for (const json& cj : classes) {
    if (!cj.is_array() || cj.size() != 5 || !cj[0].is_number_unsigned() ||
        !cj[1].is_number_unsigned() || !cj[2].is_number_unsigned() || !cj[3].is_number_unsigned() ||
        !cj[4].is_array())
      bad("a failure class must be [a, b, frames, oscillating, examples]");
    if (cj[0].get<std::uint64_t>() > kAnatomyMaxBits || cj[1].get<std::uint64_t>() >= (1ull << 32))
      bad("a failure class is not valid");
    const StructureClass key{cj[0].get<std::uint32_t>(), cj[1].get<std::uint32_t>()};
    FailureClassCount cls;
    cls.frames = cj[2].get<std::uint64_t>();
    cls.oscillating = cj[3].get<std::uint64_t>();
    for (const json& set : cj[4]) {
      if (!set.is_array()) bad("a failure class's example is not a list of positions");
      std::vector<std::uint32_t>& positions = cls.examples.emplace_back();
      for (const json& v : set) {
        if (!v.is_number_unsigned() || v.get<std::uint64_t>() >= (1ull << 32))
          bad("a failure class's example is not a list of positions");
        positions.push_back(v.get<std::uint32_t>());
      }
    }
    if (!p.failure_classes.emplace(key, std::move(cls)).second)
      bad(fmt::format("failure class ({}, {}) is listed twice", key.a, key.b));
  }
  p.larger_failures = count(12);
  if (const std::string problem = failure_anatomy_problem(p, 0); !problem.empty()) bad(problem);
  p.chunks = 1;
  return c;
}

std::string settings_differences(const RunRecord& a, const RunRecord& b) {
  std::vector<std::string> d = config_differences(a.config, b.config);
  if (a.code.matrix_sha256 != b.code.matrix_sha256) d.insert(d.begin(), "the code");
  if (a.tool_version != b.tool_version)
    d.push_back(fmt::format("tannery {} (recorded: {})", b.tool_version, a.tool_version));
  std::string list;
  for (const auto& item : d) list += (list.empty() ? "" : "; ") + item;
  return list;
}

}  // namespace

ShardPlan default_shard_plan(const StopRules& stop, std::uint32_t index, std::uint32_t count) {
  ShardPlan plan;
  plan.index = index;
  plan.count = count;
  const double share = static_cast<double>(stop.frame_errors) / std::max(count, 1u);
  plan.frame_errors = static_cast<std::uint64_t>(std::ceil(share + 2 * std::sqrt(share))) + 2;
  plan.frames = std::max<std::uint64_t>(stop.max_frames / std::max(count, 1u), 1);
  return plan;
}

std::string shard_json(const ShardRecord& shard) {
  RunRecord run = shard.run;
  for (PointResult& p : run.points) p.failed_frames.clear();  // in the chunk records
  json j = results_document(run, kFormat);
  j["shard"] = {{"index", shard.plan.index},
                {"count", shard.plan.count},
                {"frames", shard.plan.frames},
                {"frame_errors", shard.plan.frame_errors}};
  j["chunk_fields"] = kChunkFields;
  for (std::size_t i = 0; i < shard.points.size() && i < j["points"].size(); ++i) {
    json records = json::array();
    for (const ChunkCounts& c : shard.points[i].chunks) records.push_back(chunk_record(c));
    j["points"][i]["chunk_counts"] = std::move(records);
  }
  return j.dump() + "\n";
}

bool is_shard_json(std::string_view text) {
  const json j = json::parse(text, nullptr, false);
  return j.is_object() && j.value("format", "") == kFormat;
}

ShardRecord parse_shard_json(std::string_view text, const std::string& source) {
  const json j = parse_json_text(text, source);
  ShardRecord s;
  s.run = parse_results_document(j, source, kFormat);
  try {
    const json& plan = j.at("shard");
    s.plan.index = plan.at("index").get<std::uint32_t>();
    s.plan.count = plan.at("count").get<std::uint32_t>();
    s.plan.frames = plan.at("frames").get<std::uint64_t>();
    s.plan.frame_errors = plan.at("frame_errors").get<std::uint64_t>();
  } catch (const json::exception&) {
    throw Error(
        fmt::format("{}: the 'shard' object needs index, count, frames and frame_errors "
                    "(counts)",
                    source));
  }
  if (s.plan.count == 0 || s.plan.index >= s.plan.count || s.plan.frames == 0 ||
      s.plan.frame_errors == 0)
    throw Error(fmt::format("{}: shard {}/{} with budget {} frames, {} frame errors is not valid",
                            source, s.plan.index, s.plan.count, s.plan.frames,
                            s.plan.frame_errors));
  if (j.value("chunk_fields", json()) != json(kChunkFields))
    throw Error(
        fmt::format("{}: the chunk records have other fields than this tool writes", source));
  const std::uint64_t chunk_frames = s.run.config.chunk_frames;
  for (std::size_t i = 0; i < s.run.points.size(); ++i) {
    const std::string where = fmt::format("{}: point {}", source, i);
    const json& records = j["points"][i].value("chunk_counts", json());
    if (!records.is_array()) throw Error(fmt::format("{}: no chunk_counts list", where));
    ShardPoint p;
    p.totals = s.run.points[i];
    PointResult sum;
    for (std::size_t k = 0; k < records.size(); ++k) {
      ChunkCounts c = parse_chunk_record(records[k], fmt::format("{}, chunk record {}", where, k));
      if (c.chunk != s.plan.index + k * s.plan.count)
        throw Error(fmt::format(
            "{}: chunk record {} is chunk {}, shard {}/{} computes chunk {} there", where, k,
            c.chunk, s.plan.index, s.plan.count, s.plan.index + k * s.plan.count));
      if (c.counts.frames > chunk_frames ||
          std::any_of(c.counts.failed_frames.begin(), c.counts.failed_frames.end(),
                      [&](std::uint64_t f) { return f / chunk_frames != c.chunk; }))
        throw Error(fmt::format("{}: chunk record {} does not fit chunk {} of {} frames", where, k,
                                c.chunk, chunk_frames));
      add_chunk(sum, c.counts, SIZE_MAX);
      p.chunks.push_back(std::move(c));
    }
    if (sum.frames != p.totals.frames || sum.frame_errors != p.totals.frame_errors ||
        sum.bit_errors != p.totals.bit_errors || sum.chunks != p.totals.chunks)
      throw Error(fmt::format("{}: the chunk records do not add up to the point's totals", where));
    s.points.push_back(std::move(p));
  }
  return s;
}

MergeResult merge_shards(const std::vector<ShardRecord>& shards,
                         const std::vector<std::string>& files) {
  if (shards.empty()) throw Error("merge: no shard files given");
  const ShardRecord& first = shards.front();
  const std::uint32_t count = first.plan.count;
  std::vector<const ShardRecord*> by_index(count, nullptr);
  std::vector<std::string> file_of(count);
  unsigned threads = 0;
  for (std::size_t s = 0; s < shards.size(); ++s) {
    const ShardRecord& shard = shards[s];
    if (shard.plan.count != count) {
      throw Error(
          fmt::format("merge: {} is shard {}/{}, {} is of {} shards: shards of one run share N",
                      files[s], shard.plan.index, shard.plan.count, files[0], count));
    }
    const std::string d = settings_differences(first.run, shard.run);
    if (!d.empty()) {
      throw Error(
          fmt::format("merge: {} belongs to another run than {} ({}): shards of one run "
                      "share every setting, the seed and the code",
                      files[s], files[0], d));
    }
    if (by_index[shard.plan.index]) {
      throw Error(fmt::format("merge: shard {}/{} is given twice ({} and {})", shard.plan.index,
                              count, file_of[shard.plan.index], files[s]));
    }
    by_index[shard.plan.index] = &shard;
    file_of[shard.plan.index] = files[s];
    threads += shard.run.threads_used;
  }
  MergeResult m;
  RunRecord& run = m.run;
  run = first.run;
  run.created = utc_now();
  run.points.clear();
  run.threads_used = std::max(threads, 1u);
  run.ranks_used = static_cast<unsigned>(shards.size());
  run.interrupted = false;
  const SimulationConfig& c = run.config;
  const StopRules& stop = c.stop;
  const std::uint64_t max_chunks = (stop.max_frames + c.chunk_frames - 1) / c.chunk_frames;
  for (std::size_t i = 0; i < c.sweep.size(); ++i) {
    PointResult total;
    total.parameter = c.sweep[i];
    for (const ShardRecord* s : by_index) {
      if (s && i < s->points.size()) total.seconds += s->points[i].totals.seconds;
    }
    for (std::uint64_t chunk = 0;; ++chunk) {
      if (total.frame_errors >= stop.frame_errors) {
        total.stop_reason = "frame errors";
      } else if (total.frames >= stop.max_frames || chunk >= max_chunks) {
        total.stop_reason = "max frames";
      }
      if (!total.stop_reason.empty()) break;
      const std::uint32_t index = static_cast<std::uint32_t>(chunk % count);
      const ShardRecord* s = by_index[index];
      const std::uint64_t k = chunk / count;
      if (s && i < s->points.size() && k < s->points[i].chunks.size()) {
        add_chunk(total, s->points[i].chunks[k].counts, c.failed_index_limit);
        continue;
      }
      // Chunk `chunk` is missing: say which shard must go further, and how.
      std::string how;
      if (!s) {
        how = fmt::format("no file of shard {}/{} was given: run it with --shard {}/{}", index,
                          count, index, count);
      } else {
        const std::string& file = file_of[index];
        const PointResult& t = i < s->points.size() ? s->points[i].totals : PointResult{};
        if (t.stop_reason == "shard frame errors") {
          how = fmt::format("continue it with tannery simulate --resume {} --shard-errors {}", file,
                            2 * s->plan.frame_errors);
        } else if (t.stop_reason == "shard frames") {
          how = fmt::format("continue it with tannery simulate --resume {} --shard-frames {}", file,
                            2 * s->plan.frames);
        } else {
          how =
              fmt::format("it did not finish: continue it with tannery simulate --resume {}", file);
        }
      }
      m.shortfalls.push_back(
          fmt::format("point {} ({} {}) needs chunk {} from shard {}/{} after {} frames and {} "
                      "frame errors; {}",
                      i, parameter_heading(c.channel), c.sweep[i], chunk, index, count,
                      total.frames, total.frame_errors, how));
      break;
    }
    total.complete = !total.stop_reason.empty();
    if (!total.complete) {
      total.stop_reason = "interrupted";
      run.points.push_back(total);
      run.interrupted = true;
      break;
    }
    run.points.push_back(total);
    if (stop.stop_below_fer > 0 && total.fer() < stop.stop_below_fer) break;
    if (total.frame_errors == 0) break;
  }
  return m;
}

}  // namespace tannery
