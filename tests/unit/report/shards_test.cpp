#include <catch2/catch.hpp>

#include "tannery/error.hpp"
#include "tannery/report/shards.hpp"
#include "test_support.hpp"

using namespace tannery;

namespace {

SimulationConfig small_run() {
  SimulationConfig c;
  c.decoder.algorithm = Algorithm::min_sum;
  c.sweep = {1.5, 2.5, 3.5};
  c.stop.frame_errors = 25;
  c.stop.max_frames = 3000;
  c.chunk_frames = 64;
  c.threads = 2;
  return c;
}

// Shards index/count of the small run as they would be written to and read from their files.
std::vector<ShardRecord> shards_of(unsigned count, std::uint64_t frames = 0) {
  const Code code = test::shipped("qc-rate-half-z54.qc");
  std::vector<ShardRecord> out;
  for (std::uint32_t i = 0; i < count; ++i) {
    Simulator sim(code, small_run());
    ShardRecord s;
    s.run = new_run_record(std::string(TANNERY_CODES_DIR) + "/qc-rate-half-z54.qc", code, sim);
    s.plan = default_shard_plan(sim.config().stop, i, count);
    if (frames) s.plan.frames = frames;
    s.points = sim.run_shard(s.plan, {}, {}, nullptr);
    for (const ShardPoint& p : s.points) s.run.points.push_back(p.totals);
    out.push_back(parse_shard_json(shard_json(s), "shard.json"));
  }
  return out;
}

}  // namespace

// The merge's contract: chunk c from shard c mod N, stop rules in chunk order, so the counts are
// a single run's (the same rule the threads and MPI ranks follow).
TEST_CASE("merged shards equal a single run, point by point", "[shards]") {
  Simulator sim(test::shipped("qc-rate-half-z54.qc"), small_run());
  const std::vector<PointResult> single = sim.run({}, {}, nullptr);
  for (unsigned count : {1u, 3u, 4u}) {
    const std::vector<ShardRecord> shards = shards_of(count);
    const MergeResult m =
        merge_shards(shards, std::vector<std::string>(shards.size(), "shard.json"));
    CAPTURE(count);
    CHECK(m.shortfalls.empty());
    REQUIRE(m.run.points.size() == single.size());
    for (std::size_t i = 0; i < single.size(); ++i) {
      const PointResult &a = m.run.points[i], &b = single[i];
      CHECK(a.frames == b.frames);
      CHECK(a.frame_errors == b.frame_errors);
      CHECK(a.bit_errors == b.bit_errors);
      CHECK(a.iterations == b.iterations);
      CHECK(a.iteration_histogram == b.iteration_histogram);
      CHECK(a.failed_frames == b.failed_frames);
      CHECK(a.chunks == b.chunks);
      CHECK(a.stop_reason == b.stop_reason);
      CHECK(a.complete);
    }
  }
}

TEST_CASE("a merge short of chunks names the shard and stops there", "[shards]") {
  const std::vector<ShardRecord> shards = shards_of(3, 64);  // one chunk per point each
  const MergeResult m = merge_shards(shards, {"a.json", "b.json", "c.json"});
  REQUIRE(m.shortfalls.size() == 1);
  CHECK_THAT(m.shortfalls[0], Catch::Contains("needs chunk 3 from shard 0/3") &&
                                  Catch::Contains("--resume a.json --shard-frames 128"));
  CHECK(m.run.interrupted);
  CHECK_FALSE(m.run.points.back().complete);
  CHECK(m.run.points.back().chunks == 3);
}

TEST_CASE("shards of different runs and damaged shard files are refused", "[shards]") {
  std::vector<ShardRecord> shards = shards_of(2);
  ShardRecord other = shards[1];
  other.run.config.seed = 9;
  CHECK_THROWS_WITH(merge_shards({shards[0], other}, {"a.json", "b.json"}),
                    Catch::Contains("b.json belongs to another run") && Catch::Contains("seed 9"));
  CHECK_THROWS_WITH(merge_shards({shards[0], shards[0]}, {"a.json", "a2.json"}),
                    Catch::Contains("shard 0/2 is given twice"));
  // A chunk record moved to another slot, and counts that no longer add up.
  std::string text = shard_json(shards[1]);
  const auto at = text.find("[[1,");
  REQUIRE(at != std::string::npos);
  std::string moved = text;
  moved.replace(at, 4, "[[2,");
  CHECK_THROWS_WITH(parse_shard_json(moved, "s.json"), Catch::Contains("is chunk 2"));
  std::string shrunk = text;
  shrunk.replace(shrunk.find(",64,", at), 4, ",63,");  // the chunk's frames
  CHECK_THROWS_WITH(parse_shard_json(shrunk, "s.json"),
                    Catch::Contains("chunk record 0: the iteration histogram does not fit"));
}
